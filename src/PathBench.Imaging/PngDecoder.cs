using System.Buffers.Binary;
using System.Text;

namespace PathBench.Imaging;

/// <summary>PNG colour types (PNG specification, 3rd edition, IHDR chunk).</summary>
internal enum PngColourType : byte
{
    /// <summary>Greyscale.</summary>
    Grey = 0,

    /// <summary>Truecolour (RGB).</summary>
    Rgb = 2,

    /// <summary>Indexed-colour: each sample is an index into PLTE.</summary>
    Palette = 3,

    /// <summary>Greyscale with alpha.</summary>
    GreyAlpha = 4,

    /// <summary>Truecolour with alpha (RGBA).</summary>
    Rgba = 6,
}

/// <summary>The image header (IHDR) once checked: every field legal, sizes within the limits.</summary>
internal sealed record PngHeader(int Width, int Height, int BitDepth, PngColourType ColourType, bool Interlaced)
{
    /// <summary>
    /// The seven Adam7 passes (PNG specification, 3rd edition, "Interlacing"): first column, first
    /// row, column step and row step of each pass in the full image.
    /// </summary>
    public static readonly (int X0, int Y0, int Dx, int Dy)[] Adam7 =
        [(0, 0, 8, 8), (4, 0, 8, 8), (0, 4, 4, 8), (2, 0, 4, 4), (0, 2, 2, 4), (1, 0, 2, 2), (0, 1, 1, 2)];

    /// <summary>Samples per pixel as stored (an index counts as one).</summary>
    public int Channels => ColourType switch
    {
        PngColourType.Rgb => 3,
        PngColourType.GreyAlpha => 2,
        PngColourType.Rgba => 4,
        _ => 1,
    };

    /// <summary>Bits per stored pixel.</summary>
    public int BitsPerPixel => Channels * BitDepth;

    /// <summary>How far back, in bytes, the filters look: one pixel, and at least one byte.</summary>
    public int FilterDistance => Math.Max(1, BitsPerPixel / 8);

    /// <summary>Bytes of one row of <paramref name="width"/> pixels, without its filter-type byte (rows end on a byte).</summary>
    public long RowBytes(long width) => ((width * BitsPerPixel) + 7) / 8;

    /// <summary>Width and height of one pass; a pass with no pixels has no rows in the data (not even filter bytes).</summary>
    public (long Width, long Height) PassSize(int pass)
    {
        if (!Interlaced)
        {
            return (Width, Height);
        }

        (int x0, int y0, int dx, int dy) = Adam7[pass];
        return (Math.Max(0, ((long)Width - x0 + dx - 1) / dx), Math.Max(0, ((long)Height - y0 + dy - 1) / dy));
    }

    /// <summary>Number of passes: seven with Adam7, one without.</summary>
    public int PassCount => Interlaced ? 7 : 1;

    /// <summary>Exact size of the filtered data the zlib stream must inflate to: every non-empty pass's rows, each with its filter byte.</summary>
    public long FilteredBytes
    {
        get
        {
            long total = 0;
            for (int p = 0; p < PassCount; p++)
            {
                (long w, long h) = PassSize(p);
                if (w > 0 && h > 0)
                {
                    total += h * (1 + RowBytes(w));
                }
            }

            return total;
        }
    }

    /// <summary>Bytes of the whole image in the non-interlaced layout (rows with their filter-byte slot).</summary>
    public long RasterBytes => Height * (1 + RowBytes(Width));

    /// <summary>"16-bit RGB", "4-bit palette", … for the format line.</summary>
    public string Describe() => FormattableString.Invariant($"{BitDepth}-bit ") + ColourType switch
    {
        PngColourType.Grey => "grey",
        PngColourType.Rgb => "RGB",
        PngColourType.Palette => "palette",
        PngColourType.GreyAlpha => "grey+alpha",
        _ => "RGBA",
    } + (Interlaced ? " Adam7" : "");
}

