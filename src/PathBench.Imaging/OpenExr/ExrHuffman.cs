using System.Buffers.Binary;

namespace PathBench.Imaging;

/// <summary>
/// The Huffman coding of 16-bit values inside PIZ chunks, as the OpenEXR library defines it
/// (OpenEXR ImfHuf / internal_huf). A coded block is a 20-byte header (uint32 little-endian: the
/// lowest and highest symbol with a code length, the table's byte length, the number of data bits,
/// and a reserved word), the code-length table, then the data bits. Both the table and the data are
/// packed most significant bit first.
/// <para>
/// The table holds a 6-bit code length (0..58) per symbol from the lowest to the highest; 59..62
/// stand for runs of 2..5 unused symbols and 63 followed by 8 bits n for a run of n + 6. The codes
/// are canonical: counting from the longest length down, each length's codes are consecutive
/// integers starting at half the end of the next longer length's codes, assigned in increasing
/// symbol order. The highest symbol is a pseudo-symbol for runs: its code followed by 8 bits n
/// repeats the previous value n more times.
/// </para>
/// </summary>
internal static class ExrHuffman
{
    /// <summary>Bytes of the block header.</summary>
    public const int HeaderSize = 20;

    /// <summary>The longest code length the format can express (the table's literal lengths are 0..58).</summary>
    public const int MaxCodeLength = 58;

    /// <summary>Symbols: every 16-bit value plus the run pseudo-symbol, which may be 65536.</summary>
    private const int SymbolCount = (1 << 16) + 1;

    private const int ShortZeroRun = 59; // 59..62: 2..5 unused symbols
    private const int LongZeroRun = 63; // followed by 8 bits: that many + 6 unused symbols
    private const int ShortestLongRun = 6;
    private const int LongestLongRun = 255 + ShortestLongRun;

    // Codes up to this length are resolved by one table look-up; longer ones length by length.
    private const int LookupBits = 14;

