using System.Text.Json;

namespace PathBench.Cli.Tests;

/// <summary>The <c>reference</c>, <c>study</c> and <c>demo</c> commands: outputs, field names and bad input.</summary>
public sealed class StudyCommandTests
{
    private const string Scene = TestScenes.LampAndBall;

    private const string Study = """
        scene: s.yaml
        reference: { spp: 64 }
        spp: [2, 4]
        replicates: 3
        configurations:
          - { name: rnd, generator: random }
          - { name: owen, generator: sobol, randomize: owen }
          - { name: plain-halton, generator: halton, randomize: none }
        """;

    private static (int Code, string Out, string Err) Run(params string[] args) => CliRunner.Run(args);

    [Fact]
    public void Study_writes_the_summary_in_its_stated_shape_and_the_table()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        dir.Write("study.yaml", Study);
        (int code, string output, string err) = Run("study", dir.File("study.yaml"), "--out", dir.File("out"), "--threads", "2", "--quiet");
        Assert.True(code == 0, err);
        Assert.Contains("rnd", output, StringComparison.Ordinal);
        Assert.Contains("equal time", output, StringComparison.Ordinal);
        // Two rungs give a slope but no interval (no residual degrees of freedom): said, not printed as ±Infinity.
        Assert.DoesNotContain("Infinity", output, StringComparison.Ordinal);
        Assert.Contains("[no CI from 2 spp]", output, StringComparison.Ordinal);

        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json")));
        JsonElement root = doc.RootElement;
        Assert.Equal(64, root.GetProperty("reference").GetProperty("spp").GetInt32());
        Assert.True(root.GetProperty("reference").GetProperty("mean_variance").GetDouble() > 0);
        JsonElement[] configs = [.. root.GetProperty("configurations").EnumerateArray()];
        Assert.Equal(["rnd", "owen", "plain-halton"], configs.Select(c => c.GetProperty("name").GetString()));
        foreach (string field in new[] { "generator", "randomize", "hemisphere", "lights", "slope", "slope_ci", "structure_score", "win_fraction", "points" })
        {
            Assert.True(configs[0].TryGetProperty(field, out _), field);
        }

        JsonElement point = configs[0].GetProperty("points")[1];
        foreach (string field in new[] { "spp", "mse", "mse_ci", "mse_uncorrected", "relmse", "bias", "bias_z", "seconds_per_sample", "efficiency" })
        {
            Assert.True(point.TryGetProperty(field, out _), field);
        }

        // A deterministic configuration is rendered once and reported without intervals.
        JsonElement halton = configs[2];
        Assert.False(halton.GetProperty("randomized").GetBoolean());
        Assert.Equal(JsonValueKind.Null, halton.GetProperty("points")[0].GetProperty("mse_ci").ValueKind);
        Assert.Contains(halton.GetProperty("notes").EnumerateArray(), n => n.GetString()!.Contains("deterministic", StringComparison.Ordinal));