/// <summary>The colour chunks of a PNG as found (each at most once, all before the image data).</summary>
internal sealed class PngColourChunks
{
    /// <summary>cICP: colour primaries, transfer characteristics, matrix coefficients, full-range flag (ITU-T H.273 code points).</summary>
    public byte[]? Cicp { get; set; }

    /// <summary>iCCP: the profile's name (the profile itself is not interpreted).</summary>
    public string? IccProfileName { get; set; }

    /// <summary>sRGB: the rendering intent.</summary>
    public byte? SrgbIntent { get; set; }

    /// <summary>gAMA: the image gamma times 100000.</summary>
    public uint? Gamma { get; set; }

    /// <summary>Whether a cHRM chunk was present.</summary>
    public bool HasChromaticities { get; set; }
}

/// <summary>
/// A decoded PNG: integer samples exactly as stored (no depth reduction, palette not yet applied),
/// in the non-interlaced layout, with the palette and colour chunks.
/// </summary>
internal sealed class PngDecoded
{
    private readonly byte[] raster;
    private readonly long stride;

    internal PngDecoded(PngHeader header, byte[] raster, byte[]? palette, PngColourChunks colour, PngTransfer transfer, IReadOnlyList<string> notes)
    {
        Header = header;
        Transfer = transfer;
        this.raster = raster;
        stride = 1 + header.RowBytes(header.Width);
        Palette = palette;
        Colour = colour;
        Notes = notes;
    }

    /// <summary>The checked header.</summary>
    public PngHeader Header { get; }

    /// <summary>PLTE entries as R, G, B bytes (null when the file has none).</summary>
    public byte[]? Palette { get; }

    /// <summary>The colour chunks found.</summary>
    public PngColourChunks Colour { get; }

    /// <summary>The transfer to linear the colour chunks state.</summary>
    public PngTransfer Transfer { get; }

    /// <summary>What was present but not used (tRNS, APNG frames, bytes after IEND).</summary>
    public IReadOnlyList<string> Notes { get; }

    /// <summary>Unpacks row <paramref name="y"/> into Width·Channels integer samples, pixel by pixel, channels in file order.</summary>
    public void Row(int y, Span<ushort> samples)
    {
        int depth = Header.BitDepth;
        int count = Header.Width * Header.Channels;
        ReadOnlySpan<byte> row = raster.AsSpan().Slice(checked((int)((y * stride) + 1)), checked((int)(stride - 1)));
        switch (depth)
        {
            case 16:
                for (int i = 0; i < count; i++)
                {
                    samples[i] = BinaryPrimitives.ReadUInt16BigEndian(row[(2 * i)..]);
                }

                break;
            case 8:
                for (int i = 0; i < count; i++)
                {
                    samples[i] = row[i];
                }

                break;
            default:
                for (int i = 0; i < count; i++)
                {
                    samples[i] = (ushort)Packed(row, i, depth);
                }

                break;
        }
    }

    /// <summary>Sample <paramref name="index"/> of a row of 1-, 2- or 4-bit samples, packed from the most significant bit of each byte (PNG specification, "Scanline").</summary>
    internal static int Packed(ReadOnlySpan<byte> row, int index, int depth)
    {
        int bit = index * depth;
        return (row[bit >> 3] >> (8 - depth - (bit & 7))) & ((1 << depth) - 1);
    }

    /// <summary>Refuses an index with no palette entry, naming the first such pixel.</summary>
    internal void CheckIndices(string fileName)
    {
        int entries = Palette!.Length / 3;
        if (entries >= 1 << Header.BitDepth)
        {
            return; // every index the depth can hold names an entry
        }

        var row = new ushort[Header.Width];
        for (int y = 0; y < Header.Height; y++)
        {
            Row(y, row);
            int x = Array.FindIndex(row, i => i >= entries);
            if (x >= 0)
            {
                throw new ImageFileException(
                    fileName, FormattableString.Invariant($"palette index {row[x]} at pixel ({x},{y}) is out of range: PLTE has {entries} entries"));
            }
        }
    }
}

