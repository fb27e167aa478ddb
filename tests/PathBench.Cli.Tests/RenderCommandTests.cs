using System.Text.Json;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests;

public sealed class RenderCommandTests
{
    private const string Scene = """
        camera: { position: [0, 1, 3], look_at: [0, 0.5, 0], fov: 40, resolution: [12, 8] }
        render: { spp: 4, max_depth: 4 }
        environment: { radiance: [0.5, 0.6, 0.7] }
        materials:
          ground: { type: diffuse, albedo: [0.5, 0.5, 0.5] }
          lamp:   { type: diffuse, albedo: [0, 0, 0], emission: [20, 20, 20] }
        shapes:
          - { type: quad, corner: [-5, 0, 5], edge_u: [10, 0, 0], edge_v: [0, 0, -10], material: ground }
          - { type: sphere, center: [0.5, 1.5, 0], radius: 0.2, material: lamp }
        """;

    [Fact]
    public void Render_writes_the_image_and_a_sidecar_with_the_documented_fields()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("yard.yaml"), Scene);
        (int code, _, string err) = Run("render", dir.File("yard.yaml"), "--out", dir.File("yard.pfm"), "--threads", "1");
        Assert.True(code == 0, err);
        Assert.True(File.Exists(dir.File("yard.pfm")));
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("yard.json")));
        JsonElement j = doc.RootElement;
        foreach (string field in new[] { "scene_sha256", "generator", "randomize", "hemisphere", "lights", "seed", "spp", "width", "height", "threads", "wall_seconds", "rays", "mrays_per_second", "nonfinite_samples", "version" })
        {
            Assert.True(j.TryGetProperty(field, out _), $"sidecar lacks '{field}'");
        }

        Assert.Equal(4, j.GetProperty("spp").GetInt32());
        Assert.Equal(12, j.GetProperty("width").GetInt32());
        Assert.Equal("sobol", j.GetProperty("generator").GetString());
        Assert.Equal("owen", j.GetProperty("randomize").GetString());
        Assert.True(j.GetProperty("rays").GetInt64() >= 12 * 8 * 4);
        // sha256 of the scene's bytes, as sha256sum would print it (FIPS 180-4 via the framework).
        string expected = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(File.ReadAllBytes(dir.File("yard.yaml"))));
        Assert.Equal(expected, j.GetProperty("scene_sha256").GetString());
    }

    /// <summary>With no --randomize, each generator gets the catalog's default for it, and the sidecar says which.</summary>
    [Theory]
    [InlineData("random", "none")]
    [InlineData("jittered", "none")]
    [InlineData("latin-hypercube", "none")]
    [InlineData("multi-jittered", "none")]
    [InlineData("halton", "digit-permutation")]
    [InlineData("hammersley", "cranley-patterson")]
    [InlineData("sobol", "owen")]
    public void Without_randomize_the_generator_brings_its_own_default(string generator, string expected)
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("s.yaml"), Scene);
        (int code, _, string err) = Run("render", dir.File("s.yaml"), "--generator", generator, "--spp", "2", "--out", dir.File("s.pfm"), "--threads", "1");
        Assert.True(code == 0, err);
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("s.json")));
        Assert.Equal(expected, doc.RootElement.GetProperty("randomize").GetString());
        Assert.True(doc.RootElement.GetProperty("unbiased").GetBoolean());
    }

    [Fact]
    public void Thread_count_does_not_change_the_file_bytes()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("s.yaml"), Scene);
        Assert.Equal(0, Run("render", dir.File("s.yaml"), "--out", dir.File("one.exr"), "--threads", "1", "--spp", "8").Code);
        Assert.Equal(0, Run("render", dir.File("s.yaml"), "--out", dir.File("two.exr"), "--threads", "2", "--spp", "8").Code);
        Assert.Equal(0, Run("render", dir.File("s.yaml"), "--out", dir.File("other.exr"), "--threads", "2", "--spp", "8", "--seed", "1").Code);
        Assert.Equal(File.ReadAllBytes(dir.File("one.exr")), File.ReadAllBytes(dir.File("two.exr")));
        Assert.NotEqual(File.ReadAllBytes(dir.File("one.exr")), File.ReadAllBytes(dir.File("other.exr")));
    }

    [Theory]
    [InlineData("--generator", "nonesuch", "unknown generator 'nonesuch'")]
    [InlineData("--randomize", "owen", "meaningless for 'halton'")]
    [InlineData("--lights", "some", "some")]
    [InlineData("--spp", "0", "--spp must be at least 1")]
    [InlineData("--out", "x.tiff", "unknown image format '.tiff'")]
    public void Bad_render_arguments_exit_2_with_one_line(string option, string value, string message)
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("s.yaml"), Scene);
        string[] args = option switch
        {
            "--randomize" => ["render", dir.File("s.yaml"), "--generator", "halton", option, value, "--out", dir.File("o.pfm")],
            "--out" => ["render", dir.File("s.yaml"), "--out", dir.File(value)],
            _ => ["render", dir.File("s.yaml"), option, value, "--out", dir.File("o.pfm")],
        };
        (int code, _, string err) = Run(args);
        Assert.Equal(2, code);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.Contains(message, err, StringComparison.Ordinal);
    }

    [Fact]
    public void A_bad_scene_names_file_line_and_column()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("bad.yaml"), Scene.Replace("albedo: [0.5, 0.5, 0.5]", "albdo: [0.5, 0.5, 0.5]", StringComparison.Ordinal));
        (int code, _, string err) = Run("render", dir.File("bad.yaml"), "--out", dir.File("o.pfm"));
        Assert.Equal(2, code);
        Assert.Contains("bad.yaml:5:", err, StringComparison.Ordinal);
        Assert.Contains("albdo", err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("o.pfm")), "nothing is written for a scene that does not load");
    }

    [Fact]
    public void Every_demo_scene_and_study_loads()
    {
        string scenes = RepositoryPaths.Scenes;
        foreach (string file in Directory.GetFiles(scenes, "*.yaml").Concat(Directory.GetFiles(Path.Combine(scenes, "validation"), "*.yaml")))
        {
            if (file.EndsWith(".study.yaml", StringComparison.Ordinal))
            {
                // A study file names its scene; the scene must load at the study's resolution.
                PathBench.Analysis.StudyDefinition study = PathBench.Analysis.StudyFile.Load(file);
                Assert.NotEmpty(PathBench.Analysis.StudyPipeline.LoadScene(study).Shapes);
                continue;
            }

            if (file.EndsWith(".batch.yaml", StringComparison.Ordinal))
            {
                // A batch file names its scenes; each must load.
                foreach (Commands.BatchJob job in Commands.BatchCommand.Read(file))
                {
                    Assert.NotEmpty(PathBench.Rendering.Scenes.SceneLoader.Load(job.Scene).Shapes);
                }

                continue;
            }

            PathBench.Rendering.Scenes.SceneDescription d = PathBench.Rendering.Scenes.SceneLoader.Load(file);
            Assert.NotEmpty(d.Shapes);
        }
    }

    [Fact]
    public void Unwritable_outputs_are_refused_before_rendering()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("s.yaml"), Scene);
        (int code, _, string err) = Run("render", dir.File("s.yaml"), "--out", dir.File("missing/o.exr"));
        Assert.Equal(2, code);
        Assert.Contains("does not exist", err, StringComparison.Ordinal);
        Directory.CreateDirectory(dir.File("o.json")); // the sidecar's path is taken by a folder
        (code, _, err) = Run("render", dir.File("s.yaml"), "--out", dir.File("o.exr"));
        Assert.Equal(2, code);
        Assert.Contains("o.json: is a folder", err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("o.exr")));
    }

    [Fact]
    public void A_scene_of_only_degenerate_triangles_is_a_clean_error()
    {
        using var dir = new TempFolder();
        dir.Write("flat.obj", "v 0 0 0\nv 1 0 0\nv 2 0 0\nf 1 2 3\n");
        File.WriteAllText(dir.File("s.yaml"), """
            camera: { position: [0, 1, 3], look_at: [0, 0, 0], fov: 40, resolution: [4, 4] }
            materials: { m: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }
            shapes: [ { type: mesh, file: flat.obj, material: m } ]
            """);
        (int code, _, string err) = Run("render", dir.File("s.yaml"), "--out", dir.File("o.pfm"));
        Assert.Equal(2, code);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.Contains("nonzero area", err, StringComparison.Ordinal);
    }

    [Fact]
    public void A_deterministic_set_is_rendered_with_a_note_and_marked_biased()
    {
        using var dir = new TempFolder();
        File.WriteAllText(dir.File("s.yaml"), Scene);
        (int code, _, string err) = Run("render", dir.File("s.yaml"), "--randomize", "none", "--out", dir.File("o.pfm"));
        Assert.Equal(0, code);
        Assert.Contains("deterministic quadrature", err, StringComparison.Ordinal);
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("o.json")));
        Assert.False(doc.RootElement.GetProperty("unbiased").GetBoolean());
        Assert.Equal(0, Run("render", dir.File("s.yaml"), "--out", dir.File("p.pfm")).Code);
        using JsonDocument owen = JsonDocument.Parse(File.ReadAllText(dir.File("p.json")));
        Assert.True(owen.RootElement.GetProperty("unbiased").GetBoolean());
    }
}
