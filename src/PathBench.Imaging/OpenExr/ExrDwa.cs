using System.Buffers.Binary;
using System.Runtime.InteropServices;
using System.Text;

namespace PathBench.Imaging;

/// <summary>
/// DWAA and DWAB chunks (OpenEXR compressions 8 and 9: 32 and 256 scanlines per chunk, same
/// coding), as the OpenEXR library (3.1.5, ImfDwaCompressor) defines and decodes them.
/// <para>
/// A chunk starts with eleven little-endian uint64: version (0..2), the UNKNOWN section's raw and
/// stored sizes, the AC, DC and RLE sections' stored sizes, the RLE section's run-coded and raw
/// sizes, the counts of AC and DC values, and how the AC values are stored (0 Huffman as in PIZ,
/// 1 zlib). Version 2 follows this with a table of channel rules (uint16 byte length including
/// itself, then per rule: a name suffix ending in a zero byte, a byte of CSC index + 1 (high
/// nibble), scheme (bits 2..3) and case-insensitivity (bit 0), and a pixel-type byte); versions 0
/// and 1 use the library's fixed legacy rules. Then come the four sections: UNKNOWN (zlib),
/// AC, DC (zlib with the ZIP predictor and byte reordering, <see cref="ExrZip"/>), RLE (zlib,
/// then <see cref="ExrRle"/> runs).
/// </para>
/// <para>
/// The rules sort each channel by the part of its name after the last dot and its type: lossy
/// (DCT), RLE or UNKNOWN (the last matching rule wins; no match is UNKNOWN). Three lossy channels
/// of one layer marked as its R, G and B go together as Y'CbCr (layers in byte order of their
/// names); their AC and DC values come first, then the other lossy channels' in channel order.
/// Lossy channels are decoded by <see cref="ExrDwaDct"/>; RLE channels are stored byte plane by
/// byte plane (low bytes of all samples, then the next byte), UNKNOWN channels as they are, each
/// channel's samples line by line, channels in file order within their section.
/// </para>
/// </summary>
internal static class ExrDwa
{
    /// <summary>
    /// Raw bytes per stored byte at most. The densest data are a lossy block (up to 64 FLOAT samples,
    /// 256 bytes) that stores one DC and one AC value (an end-of-block code), each two bytes that zlib
    /// shrinks at best 1032:1 (from memory, as for ZIP in <see cref="ExrChunkCodecs.MaxExpansion"/>) (Huffman does worse: a run of up to 256 values costs at least 10 bits),
    /// and an RLE run of 128 equal bytes (2 bytes) through zlib: both 256 × 1032 / 4 = 66048. UNKNOWN
    /// data are plain zlib (1032).
    /// </summary>
    public const long MaxExpansion = 66048;

    private const int HeaderSize = 11 * 8;

    /// <summary>A lossy block codes 63 AC coefficients; every AC value covers at least one of them.</summary>
    private const int MaxAcPerBlock = 63;

    private enum Scheme
    {
        Unknown = 0,
        Lossy = 1,
        Rle = 2,
    }

    /// <summary>One channel-classification rule (the library's Classifier).</summary>
    private sealed record Rule(byte[] Suffix, Scheme Scheme, ExrPixelType Type, int CscIndex, bool CaseInsensitive)
    {
        public Rule(string suffix, Scheme scheme, ExrPixelType type, int cscIndex)
            : this(Encoding.ASCII.GetBytes(suffix), scheme, type, cscIndex, true)
        {
        }

        public bool Matches(byte[] suffix, ExrPixelType type) =>
            type == Type && (CaseInsensitive ? AsciiLower(suffix).AsSpan().SequenceEqual(AsciiLower(Suffix)) : suffix.AsSpan().SequenceEqual(Suffix));
    }

    /// <summary>The rules of chunks of version 0 and 1, which store none (the library's legacy rules).</summary>
    private static readonly Rule[] LegacyRules = BuildLegacyRules();