/// <summary>
/// A PNG decoder written from the PNG specification (W3C "Portable Network Graphics (PNG)
/// Specification (Third Edition)", which ISO/IEC 15948 follows): every chunk's CRC checked, every
/// legal bit depth and colour type, PLTE and tRNS, IDAT inflated to exactly the size IHDR implies,
/// the five filter types and Adam7. Samples come out exactly as stored, 16 bits included; turning
/// them into linear light is <see cref="PngCodec"/>'s job.
/// </summary>
internal static class PngDecoder
{
    /// <summary>The eight bytes every PNG starts with.</summary>
    public static ReadOnlySpan<byte> Signature => [0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A];

    // Deflate cannot expand data by more than about 1032:1 (a 258-byte match costs at least two
    // bits; from memory), so a file this much shorter than its declared pixels is lying or cut.
    private const long MaxDeflateRatio = 1032;

    // Chunk lengths are at most 2^31 - 1 (PNG specification, "Chunk layout").
    private const uint MaxChunkLength = int.MaxValue;

    // An iCCP chunk starts with a 1-79 byte name and its null terminator; only that part is kept.
    private const int IccNameBytes = 80;

    private const int CopyBuffer = 1 << 16;

    /// <summary>Decodes a PNG from a seekable stream positioned at its signature.</summary>
    /// <exception cref="ImageFileException">The data is malformed, uses an undefined feature, or is above the limits.</exception>
    public static PngDecoded Decode(Stream stream, string fileName, ImageLimits limits)
    {
        ArgumentNullException.ThrowIfNull(stream);
        ArgumentNullException.ThrowIfNull(limits);
        var walk = new ChunkWalk(stream, fileName, limits);
        walk.Run();
        PngHeader header = walk.Header;

        // A transfer this reader refuses is refused before the image data is inflated.
        PngTransfer transfer = PngTransfer.Choose(walk.Colour, fileName);

        // Sizes were checked against the limits and the file before anything this large exists.
        byte[] filtered = new byte[header.FilteredBytes];
        try
        {
            ZlibExact.Inflate(new IdatStream(stream, walk.ImageData, fileName), filtered);
        }
        catch (ZlibDataException e)
        {
            throw new ImageFileException(fileName, "image data (IDAT): " + e.Message, e);
        }

        var decoded = new PngDecoded(header, Unfilter(header, filtered, fileName), walk.Palette, walk.Colour, transfer, walk.Notes);
        if (header.ColourType == PngColourType.Palette)
        {
            decoded.CheckIndices(fileName);
        }

        return decoded;
    }

    /// <summary>Undoes the filters pass by pass; with Adam7, scatters each pass into the full-image layout.</summary>
    private static byte[] Unfilter(PngHeader header, byte[] filtered, string fileName)
    {
        int distance = header.FilterDistance;
        byte[] zeros = new byte[header.RowBytes(header.Width)];
        byte[] raster = header.Interlaced ? new byte[header.RasterBytes] : filtered;
        long at = 0;
        for (int p = 0; p < header.PassCount; p++)
        {
            (long pw, long ph) = header.PassSize(p);
            if (pw == 0 || ph == 0)
            {
                continue;
            }

            int rowBytes = (int)header.RowBytes(pw);
            for (long r = 0; r < ph; r++)
            {
                Span<byte> row = filtered.AsSpan((int)(at + 1), rowBytes);
                ReadOnlySpan<byte> prior = r == 0 ? zeros.AsSpan(0, rowBytes) : filtered.AsSpan((int)(at - rowBytes), rowBytes);
                byte type = filtered[at];
                if (type > 4)
                {
                    string where = header.Interlaced ? FormattableString.Invariant($"row {r} of Adam7 pass {p + 1}") : FormattableString.Invariant($"row {r}");
                    throw new ImageFileException(fileName, FormattableString.Invariant($"{where} has filter type {type}; only 0-4 exist"));
                }

                PngFilters.Undo(type, row, prior, distance);
                if (header.Interlaced)
                {
                    Scatter(header, p, (int)r, row, raster);
                }

                at += 1 + rowBytes;
            }
        }

        return raster;
    }

