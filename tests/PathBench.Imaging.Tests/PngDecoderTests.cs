using System.Globalization;
using System.Text;

namespace PathBench.Imaging.Tests;

/// <summary>
/// The PNG reader's parts that the live Pillow cross-check does not pin down alone: the chunk
/// CRC, the colour-chunk precedence of the PNG specification (3rd edition), the exact 16-bit
/// normalisation and the notes. Files are built in code (<see cref="PngBytes"/>, invented data).
/// </summary>
public sealed class PngDecoderTests
{
    [Fact]
    public void Crc_matches_the_published_check_value_and_the_iend_chunk()
    {
        // CRC-32 (ISO-HDLC, the PNG polynomial) of ASCII "123456789" is 0xCBF43926: the catalogue check value (from memory).
        Assert.Equal(0xCBF43926u, PngCrc.Compute("123456789"u8));

        // Every PNG ends with IEND, length 0, CRC AE 42 60 82 (PNG specification; visible in any PNG file, from memory).
        Assert.Equal(0xAE426082u, PngCrc.Compute("IEND"u8));
    }

    [Fact]
    public void Crc_matches_zlib_crc32_on_random_buffers()
    {
        // Python's zlib.crc32 (Debian's python3, linked to zlib) computes the same CRC-32 as the PNG chunks use.
        var random = new Random(20261203);
        byte[][] buffers = [.. new[] { 1, 3, 13, 64, 1000, 4097 }.Select(n => { var b = new byte[n]; random.NextBytes(b); return b; })];
        string hex = string.Join('\n', buffers.Select(Convert.ToHexString));
        string output = ReferenceTools.RunPython("import sys, zlib\nfor line in sys.stdin.read().split():\n    print(zlib.crc32(bytes.fromhex(line)))", hex);
        uint[] expected = output.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(v => uint.Parse(v, CultureInfo.InvariantCulture)).ToArray();
        Assert.Equal(buffers.Length, expected.Length);
        Assert.Equal(expected, buffers.Select(b => PngCrc.Compute(b)).ToArray());
    }

    /// <summary>A 2x1 8-bit grey image of samples 0 and 128 with the given chunks before IDAT.</summary>
    private static ImageReadResult Grey(params byte[][] before) =>
        PngCodec.Read(new MemoryStream(PngBytes.Image(2, 1, 8, 0, [0, 0, 128], before: before)), "t.png");

    private static byte[] Gama(uint value) => PngBytes.Chunk("gAMA", (byte)(value >> 24), (byte)(value >> 16), (byte)(value >> 8), (byte)value);

    private static byte[] Iccp() => PngBytes.Chunk("iCCP", [.. "p"u8, 0, 0, .. PngBytes.Zlib([1, 2, 3])]);

    public static TheoryData<string, byte[][], double, string> Precedence => new()
    {
        // (case, colour chunks, expected linear value of sample 128, a note that must appear)
        // PNG specification 3rd edition, colour chunk priority: cICP, iCCP, sRGB, then gAMA.
        { "none_is_srgb", [], Srgb.Decode(128 / 255.0), "no cICP, iCCP, sRGB or gAMA chunk: sRGB assumed" },
        { "gama_alone", [Gama(45455)], Math.Pow(128 / 255.0, 100000.0 / 45455), "gAMA 0.45455 (no cICP, iCCP or sRGB chunk)" },
        { "gama_one_is_linear", [Gama(100000)], 128 / 255.0, "linear = sample^(1/1)" },
        { "srgb_over_gama", [Gama(100000), PngBytes.Chunk("sRGB", 0)], Srgb.Decode(128 / 255.0), "gAMA ignored: sRGB takes precedence" },
        { "iccp_over_srgb_and_gama", [Iccp(), PngBytes.Chunk("sRGB", 0), Gama(100000)], Srgb.Decode(128 / 255.0), "sRGB, gAMA ignored: iCCP takes precedence" },
        { "cicp_linear_over_all", [PngBytes.Chunk("cICP", 1, 8, 0, 1), Iccp(), PngBytes.Chunk("sRGB", 0), Gama(45455)], 128 / 255.0, "iCCP, sRGB, gAMA ignored: cICP takes precedence" },
        { "cicp_srgb_over_gama", [PngBytes.Chunk("cICP", 1, 13, 0, 1), Gama(100000)], Srgb.Decode(128 / 255.0), "cICP transfer characteristics 13 (sRGB)" },
        { "cicp_p3_primaries_noted", [PngBytes.Chunk("cICP", 12, 13, 0, 1)], Srgb.Decode(128 / 255.0), "cICP colour primaries 12 (SMPTE EG 432-1, Display P3) not converted" },
        { "chrm_noted_with_gama", [Gama(100000), PngBytes.Chunk("cHRM", new byte[32])], 128 / 255.0, "cHRM chromaticities not applied" },
    };

