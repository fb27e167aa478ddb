namespace PathBench.Imaging.Tests.OpenExr;

/// <summary>
/// Small files written by OpenImageIO (python3-openimageio over the OpenEXR library), checked in with
/// OpenImageIO's decode recorded beside each (tools/imaging/make_exr_fixtures.py): the reader is
/// tested against them with no reference tool installed, and the live test re-decodes every fixture
/// so that a recorded decode cannot drift from the library's.
/// </summary>
public sealed class ExrFixtureTests
{
    private static string Folder => Path.Combine(AppContext.BaseDirectory, "Fixtures", "exr");

    private static string[] Files => [.. Directory.GetFiles(Folder, "*.exr").Select(f => Path.GetFileNameWithoutExtension(f)).Order(StringComparer.Ordinal)];

    public static TheoryData<string> Names => new(Files);

    [Fact]
    public void Every_fixture_of_the_generator_script_is_here()
    {
        // The names tools/imaging/make_exr_fixtures.py writes.
        string[] expected =
        [
            "layers_zip_half", "scanline_b44_half", "scanline_none_half", "scanline_piz_half", "tiled_b44a_half_8x8", "tiled_piz_float_32x16", "scanline_pxr24_float", "scanline_pxr24_half", "scanline_rle_half",
            "scanline_zip_half", "scanline_zips_float", "tiled_rle_float_8x4", "tiled_zip_half_8x8", "two_parts_zip_half",
            "uint_zip", "window_zip_float", "scanline_dwaa_half", "tiled_dwab_float_16x16", "scanline_dwab_coarse_half",
        ];
        Assert.Subset(Files.ToHashSet(), expected.ToHashSet());
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void Fixture_reads_as_its_recorded_OpenImageIO_decode(string name)
    {
        string path = Path.Combine(Folder, name + ".exr");
        OiioReference.Decoded recorded = OiioReference.Load(Path.Combine(Folder, name));
        OiioReference.AssertSame(recorded, ExrCodec.Read(path), name, ["R", "G", "B"]);
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void Recorded_decode_is_still_what_OpenImageIO_decodes(string name)
    {
        using var dir = new TempFolder();
        string copy = dir.File(name + ".exr");
        File.Copy(Path.Combine(Folder, name + ".exr"), copy);
        OiioReference.Decoded live = OiioReference.Decode(copy);
        OiioReference.Decoded recorded = OiioReference.Load(Path.Combine(Folder, name));
        Assert.Equal(recorded.Info.Channels, live.Info.Channels);
        Assert.Equal(recorded.Info.Full, live.Info.Full);
        Assert.Equal((recorded.Info.X, recorded.Info.Y, recorded.Info.Width, recorded.Info.Height), (live.Info.X, live.Info.Y, live.Info.Width, live.Info.Height));
        Assert.Equal(recorded.Bits, live.Bits);
    }
}