    /// <summary>Copies one unfiltered Adam7 row to its pixels' places in the full image.</summary>
    private static void Scatter(PngHeader header, int pass, int passRow, ReadOnlySpan<byte> row, byte[] raster)
    {
        (int x0, int y0, int dx, int dy) = PngHeader.Adam7[pass];
        long stride = 1 + header.RowBytes(header.Width);
        Span<byte> target = raster.AsSpan((int)(((y0 + ((long)passRow * dy)) * stride) + 1), (int)(stride - 1));
        int bits = header.BitsPerPixel;
        int count = (int)header.PassSize(pass).Width;
        if (bits >= 8)
        {
            int bytes = bits / 8;
            for (int i = 0; i < count; i++)
            {
                row.Slice(i * bytes, bytes).CopyTo(target[((x0 + (i * dx)) * bytes)..]);
            }

            return;
        }

        for (int i = 0; i < count; i++)
        {
            int value = PngDecoded.Packed(row, i, bits);
            int to = (x0 + (i * dx)) * bits;
            target[to >> 3] |= (byte)(value << (8 - bits - (to & 7)));
        }
    }

    /// <summary>
    /// The first pass over the file: every chunk's length, type and CRC checked, the critical and
    /// colour chunks read and their order checked, the IDAT chunks' places recorded. Nothing sized
    /// by the image is allocated here.
    /// </summary>
    private sealed class ChunkWalk(Stream stream, string fileName, ImageLimits limits)
    {
        private readonly long start = stream.Position;
        private readonly long length = StreamReading.RequireLength(stream, fileName);
        private readonly byte[] buffer = new byte[CopyBuffer];
        private readonly List<string> notes = [];
        private readonly HashSet<string> seen = new(StringComparer.Ordinal);
        private PngHeader? header;
        private bool idatEnded;
        private long idatBytes;

        public PngHeader Header => header!;

        public byte[]? Palette { get; private set; }

        public PngColourChunks Colour { get; } = new();

        public List<(long Offset, int Length)> ImageData { get; } = [];

        public IReadOnlyList<string> Notes => notes;

        public void Run()
        {
            if (length - start < 33)
            {
                throw Fail(FormattableString.Invariant($"truncated: {length - start} bytes is too short for a PNG file"));
            }

            Span<byte> signature = stackalloc byte[8];
            StreamReading.ReadExactly(stream, signature, fileName, "the PNG signature");
            if (!signature.SequenceEqual(Signature))
            {
                throw Fail("not a PNG file: wrong signature");
            }

            Span<byte> head = stackalloc byte[8];
            while (true)
            {
                long at = stream.Position;
                if (length - at < 12)
                {
                    throw Fail(length == at
                        ? "truncated: the file ends before the IEND chunk"
                        : FormattableString.Invariant($"truncated: {length - at} bytes at byte {at} cannot hold a chunk (12 bytes at least); no IEND chunk"));
                }

                StreamReading.ReadExactly(stream, head, fileName, "a chunk header");
                uint declared = BinaryPrimitives.ReadUInt32BigEndian(head);
                ReadOnlySpan<byte> typeBytes = head[4..];
                string type = TypeName(typeBytes, at);
                if (header is null && (type != "IHDR" || declared != 13))
                {
                    throw Fail("PNG does not start with a 13-byte IHDR chunk");
                }

                if (declared > MaxChunkLength)
                {
                    throw Fail(FormattableString.Invariant($"chunk '{type}' at byte {at} declares {declared} bytes, above the PNG limit of 2^31-1"));
                }

                if (declared > length - at - 12)
                {
                    throw Fail(FormattableString.Invariant($"truncated: chunk '{type}' at byte {at} declares {declared} bytes but the file ends {length - at - 12} bytes after its header"));
                }

                idatEnded |= seen.Contains("IDAT") && type != "IDAT";

                if (Chunk(type, (int)declared, at, typeBytes))
                {
                    break;
                }
            }

            long after = length - stream.Position;
            if (after > 0)
            {
                notes.Add(FormattableString.Invariant($"{after} bytes after the IEND chunk ignored"));
            }
        }

