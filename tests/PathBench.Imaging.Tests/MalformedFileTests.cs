using System.Buffers.Binary;
using System.Diagnostics;
using System.Globalization;
using System.Text;
using Xunit.Abstractions;

namespace PathBench.Imaging.Tests;

/// <summary>
/// A corpus of malformed PFM, OpenEXR and PNG files, made by mutating valid files in code
/// (invented data). Each must give an <see cref="ImageFileException"/> whose message is one
/// line starting with the file name — no other exception, no hang, and no managed allocation
/// beyond a small bound however large the header's claims.
/// </summary>
public sealed class MalformedFileTests(ITestOutputHelper output)
{
    // Every base file is below 20 KB; decoding one allocates well under 1 MB. 8 MB leaves room for
    // runtime noise but fails at once if a reader trusts a lying header (the smallest lie below
    // claims hundreds of MB).
    private const long AllocationBound = 8L << 20;

    // A clean error takes milliseconds; a minute means a loop that does not end. The bound only
    // catches hangs: it is far above any time a loaded two-core machine needs, so the outcome does not
    // depend on scheduling.
    private static readonly TimeSpan HangBound = TimeSpan.FromSeconds(60);

    /// <summary>Name, mutated bytes, and a fragment the message must contain.</summary>
    public sealed record Malformed(string Name, Func<byte[]> Bytes, string Expect);

    private static readonly Malformed[] Corpus = BuildCorpus();

    public static TheoryData<string> Names => new(Corpus.Select(c => c.Name));

    [Fact]
    public void Corpus_has_at_least_forty_files_of_each_kind_together()
    {
        Assert.True(Corpus.Length >= 40, $"only {Corpus.Length} malformed files");
        Assert.Equal(Corpus.Length, Corpus.Select(c => c.Name).Distinct().Count());
        foreach (string prefix in new[] { "pfm_", "exr_", "png_" })
        {
            Assert.True(Corpus.Count(c => c.Name.StartsWith(prefix, StringComparison.Ordinal)) >= 10, prefix);
        }
    }

    [Theory]
    [MemberData(nameof(Names))]
    public async Task Malformed_file_gives_one_clean_line(string name)
    {
        Malformed c = Corpus.Single(k => k.Name == name);
        using var dir = new TempFolder();
        string path = dir.File(name + ".img");
        File.WriteAllBytes(path, c.Bytes());

        Exception? caught = null;
        long allocated = 0;
        var task = Task.Run(() =>
        {
            long before = GC.GetAllocatedBytesForCurrentThread();
            try
            {
                ImageFile.Read(path);
            }
            catch (Exception e)
            {
                caught = e;
            }

            allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        });
        Task finished = await Task.WhenAny(task, Task.Delay(HangBound));
        Assert.True(finished == task, $"{name}: reader still running after {HangBound.TotalSeconds} s");
        await task;

        Assert.NotNull(caught);
        Assert.IsAssignableFrom<ImageFileException>(caught);
        string message = caught!.Message;
        Assert.StartsWith(path + ": ", message, StringComparison.Ordinal);
        Assert.DoesNotContain('\n', message);
        Assert.True(message.Contains(c.Expect, StringComparison.Ordinal), $"{name}: message lacks '{c.Expect}': {message}");
        Assert.True(allocated < AllocationBound, $"{name}: reader allocated {allocated} bytes before failing");
    }

    // The runtime alone peaks near 35 MiB; every lie in the corpus claims hundreds of MB or more,
    // so a reader that trusted one would pass this bound at once (common practice).
    private const long PeakBound = 128L << 20;

    /// <summary>
    /// The whole corpus through the program itself (<c>pathbench convert</c>, one child per file):
    /// each file is refused with exit 2 and one line, and each child's own peak resident set
    /// (VmHWM, reported by the program's test hook) stays small. The largest peak is printed.
    /// </summary>
    [Fact]
    public async Task The_corpus_through_the_program_keeps_a_small_peak_resident_set()
    {
        using var dir = new TempFolder();
        long largest = 0;
        string largestName = "";
        foreach (Malformed c in Corpus)
        {
            string path = dir.File(c.Name + ".img");
            File.WriteAllBytes(path, c.Bytes());
            string peakFile = dir.File("peak");
            var info = new ProcessStartInfo(Path.Combine(AppContext.BaseDirectory, "pathbench"), ["convert", path, dir.File("out.pfm")])
            {
                RedirectStandardError = true,
                RedirectStandardOutput = true,
                UseShellExecute = false,
            };
            info.Environment[PathBench.Cli.Program.PeakMemoryVariable] = peakFile;
            using Process child = Process.Start(info)!;
            Task<string> err = child.StandardError.ReadToEndAsync();
            _ = child.StandardOutput.ReadToEnd();
            Assert.True(child.WaitForExit(HangBound), $"{c.Name}: still running after {HangBound.TotalSeconds} s");
            child.WaitForExit();
            string line = await err;
            Assert.True(child.ExitCode == 2, $"{c.Name}: exit {child.ExitCode}: {line}");
            Assert.Single(line.TrimEnd('\n').Split('\n'));
            long peak = long.Parse(File.ReadAllText(peakFile), CultureInfo.InvariantCulture);
            Assert.True(peak < PeakBound, $"{c.Name}: peak resident set {peak} bytes");
            if (peak > largest)
            {
                (largest, largestName) = (peak, c.Name);
            }
        }

        output.WriteLine(FormattableString.Invariant($"{Corpus.Length} files, largest peak resident set {largest / 1048576.0:F1} MiB ({largestName})"));
    }

    // ---- base files -------------------------------------------------------------------------