    [Theory]
    [MemberData(nameof(Precedence))]
    public void Colour_chunks_apply_in_the_third_editions_precedence(string name, byte[][] chunks, double expected, string note)
    {
        ImageReadResult r = Grey(chunks);
        Assert.Equal(0f, r.Image.Data[0]);
        Assert.True((float)expected == r.Image.Data[3], FormattableString.Invariant($"{name}: expected {(float)expected:R}, got {r.Image.Data[3]:R}"));
        Assert.True(r.Notes.Any(n => n.Contains(note, StringComparison.Ordinal)), $"{name}: no note contains '{note}': {string.Join(" | ", r.Notes)}");
    }

    [Fact]
    public void Sixteen_bit_samples_are_divided_by_65535_exactly()
    {
        // PNG specification: samples are integers 0 .. 2^depth - 1 spanning the full range; cICP 8 is the linear transfer (ITU-T H.273).
        byte[] png = PngBytes.Image(2, 1, 16, 0, [0, 0x12, 0xAB, 0xFF, 0xFF], before: PngBytes.Chunk("cICP", 1, 8, 0, 1));
        ImageReadResult r = PngCodec.Read(new MemoryStream(png), "t.png");
        Assert.Equal([(float)(0x12AB / 65535.0), (float)(0x12AB / 65535.0), (float)(0x12AB / 65535.0), 1f, 1f, 1f], r.Image.Data);
        Assert.Equal("PNG 16-bit grey", r.Format);
        Assert.Contains("16-bit samples divided by 65535 before the transfer", r.Notes);
    }

    [Fact]
    public void Alpha_transparency_and_trailing_bytes_are_noted_not_used()
    {
        // RGBA 8-bit, one pixel (10, 20, 30, alpha 0): the colour is read as if opaque.
        byte[] png = [.. PngBytes.Image(1, 1, 8, 6, [0, 10, 20, 30, 0]), .. Encoding.ASCII.GetBytes("junk")];
        ImageReadResult r = PngCodec.Read(new MemoryStream(png), "t.png");
        Assert.Equal([Srgb.DecodeByte(10), Srgb.DecodeByte(20), Srgb.DecodeByte(30)], r.Image.Data);
        Assert.Contains("alpha channel ignored", r.Notes);
        Assert.Contains("4 bytes after the IEND chunk ignored", r.Notes);

        byte[] grey = PngBytes.Image(1, 1, 8, 0, [0, 7], before: PngBytes.Chunk("tRNS", 0, 7));
        ImageReadResult g = PngCodec.Read(new MemoryStream(grey), "g.png");
        Assert.Equal([Srgb.DecodeByte(7), Srgb.DecodeByte(7), Srgb.DecodeByte(7)], g.Image.Data);
        Assert.Contains("transparency (tRNS) ignored", g.Notes);
        Assert.Contains("grey PNG: the value is copied to R, G and B", g.Notes);
    }

    [Fact]
    public void A_size_beyond_one_array_is_refused_before_allocating_even_with_no_value_limit()
    {
        // 2^30 x 1 one-bit grey: 2^27 bytes of data, but 3 * 2^30 linear values, more than a .NET array holds (common practice: Array.MaxLength).
        byte[] png = PngBytes.Image(1u << 30, 1, 1, 0, [0, 0]);
        long before = GC.GetAllocatedBytesForCurrentThread();
        var e = Assert.Throws<ImageNotSupportedException>(() => PngCodec.Read(new MemoryStream(png), "wide.png", new ImageLimits(new PathBench.Io.MemoryBudget(long.MaxValue))));
        Assert.True(GC.GetAllocatedBytesForCurrentThread() - before < (1 << 20), "the reader allocated before refusing");
        Assert.Equal("wide.png: not supported: a 1073741824x1 1-bit grey image needs 134217729 bytes of image data and 3221225472 linear values, more than one array holds", e.Message);
    }

    [Fact]
    public void Idat_may_be_split_anywhere_and_hold_empty_chunks()
    {
        // PNG specification: the compressed stream is the concatenation of all IDAT data; zero-length IDAT chunks are allowed.
        byte[] z = PngBytes.Zlib([0, 1, 2, 3, 0, 4, 5, 6]);
        byte[] png = PngBytes.File(
            PngBytes.Ihdr(3, 2, 8, 0), PngBytes.Chunk("IDAT", z[..1]), PngBytes.Chunk("IDAT"), PngBytes.Chunk("IDAT", z[1..5]), PngBytes.Chunk("IDAT", z[5..]), PngBytes.Chunk("IEND"));
        ImageReadResult r = PngCodec.Read(new MemoryStream(png), "t.png");
        Assert.Equal(new byte[] { 1, 2, 3, 4, 5, 6 }.SelectMany(v => Enumerable.Repeat(Srgb.DecodeByte(v), 3)).ToArray(), r.Image.Data);
    }
}