        /// <summary>Handles one chunk whose header was read; true at IEND.</summary>
        private bool Chunk(string type, int size, long at, ReadOnlySpan<byte> typeBytes)
        {
            bool once = type is "IHDR" or "PLTE" or "tRNS" or "gAMA" or "sRGB" or "iCCP" or "cICP" or "cHRM" or "acTL";
            if (once && !seen.Add(type))
            {
                throw Fail(FormattableString.Invariant($"a second '{type}' chunk at byte {at}; the PNG specification allows one"));
            }

            // Chunk ordering (PNG specification, Third Edition, "Chunk ordering"): the colour-space
            // chunks precede PLTE and IDAT; the palette-dependent and other ancillary chunks listed
            // precede IDAT; hIST follows PLTE.
            bool beforePalette = type is "gAMA" or "sRGB" or "iCCP" or "cICP" or "cHRM" or "sBIT" or "mDCV" or "cLLI";
            if (beforePalette && seen.Contains("PLTE"))
            {
                throw Fail(FormattableString.Invariant($"chunk '{type}' at byte {at} comes after PLTE; it must precede the palette"));
            }

            if (type == "hIST" && !seen.Contains("PLTE"))
            {
                throw Fail(FormattableString.Invariant($"chunk 'hIST' at byte {at} comes before PLTE; it must follow the palette"));
            }

            seen.Add(type);
            bool beforeImage = beforePalette || type is "PLTE" or "tRNS" or "bKGD" or "hIST" or "pHYs" or "sPLT" or "eXIf";
            if (beforeImage && seen.Contains("IDAT"))
            {
                throw Fail(FormattableString.Invariant($"chunk '{type}' at byte {at} comes after the image data; it must precede the first IDAT"));
            }

            switch (type)
            {
                case "IHDR":
                    header = CheckHeader(Fixed(typeBytes, size, 13, at));
                    return false;
                case "PLTE":
                    ReadPalette(typeBytes, size, at);
                    return false;
                case "tRNS":
                    CheckTransparency(typeBytes, size, at);
                    return false;
                case "gAMA":
                    uint gamma = BinaryPrimitives.ReadUInt32BigEndian(Fixed(typeBytes, size, 4, at));
                    if (gamma == 0)
                    {
                        throw Fail(FormattableString.Invariant($"gAMA chunk at byte {at} holds gamma 0, which has no meaning"));
                    }

                    Colour.Gamma = gamma;
                    return false;
                case "sRGB":
                    byte intent = Fixed(typeBytes, size, 1, at)[0];
                    if (intent > 3)
                    {
                        throw Fail(FormattableString.Invariant($"sRGB chunk at byte {at} holds rendering intent {intent}; only 0-3 exist"));
                    }

                    Colour.SrgbIntent = intent;
                    return false;
                case "cICP":
                    Colour.Cicp = Fixed(typeBytes, size, 4, at);
                    return false;
                case "cHRM":
                    Fixed(typeBytes, size, 32, at);
                    Colour.HasChromaticities = true;
                    return false;
                case "iCCP":
                    Colour.IccProfileName = IccName(typeBytes, size, at);
                    return false;
                case "IDAT":
                    if (idatEnded)
                    {
                        throw Fail(FormattableString.Invariant($"IDAT chunk at byte {at} is not contiguous with the earlier IDAT chunks"));
                    }

                    if (header!.ColourType == PngColourType.Palette && Palette is null)
                    {
                        throw Fail("palette image (colour type 3) has no PLTE chunk before its image data");
                    }

                    if (size > 0)
                    {
                        ImageData.Add((at + 8, size));
                        idatBytes += size;
                    }

                    Skip(typeBytes, size, at);
                    return false;
                case "IEND":
                    Skip(typeBytes, size, at);
                    FinishWalk(size, at);
                    return true;
                case "acTL":
                    notes.Add("APNG animation: only the default image (IDAT) read");
                    Skip(typeBytes, size, at);
                    return false;
                default:
                    // Bit 5 of the first type byte clear marks a critical chunk (PNG specification, "Chunk naming conventions").
                    if ((typeBytes[0] & 0x20) == 0)
                    {
                        throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"unknown critical chunk '{type}' at byte {at}"));
                    }