    private static byte[] ValidPfm()
    {
        var s = new MemoryStream();
        PfmCodec.Write(s, SyntheticImages.Uniform(4, 3, 0, 1, seed: 1));
        return s.ToArray();
    }

    private static byte[] ValidExr(ExrCompression compression = ExrCompression.Zip, ExrPixelType type = ExrPixelType.Float)
    {
        var s = new MemoryStream();
        // A smooth gradient compresses, so ZIP chunks hold real zlib streams (noise would be stored raw).
        ExrCodec.Write(s, SyntheticImages.Gradient(37, 21), new ExrWriteOptions(compression, type));
        return s.ToArray();
    }

    private static byte[] ValidPng()
    {
        var s = new MemoryStream();
        PngCodec.Write(s, SyntheticImages.Uniform(5, 4, 0, 1, seed: 3));
        return s.ToArray();
    }

    private static byte[] Ascii(string text, int binaryBytes = 0) => [.. Encoding.ASCII.GetBytes(text), .. new byte[binaryBytes]];

    private static byte[] Mutate(byte[] bytes, Action<byte[]> change)
    {
        byte[] copy = (byte[])bytes.Clone();
        change(copy);
        return copy;
    }

    // Positions inside an EXR written by ExrCodec (attribute values follow name\0type\0size).
    private static int AttributeValue(byte[] exr, string name, string type) =>
        ExrTests.IndexOf(exr, Encoding.ASCII.GetBytes($"{name}\0{type}\0")) + name.Length + type.Length + 2 + 4;

    private static int AttributeSize(byte[] exr, string name, string type) => AttributeValue(exr, name, type) - 4;

    // Our writer puts screenWindowWidth last: its 4-byte value, then the header's null byte, then the table.
    private static int OffsetTable(byte[] exr) => AttributeValue(exr, "screenWindowWidth", "float") + 4 + 1;

    /// <summary>An OpenImageIO-written fixture (Fixtures/exr) and where its first offset table starts, found by our header parser.</summary>
    private static (byte[] Bytes, int Table) Fixture(string name)
    {
        byte[] bytes = File.ReadAllBytes(Path.Combine(AppContext.BaseDirectory, "Fixtures", "exr", name + ".exr"));
        var stream = new MemoryStream(bytes);
        new ExrHeaderReader(stream, name, bytes.Length).ReadHeaders();
        return (bytes, (int)stream.Position);
    }

    private static byte[] MutateFixture(string name, Action<byte[], int> change)
    {
        (byte[] bytes, int table) = Fixture(name);
        change(bytes, table);
        return bytes;
    }

    private static int FixtureChunk(byte[] b, int table, int index) => (int)BinaryPrimitives.ReadUInt64LittleEndian(b.AsSpan(table + (8 * index)));

    private static int Chunk(byte[] exr, int index) => (int)BinaryPrimitives.ReadUInt64LittleEndian(exr.AsSpan(OffsetTable(exr) + (8 * index)));

    // Channel entries in the chlist value: B, G, R, each name\0 + 16 bytes.
    private static int ChannelEntry(byte[] exr, int index) => AttributeValue(exr, "channels", "chlist") + (18 * index);

    private static void WriteInt(byte[] b, int at, int value) => BinaryPrimitives.WriteInt32LittleEndian(b.AsSpan(at), value);

    private static byte[] Zlib(byte[] data) => PngBytes.Zlib(data);

    /// <summary>Replaces chunk 0's data (and its size field) by <paramref name="payload"/>, keeping chunk 1 reachable.</summary>
    private static byte[] ReplaceChunk0(byte[] exr, byte[] payload)
    {
        int table = OffsetTable(exr);
        int c0 = Chunk(exr, 0), c1 = Chunk(exr, 1);
        byte[] head = exr[..(c0 + 4)];
        byte[] rest = exr[c1..];
        byte[] result = [.. head, .. new byte[4], .. payload, .. rest];
        WriteInt(result, c0 + 4, payload.Length);
        BinaryPrimitives.WriteUInt64LittleEndian(result.AsSpan(table + 8), (ulong)(c0 + 8 + payload.Length));
        return result;
    }

    // ---- DWA helpers: the chunk header is eleven uint64 (version, UNKNOWN raw and stored sizes, AC, DC, RLE
    // stored sizes, RLE run-coded and raw sizes, AC and DC counts, AC compression), then the rule table.

    /// <summary>Where chunk 0's DWA data start in a fixture (after y and size, or after the four tile ints and size).</summary>
    private static int DwaData(byte[] b, int table, string fixture) => FixtureChunk(b, table, 0) + (fixture.StartsWith("tiled", StringComparison.Ordinal) ? 20 : 8);

    private static byte[] MutateDwaHeader(string fixture, int field, ulong value) =>
        MutateFixture(fixture, (b, t) => BinaryPrimitives.WriteUInt64LittleEndian(b.AsSpan(DwaData(b, t, fixture) + (8 * field)), value));

    /// <summary>Changes one byte of a section of chunk 0 of scanline_dwaa_half (sections: 0 UNKNOWN, 1 AC, 2 DC, 3 RLE).</summary>
    private static byte[] MutateDwaSection(string fixture, int section, int at, byte value) => MutateFixture(fixture, (b, t) =>
    {
        int d = DwaData(b, t, fixture);
        int p = d + 88 + BinaryPrimitives.ReadUInt16LittleEndian(b.AsSpan(d + 88));
        for (int s = 0; s < section; s++)
        {
            p += (int)BinaryPrimitives.ReadUInt64LittleEndian(b.AsSpan(d + (8 * (2 + s))));
        }

        b[p + at] = value;
    });