    /// <summary>Decodes a Huffman block into exactly <paramref name="output"/>.Length values.</summary>
    /// <exception cref="ExrCodecException">The block is short, its table or data are inconsistent, or it decodes to another number of values.</exception>
    public static void Decode(ReadOnlySpan<byte> block, Span<ushort> output)
    {
        if (block.Length < HeaderSize)
        {
            throw new ExrCodecException(FormattableString.Invariant($"Huffman block of {block.Length} bytes is shorter than its {HeaderSize}-byte header"));
        }

        uint lowest = BinaryPrimitives.ReadUInt32LittleEndian(block);
        uint highest = BinaryPrimitives.ReadUInt32LittleEndian(block[4..]);
        uint bitCount = BinaryPrimitives.ReadUInt32LittleEndian(block[12..]);

        // The table-length word (bytes 8..11) is not needed: the table's end follows from its
        // contents, and the OpenEXR library ignores the word as well.
        if (lowest > highest || highest >= SymbolCount)
        {
            throw new ExrCodecException(FormattableString.Invariant($"Huffman symbol range {lowest}..{highest} is empty or beyond {SymbolCount - 1}"));
        }

        var lengths = new byte[SymbolCount];
        int tableBytes = ReadCodeLengths(block[HeaderSize..], (int)lowest, (int)highest, lengths);
        ReadOnlySpan<byte> data = block[(HeaderSize + tableBytes)..];
        long dataBytes = ((long)bitCount + 7) / 8;
        if (dataBytes > data.Length)
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"Huffman data of {bitCount} bits needs {dataBytes} bytes but {data.Length} follow the code table"));
        }

        var decoder = new CanonicalDecoder(lengths, (int)lowest, (int)highest);
        decoder.Decode(data[..(int)dataBytes], bitCount, (int)highest, output);
    }

    /// <summary>
    /// Huffman-codes <paramref name="values"/> (at least one) into a block as <see cref="Decode"/> reads it.
    /// </summary>
    public static byte[] Encode(ReadOnlySpan<ushort> values)
    {
        if (values.IsEmpty)
        {
            throw new ArgumentException("there must be at least one value to code", nameof(values));
        }

        var frequencies = new long[SymbolCount];
        foreach (ushort v in values)
        {
            frequencies[v]++;
        }

        int lowest = 0;
        while (frequencies[lowest] == 0)
        {
            lowest++;
        }

        int runSymbol = 0;
        for (int s = SymbolCount - 2; s >= 0; s--)
        {
            if (frequencies[s] != 0)
            {
                runSymbol = s + 1;
                break;
            }
        }

        // The run pseudo-symbol counts once, so it always has a code.
        frequencies[runSymbol] = 1;
        byte[] lengths = CodeLengths(frequencies, lowest, runSymbol);
        ulong[] codes = CanonicalCodes(lengths, lowest, runSymbol)
            ?? throw new InvalidOperationException("Huffman code lengths built from frequencies do not form a prefix code");

        var writer = new BitWriter(HeaderSize + 64 + (values.Length / 2));
        for (int s = 0; s < HeaderSize; s++)
        {
            writer.WriteByte(0);
        }

        WriteCodeLengths(writer, lengths, lowest, runSymbol);
        writer.Flush();
        int tableEnd = writer.Length;
        long dataBitsStart = writer.BitLength;

        int runLength = lengths[runSymbol];
        int i = 0;
        while (i < values.Length)
        {
            ushort v = values[i];
            int repeats = 0; // further copies of v, up to what the 8-bit run count holds
            while (repeats < 255 && i + repeats + 1 < values.Length && values[i + repeats + 1] == v)
            {
                repeats++;
            }

            int length = lengths[v];
            if (length + runLength + 8 < length * repeats)
            {
                writer.Write(codes[v], length);
                writer.Write(codes[runSymbol], runLength);
                writer.Write((ulong)repeats, 8);
            }
            else
            {
                for (int k = 0; k <= repeats; k++)
                {
                    writer.Write(codes[v], length);
                }
            }

            i += repeats + 1;
        }

        long dataBits = writer.BitLength - dataBitsStart;
        if (dataBits > uint.MaxValue)
        {
            throw new ArgumentException("the values code to more bits than a Huffman block can declare", nameof(values));
        }

        writer.Flush();
        byte[] block = writer.ToArray();
        BinaryPrimitives.WriteUInt32LittleEndian(block, (uint)lowest);
        BinaryPrimitives.WriteUInt32LittleEndian(block.AsSpan(4), (uint)runSymbol);
        BinaryPrimitives.WriteUInt32LittleEndian(block.AsSpan(8), (uint)(tableEnd - HeaderSize));
        BinaryPrimitives.WriteUInt32LittleEndian(block.AsSpan(12), (uint)dataBits);
        return block;
    }

    /// <summary>Reads the code lengths of symbols <paramref name="lowest"/>..<paramref name="highest"/>; returns the table's bytes.</summary>
    private static int ReadCodeLengths(ReadOnlySpan<byte> table, int lowest, int highest, byte[] lengths)
    {
        long bit = 0;
        long available = (long)table.Length * 8;
        for (int s = lowest; s <= highest;)
        {
            if (bit + 6 > available)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"Huffman code table ends at symbol {s} of {lowest}..{highest} ({table.Length} bytes)"));
            }

            int code = (int)ReadBits(table, bit, 6);
            bit += 6;
            int run;
            if (code == LongZeroRun)
            {
                if (bit + 8 > available)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"Huffman code table ends inside a run of unused symbols at symbol {s}"));
                }

                run = (int)ReadBits(table, bit, 8) + ShortestLongRun;
                bit += 8;
            }
            else if (code >= ShortZeroRun)
            {
                run = code - ShortZeroRun + 2;
            }
            else
            {
                lengths[s++] = (byte)code;
                continue;
            }

            if (run > highest - s + 1)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"Huffman code table has a run of {run} unused symbols at symbol {s}, past the highest symbol {highest}"));
            }

            s += run; // lengths were cleared
        }

        return (int)((bit + 7) / 8);
    }

    private static void WriteCodeLengths(BitWriter writer, byte[] lengths, int lowest, int highest)
    {
        for (int s = lowest; s <= highest; s++)
        {
            int length = lengths[s];
            if (length == 0)
            {
                int run = 1;
                while (s < highest && run < LongestLongRun && lengths[s + 1] == 0)
                {
                    s++;
                    run++;
                }

                if (run >= ShortestLongRun)
                {
                    writer.Write(LongZeroRun, 6);
                    writer.Write((ulong)(run - ShortestLongRun), 8);
                    continue;
                }

                if (run >= 2)
                {
                    writer.Write((ulong)(ShortZeroRun + run - 2), 6);
                    continue;
                }
            }

            writer.Write((ulong)length, 6);
        }
    }

    /// <summary>
    /// The canonical code of each symbol (OpenEXR's construction, see the class remarks), or null
    /// when the lengths do not describe a prefix code: more codes of a length than fit, or a code
    /// that would be a prefix of a longer one (a longer length left a half-used node).
    /// </summary>
    private static ulong[]? CanonicalCodes(byte[] lengths, int lowest, int highest)
    {
        ulong[]? first = FirstCodes(lengths, lowest, highest, out _);
        if (first is null)
        {
            return null;
        }

        var codes = new ulong[lengths.Length];
        for (int s = lowest; s <= highest; s++)
        {
            int l = lengths[s];
            if (l > 0)
            {
                codes[s] = first[l]++;
            }
        }

        return codes;
    }

    /// <summary>The first (lowest) code of each length, or null if the lengths are no prefix code; <paramref name="counts"/> receives the codes per length.</summary>
    private static ulong[]? FirstCodes(byte[] lengths, int lowest, int highest, out long[] counts)
    {
        counts = new long[MaxCodeLength + 1];
        for (int s = lowest; s <= highest; s++)
        {
            counts[lengths[s]]++;
        }

        var first = new ulong[MaxCodeLength + 1];
        ulong next = 0;
        bool halfUsed = false;
        for (int l = MaxCodeLength; l > 0; l--)
        {
            if (counts[l] > 0 && halfUsed)
            {
                return null;
            }

            first[l] = next;
            ulong end = next + (ulong)counts[l];
            if (end > 1UL << l)
            {
                return null;
            }

            halfUsed |= (end & 1) != 0;
            next = end >> 1;
        }

        return first;
    }

    /// <summary>Huffman code lengths for the symbols with non-zero frequency; ties broken by symbol (deterministic).</summary>
    private static byte[] CodeLengths(long[] frequencies, int lowest, int highest)
    {
        var lengths = new byte[SymbolCount];
        int leaves = 0;
        for (int s = lowest; s <= highest; s++)
        {
            if (frequencies[s] > 0)
            {
                leaves++;
            }
        }

        // Nodes 0..SymbolCount-1 are leaves (symbols), the rest are internal; parent links give the depths.
        var parent = new int[SymbolCount + leaves];
        var heap = new PriorityQueue<int, (long Frequency, int Node)>(leaves);
        for (int s = lowest; s <= highest; s++)
        {
            if (frequencies[s] > 0)
            {
                heap.Enqueue(s, (frequencies[s], s));
            }
        }

        int nextNode = SymbolCount;
        var nodeFrequency = new long[SymbolCount + leaves];
        Array.Copy(frequencies, nodeFrequency, SymbolCount);
        while (heap.Count > 1)
        {
            int a = heap.Dequeue();
            int b = heap.Dequeue();
            int node = nextNode++;
            parent[a] = node;
            parent[b] = node;
            nodeFrequency[node] = nodeFrequency[a] + nodeFrequency[b];
            heap.Enqueue(node, (nodeFrequency[node], node));
        }

        int root = heap.Dequeue();
        var depth = new int[SymbolCount + leaves];
        for (int node = root - 1; node >= SymbolCount; node--)
        {
            depth[node] = depth[parent[node]] + 1; // parents are created after their children
        }

        for (int s = lowest; s <= highest; s++)
        {
            if (frequencies[s] > 0)
            {
                int d = depth[parent[s]] + 1;

                // Depth grows like the Fibonacci sequence at worst, so 58 levels need far more values than a chunk holds.
                if (d > MaxCodeLength)
                {
                    throw new InvalidOperationException("Huffman code longer than the format's 58 bits");
                }

                lengths[s] = (byte)d;
            }
        }

        return lengths;
    }

    /// <summary><paramref name="count"/> (≤ 25) bits at bit <paramref name="bit"/>, most significant first; bits past the span read as 0.</summary>
    private static uint ReadBits(ReadOnlySpan<byte> bytes, long bit, int count)
    {
        long b = bit >> 3;
        uint window = 0;
        for (int k = 0; k < 4; k++)
        {
            window = (window << 8) | (b + k < bytes.Length ? bytes[(int)(b + k)] : 0u);
        }

        return (window >> (32 - count - (int)(bit & 7))) & ((1u << count) - 1);
    }

    /// <summary>Table-driven decoding of a canonical code whose lengths were checked to form a prefix code.</summary>
    private sealed class CanonicalDecoder
    {
        // Look-up entry: 0 = no code starts with these bits; -1 = only codes longer than LookupBits do; else symbol << 6 | length.
        private const int LongCode = -1;
        private readonly int[] lookup = new int[1 << LookupBits];
        private readonly ulong[] first;
        private readonly long[] counts;
        private readonly int[] sorted; // symbols by (length, symbol), i.e. by code within each length
        private readonly int[] offset = new int[MaxCodeLength + 2];

        public CanonicalDecoder(byte[] lengths, int lowest, int highest)
        {
            first = FirstCodes(lengths, lowest, highest, out counts)
                ?? throw new ExrCodecException("Huffman code lengths do not form a prefix code");
            for (int l = 1; l <= MaxCodeLength; l++)
            {
                offset[l + 1] = offset[l] + (int)counts[l];
            }

            sorted = new int[offset[MaxCodeLength + 1]];
            int[] fill = (int[])offset.Clone();
            ulong[] code = (ulong[])first.Clone();
            for (int s = lowest; s <= highest; s++)
            {
                int l = lengths[s];
                if (l == 0)
                {
                    continue;
                }

                sorted[fill[l]++] = s;
                ulong c = code[l]++;
                if (l <= LookupBits)
                {
                    int start = (int)(c << (LookupBits - l));
                    lookup.AsSpan(start, 1 << (LookupBits - l)).Fill((s << 6) | l);
                }
                else
                {
                    lookup[(int)(c >> (l - LookupBits))] = LongCode;
                }
            }
        }

        public void Decode(ReadOnlySpan<byte> data, long bitCount, int runSymbol, Span<ushort> output)
        {
            long bit = 0;
            int count = 0;
            while (bit < bitCount)
            {
                long left = bitCount - bit;
                int entry = lookup[ReadBits(data, bit, LookupBits)];
                int symbol;
                int length;
                if (entry > 0)
                {
                    symbol = entry >> 6;
                    length = entry & 63;
                }
                else if (entry == LongCode)
                {
                    (symbol, length) = DecodeLong(data, bit, left);
                }
                else
                {
                    throw new ExrCodecException(FormattableString.Invariant($"Huffman data at bit {bit} match no code"));
                }

                if (length > left)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"Huffman data end inside a code at bit {bit} of {bitCount}"));
                }

                bit += length;
                if (symbol == runSymbol)
                {
                    if (bitCount - bit < 8)
                    {
                        throw new ExrCodecException(FormattableString.Invariant($"Huffman data end inside a run count at bit {bit} of {bitCount}"));
                    }

                    int repeats = (int)ReadBits(data, bit, 8);
                    bit += 8;
                    if (count == 0)
                    {
                        throw new ExrCodecException("Huffman data start with a run, which has no value to repeat");
                    }

                    if (repeats > output.Length - count)
                    {
                        throw new ExrCodecException(FormattableString.Invariant(
                            $"Huffman data decode to more than the {output.Length} values expected (a run of {repeats} after {count})"));
                    }

                    output.Slice(count, repeats).Fill(output[count - 1]);
                    count += repeats;
                }
                else
                {
                    if (count == output.Length)
                    {
                        throw new ExrCodecException(FormattableString.Invariant($"Huffman data decode to more than the {output.Length} values expected"));
                    }

                    output[count++] = (ushort)symbol; // symbols other than the run symbol are below it, so ≤ 65535
                }
            }

            if (count != output.Length)
            {
                throw new ExrCodecException(FormattableString.Invariant($"Huffman data decode to {count} values; the chunk needs {output.Length}"));
            }
        }

        /// <summary>A code longer than the look-up bits, found length by length (canonical codes of one length are consecutive).</summary>
        private (int Symbol, int Length) DecodeLong(ReadOnlySpan<byte> data, long bit, long left)
        {
            ulong code = ReadBits(data, bit, LookupBits);
            for (int l = LookupBits + 1; l <= MaxCodeLength; l++)
            {
                if (l > left)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"Huffman data end inside a code at bit {bit}"));
                }

                code = (code << 1) | ReadBits(data, bit + l - 1, 1);
                ulong index = code - first[l];
                if (index < (ulong)counts[l])
                {
                    return (sorted[offset[l] + (int)index], l);
                }
            }

            throw new ExrCodecException(FormattableString.Invariant($"Huffman data at bit {bit} match no code"));
        }
    }

    /// <summary>Packs bits most significant first.</summary>
    private sealed class BitWriter(int capacity)
    {
        private readonly List<byte> bytes = new(capacity);
        private ulong pending;
        private int pendingBits;

        /// <summary>Whole bytes written so far.</summary>
        public int Length => bytes.Count;

        /// <summary>Bits written so far, including those not yet in a whole byte.</summary>
        public long BitLength => ((long)bytes.Count * 8) + pendingBits;

        public void WriteByte(byte b) => Write(b, 8);

        public void Write(ulong value, int count)
        {
            // Split so the pending word never holds more than 7 + 32 bits.
            if (count > 32)
            {
                Write(value >> 32, count - 32);
                count = 32;
            }

            pending = (pending << count) | (value & ((1UL << count) - 1));
            pendingBits += count;
            while (pendingBits >= 8)
            {
                pendingBits -= 8;
                bytes.Add((byte)(pending >> pendingBits));
            }
        }

        /// <summary>Pads the last byte with zero bits.</summary>
        public void Flush()
        {
            if (pendingBits > 0)
            {
                Write(0, 8 - pendingBits);
            }
        }

        public byte[] ToArray() => [.. bytes];
    }
}