                    Skip(typeBytes, size, at);
                    return false;
            }
        }

        private void FinishWalk(int size, long at)
        {
            if (size != 0)
            {
                throw Fail(FormattableString.Invariant($"IEND chunk at byte {at} declares {size} bytes; it must be empty"));
            }

            if (!seen.Contains("IDAT"))
            {
                throw Fail("no IDAT chunk: the file has no image data");
            }

            if (idatBytes == 0)
            {
                throw Fail("the IDAT chunks hold no data: the image data stream is empty");
            }

            CheckRatio(header!, idatBytes, "of image data (IDAT)");
        }

        private PngHeader CheckHeader(byte[] d)
        {
            uint width = BinaryPrimitives.ReadUInt32BigEndian(d);
            uint height = BinaryPrimitives.ReadUInt32BigEndian(d.AsSpan(4));
            byte bitDepth = d[8];
            byte colourType = d[9];
            if (width == 0 || height == 0 || width > int.MaxValue || height > int.MaxValue)
            {
                throw Fail(FormattableString.Invariant($"PNG size {width}x{height} is out of range (1..2^31-1)"));
            }

            // The legal pairs (PNG specification, IHDR: "Allowed combinations of colour type and bit depth").
            bool depthValid = colourType switch
            {
                0 => bitDepth is 1 or 2 or 4 or 8 or 16,
                3 => bitDepth is 1 or 2 or 4 or 8,
                2 or 4 or 6 => bitDepth is 8 or 16,
                _ => throw Fail(FormattableString.Invariant($"PNG colour type {colourType} does not exist")),
            };
            if (!depthValid)
            {
                throw Fail(FormattableString.Invariant($"PNG bit depth {bitDepth} is invalid for colour type {colourType}"));
            }

            if (d[10] != 0)
            {
                throw Fail(FormattableString.Invariant($"PNG compression method {d[10]} is not defined (only 0, deflate)"));
            }

            if (d[11] != 0)
            {
                throw Fail(FormattableString.Invariant($"PNG filter method {d[11]} is not defined (only 0, adaptive filtering)"));
            }

            if (d[12] > 1)
            {
                throw Fail(FormattableString.Invariant($"PNG interlace method {d[12]} is not defined (only 0, none, and 1, Adam7)"));
            }

            var h = new PngHeader((int)width, (int)height, bitDepth, (PngColourType)colourType, d[12] == 1);
            // The inflated data, the de-interlaced copy (Adam7 only) and the image.
            limits.Check(fileName, width, height, (Int128)h.FilteredBytes + (h.Interlaced ? h.RasterBytes : 0));
            long values = (long)width * height * RgbImage.Channels;
            if (h.FilteredBytes > Array.MaxLength || h.RasterBytes > Array.MaxLength || values > Array.MaxLength)
            {
                throw new ImageNotSupportedException(fileName, FormattableString.Invariant(
                    $"a {width}x{height} {h.Describe()} image needs {h.FilteredBytes} bytes of image data and {values} linear values, more than one array holds"));
            }

            CheckRatio(h, length - start, "");
            return h;
        }

        /// <summary>Refuses a header whose filtered data no deflate stream of <paramref name="bytes"/> bytes could hold.</summary>
        private void CheckRatio(PngHeader h, long bytes, string what)
        {
            if (h.FilteredBytes > (MaxDeflateRatio * bytes) + 4096)
            {
                string of = what.Length > 0 ? " " + what : "";
                throw Fail(FormattableString.Invariant($"truncated or lying: {bytes} bytes{of} cannot hold the {h.Width}x{h.Height} pixels the header declares"));
            }
        }

        private void ReadPalette(ReadOnlySpan<byte> typeBytes, int size, long at)
        {
            PngHeader h = header!;
            if (h.ColourType is PngColourType.Grey or PngColourType.GreyAlpha)
            {
                throw Fail(FormattableString.Invariant($"PLTE chunk at byte {at} in a grey image (colour type {(int)h.ColourType}), where it must not appear"));
            }

            int limit = h.ColourType == PngColourType.Palette ? Math.Min(256, 1 << h.BitDepth) : 256;
            if (size % 3 != 0 || size == 0 || size / 3 > limit)
            {
                throw Fail(FormattableString.Invariant($"PLTE chunk at byte {at} holds {size} bytes; it must hold 1 to {limit} RGB entries of 3 bytes"));
            }

            byte[] entries = Read(typeBytes, size, at);
            if (h.ColourType == PngColourType.Palette)
            {
                Palette = entries;
            }
            else
            {
                notes.Add("suggested palette (PLTE in a truecolour image) ignored");
            }
        }

        private void CheckTransparency(ReadOnlySpan<byte> typeBytes, int size, long at)
        {
            PngHeader h = header!;
            (bool legal, string rule) = h.ColourType switch
            {
                PngColourType.Grey => (size == 2, "2 bytes"),
                PngColourType.Rgb => (size == 6, "6 bytes"),
                PngColourType.Palette when Palette is null => throw Fail(FormattableString.Invariant($"tRNS chunk at byte {at} comes before PLTE")),
                PngColourType.Palette => (size <= Palette.Length / 3, FormattableString.Invariant($"at most one byte per palette entry ({Palette.Length / 3})")),
                _ => throw Fail(FormattableString.Invariant($"tRNS chunk at byte {at} in an image with an alpha channel (colour type {(int)h.ColourType}), where it must not appear")),
            };
            if (!legal)
            {
                throw Fail(FormattableString.Invariant($"tRNS chunk at byte {at} holds {size} bytes; colour type {(int)h.ColourType} needs {rule}"));
            }

            Skip(typeBytes, size, at);
            notes.Add("transparency (tRNS) ignored");
        }

        private string IccName(ReadOnlySpan<byte> typeBytes, int size, long at)
        {
            int keep = Math.Min(size, IccNameBytes + 1);
            byte[] start = new byte[keep];
            Consume(typeBytes, size, at, start);
            int end = Array.IndexOf(start, (byte)0);
            if (end < 1 || end > 79 || end + 1 >= keep || start[end + 1] != 0)
            {
                throw Fail(FormattableString.Invariant($"iCCP chunk at byte {at} does not start with a 1-79 byte profile name, a null byte and compression method 0"));
            }

            return Encoding.Latin1.GetString(start, 0, end);
        }

        private byte[] Fixed(ReadOnlySpan<byte> typeBytes, int size, int expected, long at)
        {
            if (size != expected)
            {
                throw Fail(FormattableString.Invariant($"{Encoding.ASCII.GetString(typeBytes)} chunk at byte {at} holds {size} bytes; it must hold {expected}"));
            }

            return Read(typeBytes, size, at);
        }

        private byte[] Read(ReadOnlySpan<byte> typeBytes, int size, long at)
        {
            byte[] data = new byte[size];
            Consume(typeBytes, size, at, data);
            return data;
        }

        private void Skip(ReadOnlySpan<byte> typeBytes, int size, long at) => Consume(typeBytes, size, at, []);

        /// <summary>Reads a chunk's data and CRC, keeping the first <c>keep.Length</c> bytes; a CRC mismatch is an error.</summary>
        private void Consume(ReadOnlySpan<byte> typeBytes, int size, long at, Span<byte> keep)
        {
            string what = FormattableString.Invariant($"chunk '{Encoding.ASCII.GetString(typeBytes)}' at byte {at}");
            uint crc = PngCrc.Update(PngCrc.Start, typeBytes);
            long left = size;
            int kept = 0;
            while (left > 0)
            {
                Span<byte> part = buffer.AsSpan(0, (int)Math.Min(left, buffer.Length));
                StreamReading.ReadExactly(stream, part, fileName, what);
                crc = PngCrc.Update(crc, part);
                int copy = Math.Min(part.Length, keep.Length - kept);
                part[..copy].CopyTo(keep[kept..]);
                kept += copy;
                left -= part.Length;
            }

            Span<byte> stored = stackalloc byte[4];
            StreamReading.ReadExactly(stream, stored, fileName, what + " CRC");
            uint expected = BinaryPrimitives.ReadUInt32BigEndian(stored);
            uint computed = PngCrc.Finish(crc);
            if (expected != computed)
            {
                throw Fail(FormattableString.Invariant($"{what} has a bad CRC (stored 0x{expected:X8}, computed 0x{computed:X8})"));
            }
        }

        private string TypeName(ReadOnlySpan<byte> typeBytes, long at)
        {
            // Chunk types are four ASCII letters (PNG specification, "Chunk layout").
            foreach (byte b in typeBytes)
            {
                if (!char.IsAsciiLetter((char)b))
                {
                    throw Fail(FormattableString.Invariant($"chunk at byte {at} has an invalid type (bytes {Convert.ToHexString(typeBytes)}); types are four ASCII letters"));
                }
            }

            return Encoding.ASCII.GetString(typeBytes);
        }

        private ImageFileException Fail(string what) => new(fileName, what);
    }

    /// <summary>The data of the IDAT chunks as one stream, read from the file in their order.</summary>
    private sealed class IdatStream(Stream file, List<(long Offset, int Length)> segments, string fileName) : Stream
    {
        private int index;
        private int used;

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => throw new NotSupportedException();

        public override long Position
        {
            get => throw new NotSupportedException();
            set => throw new NotSupportedException();
        }

        public override int Read(Span<byte> buffer)
        {
            while (index < segments.Count && used == segments[index].Length)
            {
                index++;
                used = 0;
            }

            if (index == segments.Count || buffer.IsEmpty)
            {
                return 0;
            }

            (long offset, int size) = segments[index];
            file.Position = offset + used;
            int n = file.Read(buffer[..Math.Min(buffer.Length, size - used)]);
            if (n == 0)
            {
                throw new ImageFileException(fileName, "truncated: the file became shorter while its image data was read");
            }

            used += n;
            return n;
        }

        public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

        public override void Flush()
        {
        }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}