    /// <summary>Decodes a DWAA or DWAB chunk into the raw layout of <paramref name="block"/>.</summary>
    /// <param name="packed">The chunk's stored bytes (array-backed).</param>
    /// <param name="raw">Receives exactly <see cref="ExrBlock.RawSize"/> bytes.</param>
    /// <param name="block">The chunk's rectangle and channels.</param>
    /// <exception cref="ExrCodecException">The stored bytes break DWA's rules.</exception>
    public static void Decompress(ReadOnlyMemory<byte> packed, Span<byte> raw, ExrBlock block)
    {
        ArgumentNullException.ThrowIfNull(block);
        if (raw.Length != block.RawSize)
        {
            throw new ArgumentException("raw must hold the block's raw size", nameof(raw));
        }

        ReadOnlySpan<byte> bytes = packed.Span;
        if (bytes.Length < HeaderSize)
        {
            throw new ExrCodecException(FormattableString.Invariant($"DWA chunk of {bytes.Length} bytes is shorter than its {HeaderSize}-byte header"));
        }

        var h = new ulong[11];
        for (int i = 0; i < h.Length; i++)
        {
            h[i] = BinaryPrimitives.ReadUInt64LittleEndian(bytes[(8 * i)..]);
        }

        ulong version = h[0];
        if (version > 2)
        {
            throw new ExrCodecException(FormattableString.Invariant($"DWA chunk version {version} is unknown (0, 1 and 2 are defined)"));
        }

        int p = HeaderSize;
        Rule[] rules = version < 2 ? LegacyRules : ReadRules(bytes, ref p);
        Layout layout = Classify(block, rules);

        (ulong unknownRaw, ulong unknownStored, ulong acStored, ulong dcStored) = (h[1], h[2], h[3], h[4]);
        (ulong rleStored, ulong rleCoded, ulong rleRaw) = (h[5], h[6], h[7]);
        (ulong acCount, ulong dcCount, ulong acCompression) = (h[8], h[9], h[10]);

        // Every size the chunk declares is checked against what its block needs before anything that size is allocated.
        CheckSection("UNKNOWN", unknownRaw, unknownStored, layout.UnknownBytes);
        CheckSection("RLE", rleRaw, rleStored, layout.RleBytes);
        if (layout.RleBytes > 0 && (rleCoded == 0 || rleCoded > 2 * (ulong)layout.RleBytes))
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"DWA RLE section declares {rleCoded} run-coded bytes for {layout.RleBytes} raw bytes (1..{2 * (ulong)layout.RleBytes} possible)"));
        }

        if (layout.RleBytes == 0 && rleCoded != 0)
        {
            throw new ExrCodecException(FormattableString.Invariant($"DWA RLE section declares {rleCoded} run-coded bytes, but no channel is RLE-coded"));
        }

        if (dcCount != (ulong)layout.Blocks || (dcStored == 0) != (dcCount == 0))
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"DWA DC section declares {dcCount} values in {dcStored} bytes; the lossy channels have {layout.Blocks} blocks"));
        }

        ulong maxAc = (ulong)layout.Blocks * MaxAcPerBlock;
        if (acCount > maxAc || (acStored == 0) != (acCount == 0))
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"DWA AC section declares {acCount} values in {acStored} bytes; {layout.Blocks} blocks hold 0..{maxAc}"));
        }

        if (acCount > 0 && acCompression > 1)
        {
            throw new ExrCodecException(FormattableString.Invariant($"DWA AC compression {acCompression} is unknown (0 Huffman, 1 zlib)"));
        }

        long available = bytes.Length - p;
        ulong stored = 0;
        foreach (ulong size in (ReadOnlySpan<ulong>)[unknownStored, acStored, dcStored, rleStored])
        {
            if (size > (ulong)available)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"DWA sections declare {size} bytes, more than the {available} bytes after the chunk's header"));
            }

            stored += size;
        }

        if (stored != (ulong)available)
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"DWA sections declare {stored} bytes, but {available} bytes follow the chunk's header"));
        }

        ReadOnlyMemory<byte> unknownSection = packed.Slice(p, (int)unknownStored);
        ReadOnlyMemory<byte> acSection = packed.Slice(p + (int)unknownStored, (int)acStored);
        ReadOnlyMemory<byte> dcSection = packed.Slice(p + (int)(unknownStored + acStored), (int)dcStored);
        ReadOnlyMemory<byte> rleSection = packed.Slice(p + (int)(unknownStored + acStored + dcStored), (int)rleStored);

        var unknown = new byte[layout.UnknownBytes];
        if (unknown.Length > 0)
        {
            Section("UNKNOWN", () => ExrZip.Inflate(unknownSection, unknown));
        }

        var ac = new ushort[acCount];
        if (ac.Length > 0)
        {
            Section("AC", () =>
            {
                if (acCompression == 0)
                {
                    ExrHuffman.Decode(acSection.Span, ac);
                }
                else
                {
                    ExrZip.Inflate(acSection, MemoryMarshal.AsBytes(ac.AsSpan()));
                }
            });
        }

        var dc = new ushort[dcCount];
        if (dc.Length > 0)
        {
            Section("DC", () => ExrZip.Decompress(dcSection, MemoryMarshal.AsBytes(dc.AsSpan()), new byte[dc.Length * 2]));
        }

        var rle = new byte[layout.RleBytes];
        if (rle.Length > 0)
        {
            Section("RLE", () =>
            {
                var coded = new byte[rleCoded];
                ExrZip.Inflate(rleSection, coded);
                ExrRle.DecodeRuns(coded, rle);
            });
        }

        ushort[][] planes = DecodeLossy(block, layout, ac, dc);
        WriteRaw(block, layout, planes, rle, unknown, raw);
    }

    /// <summary>Runs one section's decoder, naming the section in its error.</summary>
    private static void Section(string name, Action decode)
    {
        try
        {
            decode();
        }
        catch (ExrCodecException e)
        {
            throw new ExrCodecException($"DWA {name} section: {e.Message}", e);
        }
    }

    /// <summary>A lossless section must declare exactly its channels' bytes, and be stored iff it has any.</summary>
    private static void CheckSection(string name, ulong rawSize, ulong storedSize, long expected)
    {
        if (rawSize != (ulong)expected || (storedSize == 0) != (expected == 0))
        {
            throw new ExrCodecException(FormattableString.Invariant(
                $"DWA {name} section declares {rawSize} raw bytes in {storedSize}; its channels hold {expected}"));
        }
    }

    /// <summary>Reads a version-2 chunk's rule table at <paramref name="p"/>, which moves past it.</summary>
    private static Rule[] ReadRules(ReadOnlySpan<byte> bytes, ref int p)
    {
        if (bytes.Length - p < 2)
        {
            throw new ExrCodecException("DWA chunk ends before its rule table");
        }

        int size = BinaryPrimitives.ReadUInt16LittleEndian(bytes[p..]);
        if (size < 2 || size > bytes.Length - p)
        {
            throw new ExrCodecException(FormattableString.Invariant($"DWA rule table declares {size} bytes; 2..{bytes.Length - p} fit in the chunk"));
        }

        int end = p + size;
        p += 2;
        var rules = new List<Rule>();
        while (p < end)
        {
            int nul = bytes[p..end].IndexOf((byte)0);
            if (nul < 0 || nul > 255 || end - (p + nul + 1) < 2)
            {
                throw new ExrCodecException(FormattableString.Invariant($"DWA rule {rules.Count} is truncated at byte {p}"));
            }

            byte[] suffix = bytes.Slice(p, nul).ToArray();
            p += nul + 1;
            int packedRule = (sbyte)bytes[p];
            int type = (sbyte)bytes[p + 1];
            p += 2;
            int csc = (packedRule >> 4) - 1;
            int scheme = (packedRule >> 2) & 3;
            if (csc is < -1 or > 2 || scheme > 2 || type is < 0 or > 2)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"DWA rule {rules.Count} is corrupt (CSC index {csc}, scheme {scheme}, pixel type {type})"));
            }

            rules.Add(new Rule(suffix, (Scheme)scheme, (ExrPixelType)type, csc, (packedRule & 1) != 0));
        }

        return [.. rules];
    }

    /// <summary>How a chunk's channels are coded and what each section must hold.</summary>
    private sealed class Layout(Scheme[] schemes, List<int[]> cscSets)
    {
        public Scheme[] Schemes { get; } = schemes;

        /// <summary>The R, G, B channel indices of each Y'CbCr set, in decoding order.</summary>
        public List<int[]> CscSets { get; } = cscSets;

        public long UnknownBytes { get; set; }

        public long RleBytes { get; set; }

        /// <summary>8×8 blocks over all lossy channels (one DC value each).</summary>
        public long Blocks { get; set; }
    }

    /// <summary>Applies the rules to the block's channels (the library's classifyChannels).</summary>
    private static Layout Classify(ExrBlock block, Rule[] rules)
    {
        ExrChannelLayout[] channels = block.Channels;
        var schemes = new Scheme[channels.Length];
        var sets = new SortedDictionary<string, int[]>(Utf8Order.Instance);
        for (int c = 0; c < channels.Length; c++)
        {
            string name = channels[c].Name;
            int dot = name.LastIndexOf('.');
            string prefix = dot < 0 ? string.Empty : name[..dot];
            byte[] suffix = Encoding.UTF8.GetBytes(dot < 0 ? name : name[(dot + 1)..]);
            if (!sets.TryGetValue(prefix, out int[]? set))
            {
                set = [-1, -1, -1];
                sets.Add(prefix, set);
            }

            schemes[c] = Scheme.Unknown;
            foreach (Rule rule in rules)
            {
                if (rule.Matches(suffix, channels[c].Type))
                {
                    schemes[c] = rule.Scheme;
                    if (rule.CscIndex >= 0)
                    {
                        set[rule.CscIndex] = c;
                    }
                }
            }

            if (schemes[c] == Scheme.Lossy && channels[c].Type == ExrPixelType.UInt)
            {
                throw new ExrCodecException($"DWA rules make UINT channel '{name}' lossy, which only HALF and FLOAT can be");
            }
        }

        var cscSets = new List<int[]>();
        foreach (int[] set in sets.Values)
        {
            if (set.Any(i => i < 0)
                || channels[set[0]].XSampling != channels[set[1]].XSampling || channels[set[0]].XSampling != channels[set[2]].XSampling
                || channels[set[0]].YSampling != channels[set[1]].YSampling || channels[set[0]].YSampling != channels[set[2]].YSampling)
            {
                continue;
            }

            if (set.Any(i => schemes[i] != Scheme.Lossy) || set.Distinct().Count() != 3)
            {
                throw new ExrCodecException(FormattableString.Invariant(
                    $"DWA rules make '{channels[set[0]].Name}', '{channels[set[1]].Name}', '{channels[set[2]].Name}' a colour set, but not three distinct lossy channels"));
            }

            cscSets.Add(set);
        }

        var layout = new Layout(schemes, cscSets);
        for (int c = 0; c < channels.Length; c++)
        {
            int w = block.SamplesPerLine(c);
            int lines = block.LineCount(c);
            long bytes = (long)w * lines * channels[c].Size;
            switch (schemes[c])
            {
                case Scheme.Lossy:
                    layout.Blocks += (long)((w + 7) / 8) * ((lines + 7) / 8);
                    break;
                case Scheme.Rle:
                    layout.RleBytes += bytes;
                    break;
                default:
                    layout.UnknownBytes += bytes;
                    break;
            }
        }

        return layout;
    }

    /// <summary>Decodes every lossy channel (Y'CbCr sets first, then single channels in file order) into HALF planes; other channels get null.</summary>
    private static ushort[][] DecodeLossy(ExrBlock block, Layout layout, ushort[] ac, ushort[] dc)
    {
        ExrChannelLayout[] channels = block.Channels;
        var planes = new ushort[channels.Length][];
        int acPosition = 0;
        int dcPosition = 0;

        void DecodeSet(int[] set, ReadOnlySpan<ushort> toLinear)
        {
            int w = block.SamplesPerLine(set[0]);
            int lines = block.LineCount(set[0]);
            ushort[][] output = [.. set.Select(_ => new ushort[w * lines])];
            int blocks = ((w + 7) / 8) * ((lines + 7) / 8);
            ExrDwaDct.DecodeSet(ac, ref acPosition, dc.AsSpan(dcPosition, blocks * set.Length), w, lines, toLinear, output);
            dcPosition += blocks * set.Length;
            for (int k = 0; k < set.Length; k++)
            {
                planes[set[k]] = output[k];
            }
        }

        // A Y'CbCr set always goes back to linear light; a single channel unless it is flagged perceptually linear.
        foreach (int[] set in layout.CscSets)
        {
            DecodeSet(set, ExrDwaToLinear.Table);
        }

        for (int c = 0; c < channels.Length; c++)
        {
            if (layout.Schemes[c] == Scheme.Lossy && planes[c] is null)
            {
                DecodeSet([c], channels[c].PerceptuallyLinear ? [] : ExrDwaToLinear.Table);
            }
        }

        if (acPosition != ac.Length)
        {
            throw new ExrCodecException(FormattableString.Invariant($"DWA AC data hold {ac.Length} values; the blocks use {acPosition}"));
        }

        return planes;
    }

    /// <summary>Interleaves the channels' planes into the raw layout, line by line.</summary>
    private static void WriteRaw(ExrBlock block, Layout layout, ushort[][] planes, byte[] rle, byte[] unknown, Span<byte> raw)
    {
        ExrChannelLayout[] channels = block.Channels;
        var start = new long[channels.Length]; // each channel's first byte in its section
        long rleNext = 0, unknownNext = 0;
        for (int c = 0; c < channels.Length; c++)
        {
            long bytes = (long)block.SamplesPerLine(c) * block.LineCount(c) * channels[c].Size;
            if (layout.Schemes[c] == Scheme.Rle)
            {
                start[c] = rleNext;
                rleNext += bytes;
            }
            else if (layout.Schemes[c] == Scheme.Unknown)
            {
                start[c] = unknownNext;
                unknownNext += bytes;
            }
        }

        var line = new int[channels.Length];
        int o = 0;
        for (long y = block.Y0; y < (long)block.Y0 + block.Height; y++)
        {
            for (int c = 0; c < channels.Length; c++)
            {
                if (!block.HasLine(c, (int)y))
                {
                    continue;
                }

                int w = block.SamplesPerLine(c);
                int size = channels[c].Size;
                int l = line[c]++;
                switch (layout.Schemes[c])
                {
                    case Scheme.Lossy:
                        ReadOnlySpan<ushort> halves = planes[c].AsSpan(l * w, w);
                        for (int x = 0; x < w; x++)
                        {
                            if (size == 2)
                            {
                                BinaryPrimitives.WriteUInt16LittleEndian(raw[(o + (2 * x))..], halves[x]);
                            }
                            else
                            {
                                BinaryPrimitives.WriteSingleLittleEndian(raw[(o + (4 * x))..], ExrDwaDct.HalfToFloat(halves[x]));
                            }
                        }

                        break;
                    case Scheme.Rle:
                        long planeBytes = (long)w * block.LineCount(c);
                        for (int k = 0; k < size; k++)
                        {
                            ReadOnlySpan<byte> plane = rle.AsSpan((int)(start[c] + (k * planeBytes) + ((long)l * w)), w);
                            for (int x = 0; x < w; x++)
                            {
                                raw[o + (x * size) + k] = plane[x];
                            }
                        }

                        break;
                    default:
                        unknown.AsSpan((int)(start[c] + ((long)l * w * size)), w * size).CopyTo(raw[o..]);
                        break;
                }

                o += w * size;
            }
        }
    }

    private static byte[] AsciiLower(byte[] s)
    {
        var lower = new byte[s.Length];
        for (int i = 0; i < s.Length; i++)
        {
            lower[i] = s[i] is >= (byte)'A' and <= (byte)'Z' ? (byte)(s[i] + 32) : s[i];
        }

        return lower;
    }

    private static Rule[] BuildLegacyRules()
    {
        var rules = new List<Rule>();
        (string Suffix, int Csc)[] lossy =
        [
            ("r", 0), ("red", 0), ("g", 1), ("grn", 1), ("green", 1), ("b", 2), ("blu", 2), ("blue", 2), ("y", -1), ("by", -1), ("ry", -1),
        ];
        foreach ((string suffix, int csc) in lossy)
        {
            rules.Add(new Rule(suffix, Scheme.Lossy, ExrPixelType.Half, csc));
            rules.Add(new Rule(suffix, Scheme.Lossy, ExrPixelType.Float, csc));
        }

        rules.Add(new Rule("a", Scheme.Rle, ExrPixelType.UInt, -1));
        rules.Add(new Rule("a", Scheme.Rle, ExrPixelType.Half, -1));
        rules.Add(new Rule("a", Scheme.Rle, ExrPixelType.Float, -1));
        return [.. rules];
    }

    /// <summary>Orders layer names as the library's std::map of std::string does: by their bytes (UTF-8 in the file).</summary>
    private sealed class Utf8Order : IComparer<string>
    {
        public static readonly Utf8Order Instance = new();

        public int Compare(string? x, string? y) =>
            Encoding.UTF8.GetBytes(x ?? string.Empty).AsSpan().SequenceCompareTo(Encoding.UTF8.GetBytes(y ?? string.Empty));
    }
}
