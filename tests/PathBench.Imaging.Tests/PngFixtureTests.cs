namespace PathBench.Imaging.Tests;

/// <summary>
/// Small PNGs checked in under Fixtures/png with the decode Pillow (python3-pil 9.4) gave when
/// tools/imaging/png_reference.py --fixtures wrote them (numpy's integers for 16-bit colour, which
/// Pillow truncates): the reader is tested against them with no Python installed, and one live
/// test re-runs the script so that a record cannot drift from Pillow's decode.
/// </summary>
public sealed class PngFixtureTests
{
    private static string Folder => Path.Combine(AppContext.BaseDirectory, "Fixtures", "png");

    private static string[] Files => [.. Directory.GetFiles(Folder, "*.png").Select(f => Path.GetFileNameWithoutExtension(f)).Order(StringComparer.Ordinal)];

    public static TheoryData<string> Names => new(Files);

    [Fact]
    public void Every_fixture_of_the_generator_script_is_here()
    {
        // The names fixture_cases() in tools/imaging/png_reference.py writes.
        string[] expected =
        [
            "grey16_plain_gama45455", "grey1_plain", "grey4_adam7", "greyalpha16_plain", "palette2_adam7_trns", "palette8_plain",
            "rgb16_adam7", "rgb16_plain_cicp_linear", "rgb8_adam7_2x3", "rgba8_plain_srgb",
        ];
        Assert.Equal(expected, Files);
    }

    [Fact]
    public void Recorded_decodes_are_still_what_the_script_and_Pillow_give()
    {
        // The script re-derives each record from Pillow's decode of the file it writes (and stops if
        // Pillow disagrees with the integers written); the records must not drift from that.
        using var dir = new TempFolder();
        ReferenceTools.Result r = ExternalTool.RunPillowScript("png_reference.py", "--fixtures", dir.Path);
        Assert.EndsWith($"done {Files.Length}", r.Stdout.TrimEnd(), StringComparison.Ordinal);
        foreach (string name in Files)
        {
            Assert.Equal(File.ReadAllText(Path.Combine(Folder, name + ".txt")), File.ReadAllText(dir.File(name + ".txt")));
        }
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void Fixture_reads_as_its_recorded_decode(string name) =>
        PngReference.AssertSameAsOurs(Path.Combine(Folder, name + ".png"), PngReference.Load(Path.Combine(Folder, name + ".txt")), name);
}
