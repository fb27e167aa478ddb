namespace PathBench.Imaging.Tests;

/// <summary>
/// Small PNGs checked in under Fixtures/png with the decode Pillow (python3-pil 9.4) gave when
/// tools/imaging/png_reference.py --fixtures wrote them (numpy's integers for 16-bit colour, which
/// Pillow truncates): the reader is tested against them with no Python installed.
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

    [Theory]
    [MemberData(nameof(Names))]
    public void Fixture_reads_as_its_recorded_decode(string name) =>
        PngReference.AssertSameAsOurs(Path.Combine(Folder, name + ".png"), PngReference.Load(Path.Combine(Folder, name + ".txt")), name);
}