    /// <summary>scanline_dwaa_half with its one chunk's AC section cut to its first <paramref name="keep"/> bytes (sizes kept consistent).</summary>
    private static byte[] DwaWithAcSectionCut(int keep)
    {
        (byte[] b, int t) = Fixture("scanline_dwaa_half");
        int c = FixtureChunk(b, t, 0);
        int d = c + 8;
        int data = d + 88 + BinaryPrimitives.ReadUInt16LittleEndian(b.AsSpan(d + 88));
        int ac = (int)BinaryPrimitives.ReadUInt64LittleEndian(b.AsSpan(d + 24));
        byte[] payload = [.. b[d..data], .. b[data..(data + keep)], .. b[(data + ac)..]];
        BinaryPrimitives.WriteUInt64LittleEndian(payload.AsSpan(24), (ulong)keep);
        byte[] result = [.. b[..(c + 4)], .. new byte[4], .. payload];
        WriteInt(result, c + 4, payload.Length);
        return result;
    }

    // ---- PNG helpers ---------------------------------------------------------------------------

    /// <summary>The valid file with its IHDR fields changed and the IHDR CRC recomputed, so the reader meets the field, not a bad CRC.</summary>
    private static byte[] PngWithIhdr(uint width, uint height, byte depth = 8, byte colourType = 2, byte compression = 0) => Mutate(ValidPng(), b =>
    {
        BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(16), width);
        BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(20), height);
        b[24] = depth;
        b[25] = colourType;
        b[26] = compression;
        PngBytes.FixCrc(b, 8);
    });

    /// <summary>The valid file with one chunk's field changed and that chunk's CRC recomputed.</summary>
    private static byte[] PngWithChunk(string type, Action<byte[], int> change) => Mutate(ValidPng(), b =>
    {
        int at = PngBytes.Find(b, type);
        change(b, at);
        PngBytes.FixCrc(b, at);
    });

    /// <summary>A 4x4 8-bit grey image's filtered data: four rows of a filter byte and four samples.</summary>
    private static byte[] Grey4x4(int filterRow = -1, byte filterType = 0)
    {
        var d = new byte[20];
        if (filterRow >= 0)
        {
            d[filterRow * 5] = filterType;
        }

        return d;
    }

    private static byte[] GreyPng(byte[] filtered, byte interlace = 0, uint width = 4, uint height = 4, params byte[][] before) =>
        PngBytes.Image(width, height, 8, 0, filtered, interlace, before);

    private static byte[] Cicp(params byte[] values) => PngBytes.Chunk("cICP", values);

    private static byte[] Text(int bytes) => PngBytes.Chunk("tEXt", [.. "Comment"u8, 0, .. Enumerable.Repeat((byte)'x', bytes)]);

    private static Malformed[] BuildCorpus()
    {
        const int RawChunk0 = 37 * 3 * 4 * 16; // 16 FLOAT RGB lines of 37 pixels = 7104 bytes
        return
        [
            // PFM
            new("pfm_empty_file", () => [], "unknown image format"),
            new("pfm_magic_only", () => Ascii("PF\n"), "truncated"),
            new("pfm_wrong_magic_after_P", () => Ascii("PZ\n4 3\n-1\n", 48), "unknown image format"),
            new("pfm_magic_with_extra_letter", () => Ascii("PFF\n4 3\n-1\n", 48), "unknown image format"),
            new("pfm_negative_width", () => Ascii("PF\n-4 3\n-1.0\n", 144), "width -4 is out of range"),
            new("pfm_zero_height", () => Ascii("PF\n4 0\n-1.0\n", 144), "height 0 is out of range"),
            new("pfm_huge_size", () => Ascii("PF\n100000 100000\n-1.0\n", 64), "above the memory budget of 2 GiB; raise the budget with the global option --max-memory"),
            new("pfm_width_overflows_long", () => Ascii("PF\n99999999999999999999 1\n-1.0\n", 12), "is not an integer"),
            new("pfm_width_not_a_number", () => Ascii("PF\nfour 3\n-1.0\n", 144), "'four' is not an integer"),
            new("pfm_scale_zero", () => Ascii("PF\n4 3\n0\n", 144), "scale '0' is not a non-zero number"),
            new("pfm_scale_nan", () => Ascii("PF\n4 3\nnan\n", 144), "is not a non-zero number"),
            new("pfm_scale_missing", () => Ascii("PF\n4 3\n"), "truncated"),
            new("pfm_header_without_pixels", () => Ascii("PF\n4 3\n-1.0\n"), "truncated: header declares 4x3"),
            new("pfm_truncated_pixels", () => ValidPfm()[..^20], "truncated: header declares 4x3 PF = 144 bytes of pixels, but 124 follow"),
            new("pfm_lying_dimensions", () => [.. Ascii("PF\n4000 3000\n-1.0\n"), .. ValidPfm()[12..]], "but 144 follow"),
            new("pfm_grey_lying_dimensions", () => Ascii("Pf\n9000 9000\n1.0\n", 400), "truncated: header declares 9000x9000 Pf"),
            new("pfm_binary_garbage_header", () => [.. Ascii("PF\n"), .. Enumerable.Range(0, 300).Select(i => (byte)(((i * 37) % 200) + 33))], "truncated or malformed PFM header"),

            // OpenEXR: version field and flags
            new("exr_only_magic", () => ValidExr()[..4], "truncated: 4 bytes is too short"),
            new("exr_truncated_after_version", () => ValidExr()[..8], "truncated"),
            new("exr_version_1", () => Mutate(ValidExr(), b => b[4] = 1), "not supported: OpenEXR file format version 1"),
            new("exr_tiled_flag", () => Mutate(ValidExr(), b => b[5] |= 0x02), "header lacks the required attribute 'tiles'"),
            new("exr_deep_flag", () => Mutate(ValidExr(), b => b[5] |= 0x08), "not supported: deep OpenEXR data"),
            new("exr_multipart_flag", () => Mutate(ValidExr(), b => b[5] |= 0x10), "part 0 of a multi-part file has no 'type' attribute"),
            new("exr_unknown_flag", () => Mutate(ValidExr(), b => b[6] |= 0x40), "not supported: unknown OpenEXR version flags"),

            // OpenEXR: header attributes
            new("exr_truncated_in_header", () => ValidExr()[..60], "truncated"),
            new("exr_missing_channels", () => Mutate(ValidExr(), b => b[AttributeValue(b, "channels", "chlist") - 4 - 7 - 2] = (byte)'z'), "lacks the required attribute 'channels'"),
            new("exr_attribute_size_huge", () => Mutate(ValidExr(), b => WriteInt(b, AttributeSize(b, "channels", "chlist"), int.MaxValue)), "attribute 'channels' declares 2147483647 bytes"),
            new("exr_attribute_size_negative", () => Mutate(ValidExr(), b => WriteInt(b, AttributeSize(b, "pixelAspectRatio", "float"), -5)), "declares -5 bytes"),
            new("exr_attribute_wrong_type", () => Mutate(ValidExr(), b => b[AttributeValue(b, "dataWindow", "box2i") - 4 - 2] = (byte)'f'), "has type 'box2f', expected 'box2i'"),
            new("exr_attribute_name_unterminated", () => [.. ValidExr()[..8], .. Ascii(new string('x', 40))], "attribute name is longer than 31 bytes"),
            new("exr_channel_type_unknown", () => Mutate(ValidExr(), b => WriteInt(b, ChannelEntry(b, 2) + 2, 7)), "channel 'R' has unknown pixel type 7"),
            new("exr_channel_type_3", () => Mutate(ValidExr(), b => WriteInt(b, ChannelEntry(b, 2) + 2, 3)), "channel 'R' has unknown pixel type 3"),
            new("exr_channel_subsampled", () => Mutate(ValidExr(), b => WriteInt(b, ChannelEntry(b, 1) + 2 + 8, 2)), "not supported: subsampled channel 'G' (2x1)"),
            new("exr_channel_duplicate", () => Mutate(ValidExr(), b => b[ChannelEntry(b, 1)] = (byte)'B'), "channel 'B' appears twice"),
            new("exr_no_rgb_or_y", () => Mutate(ValidExr(), b => b[ChannelEntry(b, 2)] = (byte)'Q'), "no R,G,B or Y channels; layers: (none) (B,G,Q)"),
            new("exr_chlist_unterminated", () => Mutate(ValidExr(), b => b[ChannelEntry(b, 3)] = (byte)'Z'), "channel list"),
            new("exr_compression_htj2k", () => Mutate(ValidExr(), b => b[AttributeValue(b, "compression", "compression")] = 10), "not supported: HTJ2K compression"),
            new("exr_compression_unknown", () => Mutate(ValidExr(), b => b[AttributeValue(b, "compression", "compression")] = 42), "not supported: code 42 compression"),
            new("exr_data_window_inverted", () => Mutate(ValidExr(), b => WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 8, -10)), "data window (0,0)-(-10,20) is empty"),
            new("exr_data_window_huge", () => Mutate(ValidExr(), b =>
            {
                WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 8, 1 << 30);
                WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 12, 1 << 30);
            }), "above the memory budget of 2 GiB"),
            new("exr_data_window_full_int_range", () => Mutate(ValidExr(), b =>
            {
                WriteInt(b, AttributeValue(b, "dataWindow", "box2i"), int.MinValue);
                WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 8, int.MaxValue);
            }), "is empty or too large"),
            new("exr_data_window_wide_lie", () => Mutate(ValidExr(), b => WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 8, 39_999)), "cannot hold the 40000x21 pixels"),
            new("exr_none_data_window_lie", () => Mutate(ValidExr(ExrCompression.None), b => WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 8, 99)), "cannot hold the 100x21 pixels"),
            new("exr_data_window_tall_lie", () => Mutate(ValidExr(), b => WriteInt(b, AttributeValue(b, "dataWindow", "box2i") + 12, 2_000_000)), "offset table"),

            // OpenEXR: offset table and chunks
            new("exr_truncated_offset_table", () => { byte[] b = ValidExr(); return b[..(OffsetTable(b) + 4)]; }, "truncated: the offset table"),
            new("exr_offset_beyond_file", () => Mutate(ValidExr(), b => BinaryPrimitives.WriteUInt64LittleEndian(b.AsSpan(OffsetTable(b)), 1UL << 40)), "offset table entry 0 points to byte 1099511627776"),
            new("exr_offset_into_header", () => Mutate(ValidExr(), b => BinaryPrimitives.WriteUInt64LittleEndian(b.AsSpan(OffsetTable(b) + 8), 12)), "offset table entry 1 points to byte 12"),
            new("exr_offset_table_zeroed", () => Mutate(ValidExr(), b => b.AsSpan(OffsetTable(b), 16).Clear()), "points to byte 0"),
            new("exr_chunk_wrong_y", () => Mutate(ValidExr(), b => WriteInt(b, Chunk(b, 1), 3)), "chunk 1 is for scanline 3, expected 16"),
            new("exr_chunk_size_huge", () => Mutate(ValidExr(), b => WriteInt(b, Chunk(b, 0) + 4, int.MaxValue)), "chunk 0 (y=0) declares 2147483647 bytes"),
            new("exr_chunk_size_negative", () => Mutate(ValidExr(), b => WriteInt(b, Chunk(b, 0) + 4, -1)), "declares -1 bytes"),
            new("exr_chunk_size_zero", () => Mutate(ValidExr(), b => WriteInt(b, Chunk(b, 1) + 4, 0)), "chunk 1 (y=16) declares 0 bytes"),
            new("exr_chunk_larger_than_file", () => { byte[] b = ValidExr(); return b[..(Chunk(b, 1) + 20)]; }, "truncated: chunk 1"),
            new("exr_tile_offset_out_of_range", () => MutateFixture("tiled_zip_half_8x8", (b, t) => BinaryPrimitives.WriteUInt64LittleEndian(b.AsSpan(t + 8), 1UL << 40)), "offset table entry 1 points to byte 1099511627776"),
            new("exr_tile_coordinates_wrong", () => MutateFixture("tiled_zip_half_8x8", (b, t) => WriteInt(b, FixtureChunk(b, t, 0), 5)), "chunk 0 is tile (5,0) of level (0,0); expected tile (0,0)"),
            new("exr_tile_level_wrong", () => MutateFixture("tiled_zip_half_8x8", (b, t) => WriteInt(b, FixtureChunk(b, t, 2) + 8, 1)), "chunk 2 is tile (2,0) of level (1,0)"),
            new("exr_tile_size_lie", () => MutateFixture("tiled_zip_half_8x8", (b, t) => WriteInt(b, FixtureChunk(b, t, 0) + 16, 1 << 20)), "chunk 0 (tile at x=0, y=0) declares 1048576 bytes of data; it must be 1..384"),
            new("exr_part_number_wrong", () => MutateFixture("two_parts_zip_half", (b, t) => WriteInt(b, FixtureChunk(b, t, 0), 1)), "chunk 0 belongs to part 1, expected part 0"),
            new("exr_chunk_count_lie", () => MutateFixture("two_parts_zip_half", (b, _) => WriteInt(b, AttributeValue(b, "chunkCount", "int"), 0)), "chunkCount 0 is not positive"),
            new("exr_rle_literal_past_end", () => MutateFixture("scanline_rle_half", (b, t) => b[FixtureChunk(b, t, 0) + 8] = 0x81), "chunk 0 (y=0): RLE literal run of 127 bytes at byte 0 runs past the end of the chunk"),
            new("exr_rle_repeat_too_long", () => MutateFixture("scanline_rle_half", (b, t) => b[FixtureChunk(b, t, 0) + 8] = 0x7f), "chunk 0 (y=0): RLE data decode to more than the 126 bytes expected"),
            new("exr_pxr24_zlib_corrupt", () => MutateFixture("scanline_pxr24_float", (b, t) => b[FixtureChunk(b, t, 0) + 8] = 0), "chunk 0 (y=0): bad zlib stream"),
            new("exr_pxr24_zlib_short", () => MutateFixture("scanline_pxr24_float", (b, t) => WriteInt(b, FixtureChunk(b, t, 0) + 4, 12)), "chunk 0 (y=0): zlib data ends after"),
            new("exr_b44_chunk_short", () => MutateFixture("scanline_b44_half", (b, t) => WriteInt(b, FixtureChunk(b, t, 0) + 4, 20)), "chunk 0 (y=0): B44 data end inside a block of channel 'B' at (4,0)"),
            new("exr_b44_bytes_left_over", () => MutateFixture("tiled_b44a_half_8x8", (b, t) => WriteInt(b, FixtureChunk(b, t, 0) + 16, 383)), "chunk 0 (tile at x=0, y=0): B44 chunk has"),
            new("exr_piz_bitmap_range_lie", () => MutateFixture("scanline_piz_half", (b, t) => b[FixtureChunk(b, t, 0) + 9] = 0x30), "chunk 0 (y=0): PIZ bitmap range"),
            new("exr_piz_huffman_cut", () => MutateFixture("scanline_piz_half", (b, t) => WriteInt(b, FixtureChunk(b, t, 0) + 4, 40)), "chunk 0 (y=0): "),
            new("exr_dwa_chunk_shorter_than_header", () => MutateFixture("scanline_dwaa_half", (b, t) => WriteInt(b, FixtureChunk(b, t, 0) + 4, 40)), "chunk 0 (y=0): DWA chunk of 40 bytes is shorter than its 88-byte header"),
            new("exr_dwa_version_unknown", () => MutateDwaHeader("scanline_dwaa_half", 0, 3), "chunk 0 (y=0): DWA chunk version 3 is unknown (0, 1 and 2 are defined)"),
            new("exr_dwa_ac_section_larger_than_chunk", () => MutateDwaHeader("scanline_dwaa_half", 3, 1UL << 40), "chunk 0 (y=0): DWA sections declare 1099511627776 bytes, more than the 5278 bytes after the chunk's header"),
            new("exr_dwa_dc_section_size_lie", () => MutateDwaHeader("scanline_dwaa_half", 4, 105), "chunk 0 (y=0): DWA sections declare 5285 bytes, but 5278 bytes follow the chunk's header"),
            new("exr_dwa_ac_count_huge", () => MutateDwaHeader("scanline_dwaa_half", 8, 1UL << 40), "chunk 0 (y=0): DWA AC section declares 1099511627776 values in 3999 bytes; 45 blocks hold 0..2835"),
            new("exr_dwa_dc_count_huge", () => MutateDwaHeader("scanline_dwaa_half", 9, 1UL << 62), "chunk 0 (y=0): DWA DC section declares 4611686018427387904 values in 98 bytes; the lossy channels have 45 blocks"),
            new("exr_dwa_rle_raw_size_huge", () => MutateDwaHeader("scanline_dwaa_half", 7, 1UL << 50), "chunk 0 (y=0): DWA RLE section declares 1125899906842624 raw bytes in 1181; its channels hold 1554"),
            new("exr_dwa_rle_coded_size_huge", () => MutateDwaHeader("scanline_dwaa_half", 6, 1UL << 33), "chunk 0 (y=0): DWA RLE section declares 8589934592 run-coded bytes for 1554 raw bytes"),
            new("exr_dwa_unknown_size_huge", () => MutateDwaHeader("tiled_dwab_float_16x16", 1, ulong.MaxValue), "chunk 0 (tile at x=0, y=0): DWA UNKNOWN section declares 18446744073709551615 raw bytes in 797; its channels hold 1024"),
            new("exr_dwa_ac_compression_unknown", () => MutateDwaHeader("scanline_dwaa_half", 10, 2), "chunk 0 (y=0): DWA AC compression 2 is unknown"),
            new("exr_dwa_rule_table_too_long", () => MutateFixture("scanline_dwaa_half", (b, t) => BinaryPrimitives.WriteUInt16LittleEndian(b.AsSpan(DwaData(b, t, "scanline_dwaa_half") + 88), 60000)), "chunk 0 (y=0): DWA rule table declares 60000 bytes"),
            new("exr_dwa_rule_corrupt", () => MutateFixture("scanline_dwaa_half", (b, t) => b[DwaData(b, t, "scanline_dwaa_half") + 88 + 2 + 2] = 0x0c), "chunk 0 (y=0): DWA rule 0 is corrupt"),
            new("exr_dwa_huffman_table_truncated", () => DwaWithAcSectionCut(30), "chunk 0 (y=0): DWA AC section: Huffman code table ends at symbol"),
            new("exr_dwa_ac_values_run_out", () => MutateDwaHeader("scanline_dwaa_half", 8, 2000), "chunk 0 (y=0): DWA AC section: Huffman data decode to more than the 2000 values expected"),
            new("exr_dwa_dc_zlib_corrupt", () => MutateDwaSection("scanline_dwaa_half", 2, 0, 0), "chunk 0 (y=0): DWA DC section: bad zlib stream"),
            new("exr_dwa_rle_zlib_corrupt", () => MutateDwaSection("scanline_dwaa_half", 3, 0, 0), "chunk 0 (y=0): DWA RLE section: bad zlib stream"),
            new("exr_dwa_unknown_zlib_corrupt", () => MutateDwaSection("tiled_dwab_float_16x16", 0, 1, 0xff), "chunk 0 (tile at x=0, y=0): DWA UNKNOWN section: bad zlib stream"),
            new("exr_none_chunk_short", () => Mutate(ValidExr(ExrCompression.None), b => WriteInt(b, Chunk(b, 0) + 4, 10)), "uncompressed it needs 444"),
            new("exr_bad_zlib_stream", () => Mutate(ValidExr(), b =>
            {
                int c0 = Chunk(b, 0);
                for (int i = c0 + 8; i < c0 + 40; i++)
                {
                    b[i] ^= 0xA5;
                }
            }), "chunk 0 (y=0): "),
            new("exr_zlib_not_zlib", () => ReplaceChunk0(ValidExr(), Enumerable.Repeat((byte)0xFF, 500).ToArray()), "chunk 0 (y=0): bad zlib stream"),
            new("exr_zlib_cut_short", () => ReplaceChunk0(ValidExr(), Zlib(new byte[RawChunk0])[..^6]), "chunk 0 (y=0): "),
            new("exr_zlib_too_little", () => ReplaceChunk0(ValidExr(), Zlib(new byte[RawChunk0 - 100])), "zlib data ends after 7004 of 7104 bytes"),
            new("exr_zlib_bomb", () => ReplaceChunk0(ValidExr(), Zlib(new byte[5_000_000])), "inflates to more than the 7104 bytes"),

            // PNG: header
            new("png_signature_only", () => ValidPng()[..8], "truncated: 8 bytes is too short for a PNG file"),
            new("png_short_header", () => ValidPng()[..20], "truncated: 20 bytes is too short for a PNG file"),
            new("png_missing_ihdr", () => Mutate(ValidPng(), b => b[12] = (byte)'X'), "does not start with a 13-byte IHDR chunk"),
            new("png_ihdr_wrong_length", () => Mutate(ValidPng(), b => b[11] = 14), "does not start with a 13-byte IHDR chunk"),
            new("png_bad_crc_ihdr", () => Mutate(ValidPng(), b => b[29] ^= 0x01), "chunk 'IHDR' at byte 8 has a bad CRC"),
            new("png_zero_width", () => PngWithIhdr(0, 4), "PNG size 0x4 is out of range"),
            new("png_negative_height", () => PngWithIhdr(5, 0x80000000), "PNG size 5x2147483648 is out of range"),
            new("png_huge_dimensions", () => PngWithIhdr(int.MaxValue, int.MaxValue), "above the memory budget"),
            new("png_lying_dimensions", () => PngWithIhdr(8000, 8000), "cannot hold the 8000x8000 pixels"),
            new("png_huge_declared_tiny_file", () => PngWithIhdr(9000, 9000, depth: 16, colourType: 0), "cannot hold the 9000x9000 pixels"),
            new("png_huge_declared_padded_file", () => PngBytes.File(PngBytes.Ihdr(2000, 2000, 16, 2), Text(40_000), PngBytes.Chunk("IDAT", Zlib(new byte[20])), PngBytes.Chunk("IEND")),
                "bytes of image data (IDAT) cannot hold the 2000x2000 pixels"),
            new("png_bad_bit_depth", () => PngWithIhdr(5, 4, depth: 3), "bit depth 3 is invalid for colour type 2"),
            new("png_bad_colour_type", () => PngWithIhdr(5, 4, colourType: 5), "colour type 5 does not exist"),
            new("png_bad_colour_type_1", () => PngWithIhdr(5, 4, colourType: 1), "colour type 1 does not exist"),
            new("png_palette_16_bit", () => PngBytes.Image(4, 4, 16, 3, new byte[4 * 9]), "bit depth 16 is invalid for colour type 3"),
            new("png_rgb_4_bit", () => PngBytes.Image(4, 4, 4, 2, new byte[4 * 7]), "bit depth 4 is invalid for colour type 2"),
            new("png_grey_alpha_1_bit", () => PngBytes.Image(4, 4, 1, 4, new byte[4 * 2]), "bit depth 1 is invalid for colour type 4"),
            new("png_rgba_2_bit", () => PngBytes.Image(4, 4, 2, 6, new byte[4 * 5]), "bit depth 2 is invalid for colour type 6"),
            new("png_grey_3_bit", () => PngBytes.Image(4, 4, 3, 0, new byte[4 * 3]), "bit depth 3 is invalid for colour type 0"),
            new("png_compression_method_1", () => PngWithIhdr(5, 4, compression: 1), "compression method 1 is not defined"),
            new("png_interlace_method_2", () => GreyPng(Grey4x4(), interlace: 2), "interlace method 2 is not defined"),

            // PNG: chunk layout
            new("png_bad_crc_idat", () => Mutate(ValidPng(), b => b[PngBytes.Find(b, "IDAT") + 10] ^= 0x5A), "has a bad CRC (stored"),
            new("png_bad_crc_iend", () => Mutate(ValidPng(), b => b[^1] ^= 0x01), "has a bad CRC (stored 0xAE426083, computed 0xAE426082)"),
            new("png_chunk_length_above_2_31", () => Mutate(ValidPng(), b => BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(PngBytes.Find(b, "IDAT")), 0x80000000)),
                "declares 2147483648 bytes, above the PNG limit of 2^31-1"),
            new("png_chunk_longer_than_file", () => Mutate(ValidPng(), b => BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(PngBytes.Find(b, "IDAT")), 100_000)),
                "declares 100000 bytes but the file ends"),
            new("png_truncated_idat", () => { byte[] b = ValidPng(); return b[..(PngBytes.Find(b, "IDAT") + 8 + 5)]; }, "truncated: chunk 'IDAT' at byte"),
            new("png_truncated_image_data", () => ValidPng()[..50], "truncated"),
            new("png_missing_iend", () => ValidPng()[..^12], "truncated: the file ends before the IEND chunk"),
            new("png_missing_idat", () => PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), Text(10), PngBytes.Chunk("IEND")), "no IDAT chunk"),
            new("png_idat_not_contiguous", () =>
            {
                byte[] z = Zlib(Grey4x4());
                return PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), PngBytes.Chunk("IDAT", z[..4]), Text(3), PngBytes.Chunk("IDAT", z[4..]), PngBytes.Chunk("IEND"));
            }, "is not contiguous with the earlier IDAT chunks"),
            new("png_unknown_critical_chunk", () => GreyPng(Grey4x4(), before: PngBytes.Chunk("ABCD", 1, 2, 3)), "not supported: unknown critical chunk 'ABCD'"),
            new("png_invalid_chunk_type", () => GreyPng(Grey4x4(), before: PngBytes.Chunk("ID@T", 1)), "has an invalid type (bytes 49444054)"),
            new("png_second_ihdr", () => GreyPng(Grey4x4(), before: PngBytes.Ihdr(4, 4, 8, 0)), "a second 'IHDR' chunk"),
            new("png_iend_not_empty", () => PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), PngBytes.Chunk("IDAT", Zlib(Grey4x4())), PngBytes.Chunk("IEND", 1, 2, 3, 4)),
                "declares 4 bytes; it must be empty"),

            // PNG: image data
            new("png_corrupt_zlib_stream", () => PngWithChunk("IDAT", (b, at) =>
            {
                for (int i = at + 10; i < at + 30; i++)
                {
                    b[i] ^= 0x5A;
                }
            }), "image data (IDAT): "),
            new("png_zlib_not_zlib", () => PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), PngBytes.Chunk("IDAT", Enumerable.Repeat((byte)0xFF, 50).ToArray()), PngBytes.Chunk("IEND")),
                "image data (IDAT): bad zlib stream"),
            new("png_zero_length_idat", () => PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), PngBytes.Chunk("IDAT"), PngBytes.Chunk("IEND")),
                "the IDAT chunks hold no data"),
            new("png_inflates_to_too_much", () => GreyPng(new byte[21]), "image data (IDAT): zlib data inflates to more than the 20 bytes expected"),
            new("png_inflates_to_too_little", () => GreyPng(new byte[19]), "image data (IDAT): zlib data ends after 19 of 20 bytes"),
            new("png_zlib_bomb", () => GreyPng(new byte[5_000_000]), "inflates to more than the 20 bytes expected"),
            new("png_filter_type_5", () => GreyPng(Grey4x4(filterRow: 2, filterType: 5)), "row 2 has filter type 5; only 0-4 exist"),

            // PNG Adam7 on tiny images, where most passes are empty and have no rows, not even a filter byte:
            // 1x1 has one 2-byte row (pass 1); 2x3 has rows in passes 1, 5, 6 (two) and 7 = 2+2+4+3 = 11 bytes.
            new("png_adam7_1x1_rows_for_empty_passes", () => GreyPng(new byte[7 * 2], interlace: 1, width: 1, height: 1), "inflates to more than the 2 bytes expected"),
            new("png_adam7_2x3_given_plain_rows", () => GreyPng(new byte[3 * 3], interlace: 1, width: 2, height: 3), "zlib data ends after 9 of 11 bytes"),
            new("png_adam7_filter_type_9", () => GreyPng([9, 0, 0, 0, 0, 0, 0, 0, 0, 0, 0], interlace: 1, width: 2, height: 3), "row 0 of Adam7 pass 1 has filter type 9"),

            // PNG: palette and transparency
            new("png_palette_index_out_of_range", () => PngBytes.Image(4, 2, 8, 3, [0, 0, 1, 0, 1, 0, 0, 1, 5, 0], before: PngBytes.Chunk("PLTE", 10, 20, 30, 40, 50, 60)),
                "palette index 5 at pixel (2,1) is out of range: PLTE has 2 entries"),
            new("png_palette_1_bit_index_out_of_range", () => PngBytes.Image(3, 1, 1, 3, [0, 0b0010_0000], before: PngBytes.Chunk("PLTE", 10, 20, 30)),
                "palette index 1 at pixel (2,0) is out of range: PLTE has 1 entries"),
            new("png_palette_missing", () => PngBytes.Image(4, 2, 8, 3, new byte[10]), "has no PLTE chunk"),
            new("png_palette_too_long_for_depth", () => PngBytes.Image(3, 1, 1, 3, [0, 0], before: PngBytes.Chunk("PLTE", new byte[9])), "it must hold 1 to 2 RGB entries"),
            new("png_palette_in_grey", () => GreyPng(Grey4x4(), before: PngBytes.Chunk("PLTE", 1, 2, 3)), "in a grey image (colour type 0)"),
            new("png_trns_in_rgba", () => PngBytes.Image(1, 1, 8, 6, new byte[5], before: PngBytes.Chunk("tRNS", 0, 1)), "with an alpha channel (colour type 6)"),
            new("png_trns_grey_wrong_length", () => GreyPng(Grey4x4(), before: PngBytes.Chunk("tRNS", 0, 1, 2)), "tRNS chunk at byte 33 holds 3 bytes; colour type 0 needs 2 bytes"),

            // PNG: colour chunks
            new("png_cicp_pq", () => GreyPng(Grey4x4(), before: Cicp(9, 16, 0, 1)), "not supported: cICP transfer characteristics 16 (SMPTE ST 2084, PQ)"),
            new("png_cicp_hlg", () => GreyPng(Grey4x4(), before: Cicp(9, 18, 0, 1)), "not supported: cICP transfer characteristics 18 (ARIB STD-B67, HLG)"),
            new("png_cicp_narrow_range", () => GreyPng(Grey4x4(), before: Cicp(1, 13, 0, 0)), "not supported: cICP narrow-range"),
            new("png_cicp_matrix_not_rgb", () => GreyPng(Grey4x4(), before: Cicp(1, 13, 1, 1)), "cICP matrix coefficients 1"),
            new("png_cicp_wrong_length", () => GreyPng(Grey4x4(), before: PngBytes.Chunk("cICP", 1, 13, 0)), "cICP chunk at byte 33 holds 3 bytes; it must hold 4"),
            new("png_gama_zero", () => GreyPng(Grey4x4(), before: PngBytes.Chunk("gAMA", 0, 0, 0, 0)), "holds gamma 0"),
            new("png_gama_after_idat", () => PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), PngBytes.Chunk("IDAT", Zlib(Grey4x4())), PngBytes.Chunk("gAMA", 0, 0, 0xB1, 0x8F), PngBytes.Chunk("IEND")),
                "comes after the image data; it must precede the first IDAT"),
            new("png_two_srgb_chunks", () => GreyPng(Grey4x4(), before: [PngBytes.Chunk("sRGB", 0), PngBytes.Chunk("sRGB", 0)]), "a second 'sRGB' chunk"),
            // Issue 14: the IDAT data must inflate to exactly the size IHDR implies (PNG specification, "IDAT" and "Filtering").
            new("png_ihdr_48x32_over_96x64_data", () => PngBytes.Image(48, 32, 8, 2, new byte[64 * (1 + (96 * 3))]), "inflates to more than the 4640 bytes expected"),
            new("png_ihdr_96x64_over_48x32_data", () => PngBytes.Image(96, 64, 8, 2, new byte[32 * (1 + (48 * 3))]), "zlib data ends after 4640 of 18496 bytes"),
            // Chunk ordering (PNG specification, Third Edition, "Chunk ordering").
            new("png_gama_after_plte", () => PngBytes.Image(2, 1, 8, 3, [0, 0, 0], before: [PngBytes.Chunk("PLTE", 1, 2, 3), PngBytes.Chunk("gAMA", 0, 0, 0xB1, 0x8F)]), "chunk 'gAMA' at byte 48 comes after PLTE; it must precede the palette"),
            new("png_srgb_after_plte", () => PngBytes.Image(2, 1, 8, 3, [0, 0, 0], before: [PngBytes.Chunk("PLTE", 1, 2, 3), PngBytes.Chunk("sRGB", 0)]), "chunk 'sRGB' at byte 48 comes after PLTE"),
            new("png_hist_before_plte", () => PngBytes.Image(2, 1, 8, 3, [0, 0, 0], before: [PngBytes.Chunk("hIST", 0, 1), PngBytes.Chunk("PLTE", 1, 2, 3)]), "chunk 'hIST' at byte 33 comes before PLTE"),
            new("png_phys_after_idat", () => PngBytes.File(PngBytes.Ihdr(4, 4, 8, 0), PngBytes.Chunk("IDAT", Zlib(Grey4x4())), PngBytes.Chunk("pHYs", new byte[9]), PngBytes.Chunk("IEND")),
                "chunk 'pHYs' at byte"),
            new("png_iend_absurd_length", () => Mutate(ValidPng(), b => BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(b.Length - 12), 0x7FFFFFF0)),
                "truncated: chunk 'IEND' at byte"),
        ];
    }
}
