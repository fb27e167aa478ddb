using System.Buffers.Binary;
using System.IO.Compression;
using System.Text;

namespace PathBench.Imaging.Tests;

/// <summary>
/// A corpus of malformed PFM, OpenEXR and PNG files, made by mutating valid files in code
/// (invented data). Each must give an <see cref="ImageFileException"/> whose message is one
/// line starting with the file name — no other exception, no hang, and no managed allocation
/// beyond a small bound however large the header's claims.
/// </summary>
public sealed class MalformedFileTests
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

    private static byte[] Zlib(byte[] data)
    {
        var s = new MemoryStream();
        using (var z = new ZLibStream(s, CompressionLevel.Optimal, leaveOpen: true))
        {
            z.Write(data);
        }

        return s.ToArray();
    }

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

    // ---- PNG helpers: IHDR fields at fixed offsets after the 8-byte signature -----------------

    private static byte[] PngWithIhdr(uint width, uint height, byte depth = 8, byte colourType = 2) => Mutate(ValidPng(), b =>
    {
        BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(16), width);
        BinaryPrimitives.WriteUInt32BigEndian(b.AsSpan(20), height);
        b[24] = depth;
        b[25] = colourType;
    });

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
            new("pfm_huge_size", () => Ascii("PF\n100000 100000\n-1.0\n", 64), "above the limit"),
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
            }), "above the limit"),
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

            // PNG
            new("png_signature_only", () => ValidPng()[..8], "truncated: 8 bytes is too short for a PNG file"),
            new("png_short_header", () => ValidPng()[..20], "truncated: 20 bytes is too short for a PNG file"),
            new("png_missing_ihdr", () => Mutate(ValidPng(), b => b[12] = (byte)'X'), "does not start with a 13-byte IHDR chunk"),
            new("png_ihdr_wrong_length", () => Mutate(ValidPng(), b => b[11] = 14), "does not start with a 13-byte IHDR chunk"),
            new("png_zero_width", () => PngWithIhdr(0, 4), "PNG size 0x4 is out of range"),
            new("png_negative_height", () => PngWithIhdr(5, 0x80000000), "is out of range"),
            new("png_huge_dimensions", () => PngWithIhdr(int.MaxValue, int.MaxValue), "above the limit"),
            new("png_lying_dimensions", () => PngWithIhdr(8000, 8000), "cannot hold the 8000x8000 pixels"),
            new("png_bad_bit_depth", () => PngWithIhdr(5, 4, depth: 3), "bit depth 3 is invalid for colour type 2"),
            new("png_bad_colour_type", () => PngWithIhdr(5, 4, colourType: 5), "colour type 5 does not exist"),
            new("png_truncated_image_data", () => ValidPng()[..50], "PNG"),
            new("png_corrupt_image_data", () => Mutate(ValidPng(), b =>
            {
                int idat = ExrTests.IndexOf(b, "IDAT"u8);
                for (int i = idat + 6; i < Math.Min(idat + 30, b.Length - 16); i++)
                {
                    b[i] ^= 0x5A;
                }
            }), "PNG"),
        ];
    }
}
