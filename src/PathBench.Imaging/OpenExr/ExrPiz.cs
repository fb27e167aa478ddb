using System.Buffers.Binary;
using System.Runtime.InteropServices;

namespace PathBench.Imaging;

/// <summary>
/// PIZ chunks (OpenEXR compression 4, lossless), as the OpenEXR library defines them
/// (ImfPizCompressor). The chunk's samples are taken as 16-bit little-endian words (a FLOAT or UINT
/// sample is two words, low then high) and regrouped channel by channel: each channel's lines of
/// the block one after another, nx = samples per line by ny = lines with samples, each sample its
/// words side by side. The words actually used are listed in a bitmap and replaced by their rank
/// among the used values (0 always counts as used), every word position of a sample goes through
/// the 2-D wavelet (<see cref="ExrWavelet"/>) separately, and the whole buffer is Huffman-coded
/// (<see cref="ExrHuffman"/>).
/// <para>
/// Stored layout: uint16 first and last non-zero bitmap byte, those bitmap bytes (none if first &gt;
/// last), int32 byte length of the Huffman block, the Huffman block. The bitmap has a bit per
/// 16-bit value (value v is bit v mod 8 of byte v / 8).
/// </para>
/// </summary>
internal static class ExrPiz
{
    /// <summary>Bytes of the used-value bitmap: one bit for each 16-bit value.</summary>
    private const int BitmapSize = (1 << 16) / 8;

    /// <summary>
    /// Raw bytes per stored byte at most: a Huffman run (a code of at least one bit and 8 bits of
    /// count) repeats a 2-byte value up to 255 times, so 9 bits can expand to 510 bytes, 453.3 per
    /// byte; every other code yields one value per bit at least.
    /// </summary>
    public const long MaxExpansion = 454;