        string[] csv = File.ReadAllLines(dir.File("out/results.csv"));
        // 3 replicates × 2 spp for each randomized configuration, one render per spp for the deterministic one.
        Assert.Equal(1 + (2 * 3 * 2) + 2, csv.Length);
        Assert.StartsWith("configuration,generator,randomize,hemisphere,lights,spp,replicate,seed,seconds", csv[0], StringComparison.Ordinal);
    }

    [Fact]
    public void Reference_writes_the_variance_file_and_refuses_a_deterministic_sampler()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        (int code, _, string err) = Run("reference", dir.File("s.yaml"), "--spp", "16", "--out", dir.File("ref.exr"), "--threads", "2");
        Assert.True(code == 0, err);
        Assert.True(File.Exists(dir.File("ref.variance.exr")));
        using (JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("ref.json"))))
        {
            Assert.Equal(16, doc.RootElement.GetProperty("spp").GetInt32());
            Assert.True(doc.RootElement.GetProperty("mean_variance").GetDouble() > 0);
        }

        (code, _, err) = Run("reference", dir.File("s.yaml"), "--spp", "16", "--generator", "sobol", "--randomize", "none", "--out", dir.File("det.exr"));
        Assert.Equal(2, code);
        Assert.Contains("unbiased", err, StringComparison.Ordinal);
        (code, _, err) = Run("reference", dir.File("s.yaml"), "--out", dir.File("ref.png"));
        Assert.Equal(2, code);
        Assert.Contains(".exr", err, StringComparison.Ordinal);
    }

    [Fact]
    public void A_reference_file_of_another_size_or_scene_is_refused_with_its_position()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        dir.Write("other.yaml", Scene.Replace("[24, 16]", "[20, 16]", StringComparison.Ordinal));
        Assert.Equal(0, Run("reference", dir.File("other.yaml"), "--spp", "4", "--out", dir.File("other.exr"), "--threads", "2").Code);
        dir.Write("study.yaml", "scene: s.yaml\nreference: { path: other.exr }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random }\n");
        (int code, _, string err) = Run("study", dir.File("study.yaml"), "--out", dir.File("out"), "--quiet");
        Assert.Equal(2, code);
        Assert.Contains("study.yaml:2:20:", err, StringComparison.Ordinal);
        Assert.Contains("is 20x16, the study renders 24x16", err, StringComparison.Ordinal);
        Assert.False(Directory.Exists(dir.File("out")));

        // Same size, but its sidecar names another scene file's hash.
        dir.Write("study2.yaml", "scene: s.yaml\nresolution: [20, 16]\nreference: { path: other.exr }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random }\n");
        (code, _, err) = Run("study", dir.File("study2.yaml"), "--out", dir.File("out2"), "--quiet");
        Assert.Equal(2, code);
        Assert.Contains("rendered from another scene", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("scene: s.yaml\nreference: { spp: 4 }\nspp: [2]\nreplicates: 2\ncolour: red\nconfigurations:\n  - { name: a, generator: random }\n", "study.yaml:5:1:", "colour")]
    [InlineData("scene: s.yaml\nreference: { spp: 4 }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random }\n  - { name: a, generator: sobol }\n", "study.yaml:7:13:", "duplicate configuration name 'a'")]
    [InlineData("scene: s.yaml\nreference: { spp: 4 }\nspp: [4, 2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random }\n", "study.yaml:3:10:", "must increase")]
    [InlineData("scene: s.yaml\nreference: { spp: 4 }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random, randomize: owen }\n", "study.yaml:6:46:", "owen")]
    [InlineData("scene: s.yaml\nreference: { spp: 4, path: r.exr }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random }\n", "study.yaml:2:12:", "exactly one of")]
    [InlineData("scene: s.yaml\nreference: { spp: 4 }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random, lights: sun }\n", "study.yaml:6:43:", "bsdf, nee or mis")]
    [InlineData("scene: s.yaml\nreference: { spp: 4 }\nspp: [2, 32768]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: pmj02 }\n", "study.yaml:6:27:", "'pmj02' defines at most 16384 points per pixel, the study asks for 32768 spp")]
    [InlineData("scene: s.yaml\nreference: { spp: 20000, generator: lattice }\nspp: [2]\nreplicates: 2\nconfigurations:\n  - { name: a, generator: random }\n", "study.yaml:2:37:", "'lattice' defines at most 16384 points")]
    public void Bad_study_files_name_file_line_and_column(string text, string position, string what)
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        dir.Write("study.yaml", text);
        (int code, string output, string err) = Run("study", dir.File("study.yaml"), "--out", dir.File("out"), "--quiet");
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Contains(position, err, StringComparison.Ordinal);
        Assert.Contains(what, err, StringComparison.Ordinal);
        Assert.False(Directory.Exists(dir.File("out")));
    }

    [Fact]
    public void A_study_too_large_for_memory_is_refused_before_anything_is_rendered()
    {
        // 8192² pixels × (3 values × (20 bytes × 2 configurations × 3 spp + 4 bytes × 2 × 8 replicates) + 352) ≈ 56.5 GiB.
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        dir.Write("study.yaml", "scene: s.yaml\nresolution: [8192, 8192]\nreference: { spp: 4 }\nspp: [1, 2, 4]\nreplicates: 8\nconfigurations:\n  - { name: a, generator: random }\n  - { name: b, generator: sobol }\n");
        (int code, _, string err) = Run("study", dir.File("study.yaml"), "--out", dir.File("out"), "--quiet");
        Assert.Equal(2, code);
        Assert.Contains("a study of 8192x8192 pixels, 2 configurations, 3 sample counts and 8 replicates needs about 56.5 GiB, above the memory budget of 2 GiB", err, StringComparison.Ordinal);
        Assert.False(Directory.Exists(dir.File("out")));
    }

    [Fact]
    public void Report_of_a_folder_without_a_study_or_with_a_foreign_summary_is_one_line()
    {
        using var dir = new TempFolder();
        (int code, _, string err) = Run("report", dir.Path);
        Assert.Equal(2, code);
        Assert.Contains("summary.json: not found", err, StringComparison.Ordinal);
        dir.Write("summary.json", "{\"scene\": \"x\"}");
        (code, _, err) = Run("report", dir.Path);
        Assert.Equal(2, code);
        Assert.Contains("summary.json: ", err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("report.html")));
    }
}
