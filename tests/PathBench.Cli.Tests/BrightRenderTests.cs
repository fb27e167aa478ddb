using System.Text.Json;
using PathBench.Imaging;
using PathBench.Rendering;
using PathBench.Rendering.Accumulation;
using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests;

/// <summary>
/// Renders far brighter than the film's fixed-point range come out right through the command,
/// shards and merge, and dropped (non-finite) samples are announced on standard output.
/// </summary>
public sealed class BrightRenderTests
{
    /// <summary>
    /// A camera inside a closed two-sided emitter of albedo 0: every pixel is the emission Le
    /// (L = Le with nothing reflected; common practice). The emission goes in as {0}.
    /// </summary>
    private const string Furnace = """
        camera: {{ position: [0, 0, 0], look_at: [0, 0, -1], fov: 60, resolution: [8, 6] }}
        render: {{ spp: 8, max_depth: {1} }}
        materials:
          shell: {{ type: diffuse, albedo: [{2}, {2}, {2}], emission: [{0}, {0}, {0}], two_sided: true }}
        shapes:
          - {{ type: sphere, center: [0, 0, 0], radius: 1, material: shell }}
        """;

    private static string FurnaceScene(string emission) =>
        string.Format(System.Globalization.CultureInfo.InvariantCulture, Furnace, emission, 1, 0);

    [Theory]
    [InlineData("4e9")]
    [InlineData("4.3e9")]
    [InlineData("1e30")]
    public void An_emitter_brighter_than_two_to_the_32_renders_as_itself_in_one_render_and_in_merged_shards(string emission)
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("furnace.yaml"), FurnaceScene(emission));
        (int code, string output, string err) = Run("render", dir.File("furnace.yaml"), "--out", dir.File("whole.pfm"), "--threads", "2");
        Assert.True(code == 0, err);
        Assert.DoesNotContain("warning", output, StringComparison.Ordinal);
        float expected = float.Parse(emission, System.Globalization.CultureInfo.InvariantCulture);
        Assert.All(ImageFile.Read(dir.File("whole.pfm")).Image.Data, v => Assert.Equal(expected, v));

        foreach (int shard in new[] { 0, 1 })
        {
            (code, _, err) = Run("render", dir.File("furnace.yaml"), "--shard", $"{shard}/2", "--out", dir.File($"part{shard}.pfm"), "--threads", "1");
            Assert.True(code == 0, err);
        }

        (code, _, err) = Run("merge", dir.File("part1.accum"), dir.File("part0.accum"), "--out", dir.File("merged.pfm"));
        Assert.True(code == 0, err);
        Assert.Equal(File.ReadAllBytes(dir.File("whole.pfm")), File.ReadAllBytes(dir.File("merged.pfm")));
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("merged.json")));
        Assert.Equal(expected >= 4294967296.0 ? 48 : 0, doc.RootElement.GetProperty("wide_pixels").GetInt32());
    }

    /// <summary>
    /// The wide sums of a bright film are held to what the memory budget leaves after the render's
    /// estimate (common practice: our own rule, README). 64² pixels at 1e30: the estimate is
    /// 4096 · (116 + 180) bytes, 1.16 MiB; each pixel's wide sums take 248 bytes (3 channels of 3 + 5
    /// words, and the object) and the table 8 a pixel, 0.99 MiB in all: above what 2 MiB leaves, within
    /// what 3 MiB leaves.
    /// </summary>
    [Fact]
    public void Wide_sums_beyond_what_the_budget_leaves_stop_the_render_with_one_line()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("furnace.yaml"), FurnaceScene("1e30").Replace("resolution: [8, 6]", "resolution: [64, 64]", StringComparison.Ordinal));
        (int code, _, string err) = Run("--max-memory", "2M", "render", dir.File("furnace.yaml"), "--spp", "2", "--out", dir.File("hot.pfm"));
        Assert.Equal(2, code);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.Contains("the exact sums of the", err, StringComparison.Ordinal);
        Assert.Contains("at most 1312 bytes a pixel", err, StringComparison.Ordinal);
        Assert.Contains("--max-memory", err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("hot.pfm")));

        (code, _, err) = Run("--max-memory", "3M", "render", dir.File("furnace.yaml"), "--spp", "2", "--out", dir.File("hot.pfm"));
        Assert.True(code == 0, err);
        Assert.All(ImageFile.Read(dir.File("hot.pfm")).Image.Data, v => Assert.Equal(1e30f, v));
    }

    /// <summary>
    /// 1e39 is above the largest binary32 value, (2 − 2^-23)·2^127 ≈ 3.4028e38 (IEEE 754-2019, table
    /// 3.2): the PFM holds it as infinite, and the render says so on standard output.
    /// </summary>
    [Fact]
    public void Pixel_means_above_the_float_range_are_written_as_infinite_with_a_warning()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("furnace.yaml"), FurnaceScene("1e39"));
        (int code, string output, string err) = Run("render", dir.File("furnace.yaml"), "--out", dir.File("hot.pfm"));
        Assert.True(code == 0, err);
        Assert.All(ImageFile.Read(dir.File("hot.pfm")).Image.Data, v => Assert.True(float.IsPositiveInfinity(v)));
        Assert.Contains("144 channel values average above the float range", output, StringComparison.Ordinal);
    }

    /// <summary>
    /// A scene cannot ask for a NaN (the loader refuses non-finite and absurd numbers), so the parts
    /// are made in code: an emitter whose red emission is NaN makes every sample non-finite (IEEE 754:
    /// NaN propagates through arithmetic). Merging them must say so on standard output.
    /// </summary>
    [Fact]
    public void Dropped_non_finite_samples_are_announced_on_standard_output()
    {
        using var dir = new TempFolder();
        Scene scene = Scene.Build(
            [Primitive.Sphere(new(0, 0, 0), 1, 0)],
            [Material.Diffuse("shell", Rgb.Black, new Rgb(double.NaN, 1, 1), twoSided: true)],
            [],
            new Camera(new(0, 0, 0), new(0, 0, -1), new(0, 1, 0), 60, 8, 6),
            Rgb.Black);
        var options = new PathTracerOptions(HemisphereStrategy.Cosine, LightStrategy.Bsdf, 1, false);
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 4, 1), DimensionLayout.Total(1));
        Film film = Renderer.Render(new RenderJob(scene, sampler, options, 0, 4, 1)).Film;
        var identity = new RenderIdentity("test-version", new string('c', 64), [new("planned_spp", "4")], 8, 6);
        AccumulationFile.Write(dir.File("nan.accum"), new Accumulation(identity, [new SampleRange(0, 4)], film));

        (int code, string output, string err) = Run("merge", dir.File("nan.accum"), "--out", dir.File("nan.pfm"));
        Assert.True(code == 0, err);
        // 8 × 6 pixels × 4 samples, every one non-finite.
        Assert.Contains($"pathbench: warning: {dir.File("nan.pfm")}: 192 non-finite samples (NaN or infinite) were dropped", output, StringComparison.Ordinal);
    }
}