    /// <summary>Decodes a PIZ chunk into the raw layout of <paramref name="block"/>.</summary>
    /// <param name="packed">The chunk's stored bytes.</param>
    /// <param name="raw">Receives exactly <see cref="ExrBlock.RawSize"/> bytes.</param>
    /// <param name="block">The chunk's rectangle and channels.</param>
    /// <param name="scratch">At least <see cref="ExrBlock.RawSize"/> bytes of working space.</param>
    /// <exception cref="ExrCodecException">The stored bytes break PIZ's rules.</exception>
    public static void Decompress(ReadOnlySpan<byte> packed, Span<byte> raw, ExrBlock block, Span<byte> scratch)
    {
        ArgumentNullException.ThrowIfNull(block);
        if (raw.Length != block.RawSize || scratch.Length < raw.Length)
        {
            throw new ArgumentException("raw must hold the block's raw size and scratch at least as much", nameof(raw));
        }

        if (packed.Length < 4)
        {
            throw new ExrCodecException(FormattableString.Invariant($"PIZ chunk of {packed.Length} bytes is too short for its bitmap range"));
        }

        int minByte = BinaryPrimitives.ReadUInt16LittleEndian(packed);
        int maxByte = BinaryPrimitives.ReadUInt16LittleEndian(packed[2..]);
        int p = 4;

        // An empty bitmap is written as first = BitmapSize - 1 > last = 0 (OpenEXR's encoder).
        if (minByte >= BitmapSize || maxByte >= BitmapSize)
        {
            throw new ExrCodecException(FormattableString.Invariant($"PIZ bitmap range {minByte}..{maxByte} lies beyond the {BitmapSize}-byte bitmap"));
        }

        var bitmap = new byte[BitmapSize];
        if (minByte <= maxByte)
        {
            int count = maxByte - minByte + 1;
            if (count > packed.Length - p)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"PIZ bitmap bytes {minByte}..{maxByte} need {count} bytes but {packed.Length - p} remain"));
            }

            packed.Slice(p, count).CopyTo(bitmap.AsSpan(minByte));
            p += count;
        }

        var values = new ushort[1 << 16];
        int valueCount = ReverseLookup(bitmap, values);

        if (packed.Length - p < 4)
        {
            throw new ExrCodecException(FormattableString.Invariant($"PIZ chunk ends at byte {packed.Length} before its Huffman length field"));
        }

        int hufLength = BinaryPrimitives.ReadInt32LittleEndian(packed[p..]);
        p += 4;
        if (hufLength < 0 || hufLength > packed.Length - p)
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"PIZ Huffman block declares {hufLength} bytes but {packed.Length - p} remain"));
        }

        Span<ushort> words = MemoryMarshal.Cast<byte, ushort>(scratch[..raw.Length]);
        ExrHuffman.Decode(packed.Slice(p, hufLength), words);

        TransformPlanes(block, words, valueCount - 1, inverse: true);

        // The wavelet is exactly invertible, so a valid chunk yields only ranks of used values.
        for (int i = 0; i < words.Length; i++)
        {
            int rank = words[i];
            if (rank >= valueCount)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"PIZ word {i} decodes to value rank {rank}, but the bitmap lists only {valueCount} values"));
            }

            words[i] = values[rank];
        }

        ToRaw(block, words, raw);
    }

    /// <summary>
    /// PIZ-codes the raw bytes of <paramref name="block"/>; returns null when the result would not
    /// be smaller than the raw bytes (the chunk is then stored raw, as the format requires).
    /// </summary>
    public static byte[]? Compress(ReadOnlySpan<byte> raw, ExrBlock block)
    {
        ArgumentNullException.ThrowIfNull(block);
        if (raw.Length != block.RawSize)
        {
            throw new ArgumentException("raw must hold the block's raw size", nameof(raw));
        }

        var words = new ushort[raw.Length / 2];
        FromRaw(block, raw, words);

        var bitmap = new byte[BitmapSize];
        foreach (ushort w in words)
        {
            bitmap[w >> 3] |= (byte)(1 << (w & 7));
        }

        bitmap[0] &= 0xFE; // 0 is always among the values and not stored
        int minByte = BitmapSize - 1;
        int maxByte = 0;
        for (int i = 0; i < BitmapSize; i++)
        {
            if (bitmap[i] != 0)
            {
                minByte = Math.Min(minByte, i);
                maxByte = i;
            }
        }

        var rank = new ushort[1 << 16];
        int valueCount = 0;
        for (int v = 0; v < 1 << 16; v++)
        {
            if (v == 0 || (bitmap[v >> 3] & (1 << (v & 7))) != 0)
            {
                rank[v] = (ushort)valueCount++;
            }
        }

        for (int i = 0; i < words.Length; i++)
        {
            words[i] = rank[words[i]];
        }

        TransformPlanes(block, words, valueCount - 1, inverse: false);

        byte[] huffman = ExrHuffman.Encode(words);
        int bitmapBytes = minByte <= maxByte ? maxByte - minByte + 1 : 0;
        long size = 4L + bitmapBytes + 4 + huffman.Length;
        if (size >= raw.Length)
        {
            return null;
        }

        var stored = new byte[size];
        BinaryPrimitives.WriteUInt16LittleEndian(stored, (ushort)minByte);
        BinaryPrimitives.WriteUInt16LittleEndian(stored.AsSpan(2), (ushort)maxByte);
        bitmap.AsSpan(minByte, bitmapBytes).CopyTo(stored.AsSpan(4));
        BinaryPrimitives.WriteInt32LittleEndian(stored.AsSpan(4 + bitmapBytes), huffman.Length);
        huffman.CopyTo(stored.AsSpan(8 + bitmapBytes));
        return stored;
    }

    /// <summary>The used values in increasing order (0 first, always used); returns their count.</summary>
    private static int ReverseLookup(byte[] bitmap, ushort[] values)
    {
        int count = 0;
        for (int v = 0; v < 1 << 16; v++)
        {
            if (v == 0 || (bitmap[v >> 3] & (1 << (v & 7))) != 0)
            {
                values[count++] = (ushort)v;
            }
        }

        return count;
    }

    /// <summary>Channel-by-channel words → the raw layout (line by line, the channels of each line in turn, samples little-endian).</summary>
    private static void ToRaw(ExrBlock block, ReadOnlySpan<ushort> words, Span<byte> raw)
    {
        int r = 0;
        foreach ((int start, int count) in LinesInRawOrder(block))
        {
            for (int k = start; k < start + count; k++, r += 2)
            {
                BinaryPrimitives.WriteUInt16LittleEndian(raw[r..], words[k]);
            }
        }
    }

    /// <summary>The raw layout → channel-by-channel words.</summary>
    private static void FromRaw(ExrBlock block, ReadOnlySpan<byte> raw, Span<ushort> words)
    {
        int r = 0;
        foreach ((int start, int count) in LinesInRawOrder(block))
        {
            for (int k = start; k < start + count; k++, r += 2)
            {
                words[k] = BinaryPrimitives.ReadUInt16LittleEndian(raw[r..]);
            }
        }
    }

    /// <summary>Where each channel line of the raw layout lies in PIZ's channel-by-channel buffer (first word, words), in raw order.</summary>
    private static List<(int Start, int Count)> LinesInRawOrder(ExrBlock block)
    {
        int channels = block.Channels.Length;
        var next = new int[channels];
        int total = 0;
        for (int c = 0; c < channels; c++)
        {
            next[c] = total;
            total += block.SamplesPerLine(c) * block.LineCount(c) * (block.Channels[c].Size / 2);
        }

        var lines = new List<(int Start, int Count)>();
        for (long y = block.Y0; y < (long)block.Y0 + block.Height; y++)
        {
            for (int c = 0; c < channels; c++)
            {
                if (block.HasLine(c, (int)y))
                {
                    int count = block.SamplesPerLine(c) * (block.Channels[c].Size / 2);
                    lines.Add((next[c], count));
                    next[c] += count;
                }
            }
        }

        return lines;
    }

    /// <summary>
    /// Runs the wavelet (or its inverse) over each channel's plane of 16-bit words: a HALF sample is
    /// one word, a FLOAT or UINT sample two, each word position transformed as its own image.
    /// </summary>
    private static void TransformPlanes(ExrBlock block, Span<ushort> words, int maxValue, bool inverse)
    {
        int start = 0;
        for (int c = 0; c < block.Channels.Length; c++)
        {
            int nx = block.SamplesPerLine(c);
            int ny = block.LineCount(c);
            int wordsPerSample = block.Channels[c].Size / 2;
            if (nx == 0 || ny == 0)
            {
                continue;
            }

            for (int j = 0; j < wordsPerSample; j++)
            {
                if (inverse)
                {
                    ExrWavelet.Decode(words, start + j, nx, wordsPerSample, ny, wordsPerSample * nx, maxValue);
                }
                else
                {
                    ExrWavelet.Encode(words, start + j, nx, wordsPerSample, ny, wordsPerSample * nx, maxValue);
                }
            }

            start += nx * ny * wordsPerSample;
        }
    }
}