/// <summary>
/// The five filter types of PNG filter method 0 (PNG specification, 3rd edition, "Filter types"),
/// undone in place. Arithmetic is modulo 256; bytes before the row's start and the prior row of a
/// pass's first row count as zero.
/// </summary>
internal static class PngFilters
{
    /// <summary>Reconstructs <paramref name="row"/> given its filter type and the reconstructed prior row.</summary>
    public static void Undo(byte type, Span<byte> row, ReadOnlySpan<byte> prior, int distance)
    {
        int n = row.Length;
        switch (type)
        {
            case 0:
                break;
            case 1: // Sub
                for (int i = distance; i < n; i++)
                {
                    row[i] += row[i - distance];
                }

                break;
            case 2: // Up
                for (int i = 0; i < n; i++)
                {
                    row[i] += prior[i];
                }

                break;
            case 3: // Average: floor((a + b) / 2) computed without overflow
                for (int i = 0; i < n; i++)
                {
                    int a = i >= distance ? row[i - distance] : 0;
                    row[i] += (byte)((a + prior[i]) >> 1);
                }

                break;
            case 4: // Paeth
                for (int i = 0; i < n; i++)
                {
                    int a = i >= distance ? row[i - distance] : 0;
                    int c = i >= distance ? prior[i - distance] : 0;
                    row[i] += (byte)Paeth(a, prior[i], c);
                }

                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(type), type, "PNG filter types are 0-4");
        }
    }

    /// <summary>
    /// The Paeth predictor (PNG specification, "Filter type 4: Paeth"): of a (left),
    /// b (above), c (upper left), the one nearest p = a + b − c, ties broken in the order a, b, c.
    /// </summary>
    public static int Paeth(int a, int b, int c)
    {
        int p = a + b - c;
        int pa = Math.Abs(p - a);
        int pb = Math.Abs(p - b);
        int pc = Math.Abs(p - c);
        if (pa <= pb && pa <= pc)
        {
            return a;
        }

        return pb <= pc ? b : c;
    }
}
