namespace PathBench.Cli.Tests;

public sealed class BenchCommandTests
{
    [Theory]
    [InlineData("--scene", "nowhere-room", "unknown benchmark scene 'nowhere-room'")]
    [InlineData("--threads", "0", "--threads")]
    [InlineData("--share-of", "halton/owen", "--share-of: no generator/randomization 'halton/owen'")]
    [InlineData("--share-of", "nowhere", "--share-of: no generator/randomization 'nowhere'")]
    [InlineData("--sphere-slices", "2", "--sphere-slices must be at least 4, got 2")]
    [InlineData("--sphere-slices", "7", "--sphere-slices: must be even")]
    [InlineData("--sphere-slices", "4096", "--sphere-slices must be at most 2048")]
    [InlineData("--sphere-slices", "x", "--sphere-slices")]
    public void Bad_options_are_one_line_errors_with_exit_code_2(string option, string value, string expected)
    {
        (int code, string output, string err) = CliRunner.Run("bench", option, value);
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Contains(expected, err, StringComparison.Ordinal);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
    }

    [Fact]
    public void Sphere_slices_on_the_furnished_room_are_refused()
    {
        (int code, string output, string err) = CliRunner.Run("bench", "--scene", "furnished-room", "--sphere-slices", "8");
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Contains("--sphere-slices: the furnished-room scene has no tessellated spheres", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("512", "64M", "(16711680 triangles, about 1700 bytes each", "--max-memory 27G would do")]
    [InlineData("8", "64M", "(3072 triangles, about 1700 bytes each", "--max-memory 261M would do")]
    public void A_benchmark_above_the_memory_budget_is_refused_before_the_scene_is_made(string slices, string budget, string what, string raise)
    {
        // 64 spheres × 512 slices × 510 cells' triangles = 16 711 680; at 1 700 bytes each plus the 256 MiB
        // base that is 26.7 GiB, and the suggestion rounds up to a whole GiB (261 MiB at 8 slices, to a whole MiB). The refusal comes before any allocation,
        // so this test costs nothing.
        (int code, string output, string err) = CliRunner.Run("--max-memory", budget, "bench", "--scene", "tessellated-room", "--sphere-slices", slices);
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Contains(what, err, StringComparison.Ordinal);
        Assert.Contains(raise, err, StringComparison.Ordinal);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
    }
}
