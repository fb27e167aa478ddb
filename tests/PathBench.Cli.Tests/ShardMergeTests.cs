using System.Text.Json;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests;

/// <summary>
/// render --shard, merge, --checkpoint and --resume: every way of splitting a render's samples
/// gives the same image bytes as one render (the film's sums are exact integers, DESIGN.md
/// decision 1), and mismatched parts are refused naming what differs.
/// </summary>
public sealed class ShardMergeTests
{
    internal const string Scene = """
        camera: { position: [0, 1, 3], look_at: [0, 0.5, 0], fov: 40, resolution: [12, 8] }
        render: { spp: 6, max_depth: 4 }
        environment: { radiance: [0.5, 0.6, 0.7] }
        materials:
          ground: { type: diffuse, albedo: [0.5, 0.5, 0.5] }
          lamp:   { type: diffuse, albedo: [0, 0, 0], emission: [20, 20, 20] }
          metal:  { type: conductor, roughness: 0.3, f0: [0.9, 0.6, 0.3] }
        shapes:
          - { type: quad, corner: [-5, 0, 5], edge_u: [10, 0, 0], edge_v: [0, 0, -10], material: ground }
          - { type: sphere, center: [0.5, 1.5, 0], radius: 0.2, material: lamp }
          - { type: sphere, center: [-0.4, 0.4, 0], radius: 0.4, material: metal }
        """;

    private static void Ok((int Code, string Out, string Err) r) => Assert.True(r.Code == 0, r.Err);

    [Theory]
    [InlineData("sobol", 3)]
    [InlineData("halton", 4)]
    [InlineData("jittered", 2)]
    public void Merged_shards_are_the_single_render_bit_for_bit(string generator, int shards)
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        Ok(Run("render", scene, "--generator", generator, "--spp", "16", "--out", dir.File("one.exr"), "--threads", "2"));
        var parts = new List<string>();
        for (int i = shards - 1; i >= 0; i--)
        {
            // Different thread counts per shard: the sums must not care.
            Ok(Run("render", scene, "--generator", generator, "--spp", "16", "--shard", $"{i}/{shards}", "--out", dir.File($"part{i}.exr"), "--threads", (1 + (i % 2)).ToString(System.Globalization.CultureInfo.InvariantCulture)));
            parts.Add(dir.File($"part{i}.accum"));
        }

        Ok(Run(["merge", .. parts, "--out", dir.File("merged.exr")]));
        Assert.Equal(File.ReadAllBytes(dir.File("one.exr")), File.ReadAllBytes(dir.File("merged.exr")));
        Assert.NotEqual(File.ReadAllBytes(dir.File("one.exr")), File.ReadAllBytes(dir.File("part0.exr")));
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("merged.json")));
        Assert.Equal(16, doc.RootElement.GetProperty("spp").GetInt32());
        Assert.Equal(shards, doc.RootElement.GetProperty("sample_ranges").GetArrayLength());
    }

    [Fact]
    public void Merged_reference_equals_a_single_reference_with_its_variance()
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        Ok(Run("reference", scene, "--spp", "8", "--out", dir.File("one.exr")));
        Ok(Run("reference", scene, "--spp", "8", "--shard", "0/2", "--out", dir.File("a.exr")));
        Ok(Run("reference", scene, "--spp", "8", "--shard", "1/2", "--out", dir.File("b.exr")));
        Ok(Run("merge", dir.File("a.accum"), dir.File("b.accum"), "--reference", "--out", dir.File("m.exr")));
        Assert.Equal(File.ReadAllBytes(dir.File("one.exr")), File.ReadAllBytes(dir.File("m.exr")));
        Assert.Equal(File.ReadAllBytes(dir.File("one.variance.exr")), File.ReadAllBytes(dir.File("m.variance.exr")));
    }

    [Fact]
    public void Merge_refuses_mixed_configurations_overlaps_and_gaps()
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        Ok(Run("render", scene, "--spp", "9", "--shard", "0/3", "--out", dir.File("a.exr")));
        Ok(Run("render", scene, "--spp", "9", "--shard", "2/3", "--out", dir.File("c.exr")));
        Ok(Run("render", scene, "--spp", "9", "--shard", "1/3", "--seed", "5", "--out", dir.File("b5.exr")));

        (int code, _, string err) = Run("merge", dir.File("a.accum"), dir.File("b5.accum"), "--out", dir.File("m.exr"));
        Assert.Equal(2, code);
        Assert.Contains("seed: 0 there, 5 here", err, StringComparison.Ordinal);
        Assert.Contains("b5.accum", err, StringComparison.Ordinal);

        (code, _, err) = Run("merge", dir.File("a.accum"), dir.File("a.accum"), "--out", dir.File("m.exr"));
        Assert.Equal(2, code);
        Assert.Contains("overlap [0, 3)", err, StringComparison.Ordinal);

        (code, _, err) = Run("merge", dir.File("a.accum"), dir.File("c.accum"), "--out", dir.File("m.exr"));
        Assert.Equal(2, code);
        Assert.Contains("miss the sample ranges [3, 6) of the planned 9 spp", err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("m.exr")));

        Ok(Run("merge", dir.File("a.accum"), dir.File("c.accum"), "--allow-gaps", "--out", dir.File("m.exr")));
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("m.json")));
        Assert.Equal(6, doc.RootElement.GetProperty("spp").GetInt32());
        Assert.Equal(3, doc.RootElement.GetProperty("missing_ranges")[0].GetProperty("first").GetInt32());
        Assert.Equal(6, doc.RootElement.GetProperty("sample_ranges")[1].GetProperty("first").GetInt32());
    }

    [Fact]
    public void Resume_from_a_partial_checkpoint_finishes_the_same_image()
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        Ok(Run("render", scene, "--spp", "12", "--out", dir.File("one.exr")));
        // Shard 0 of 3 is the first third of the same render: a checkpoint of [0, 4).
        Ok(Run("render", scene, "--spp", "12", "--shard", "0/3", "--checkpoint", dir.File("c.accum"), "--out", dir.File("part.exr")));
        Ok(Run("render", scene, "--spp", "12", "--checkpoint", dir.File("c.accum"), "--resume", "--out", dir.File("resumed.exr")));
        Assert.Equal(File.ReadAllBytes(dir.File("one.exr")), File.ReadAllBytes(dir.File("resumed.exr")));
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("resumed.json")));
        Assert.Equal(4, doc.RootElement.GetProperty("resumed_from_spp").GetInt32());
        Assert.Equal(12, doc.RootElement.GetProperty("spp").GetInt32());
        Assert.Equal("complete", doc.RootElement.GetProperty("stopped_by").GetString());

        // A shard can be checkpointed and resumed: shard 1/3 resumed from nothing is refused, from its own file it completes.
        Ok(Run("render", scene, "--spp", "12", "--shard", "1/3", "--out", dir.File("s1.exr")));
        Ok(Run("render", scene, "--spp", "12", "--shard", "1/3", "--resume", "--out", dir.File("s1.exr")));
        (int code, _, string err) = Run("render", scene, "--spp", "12", "--shard", "2/3", "--checkpoint", dir.File("s1.accum"), "--resume", "--out", dir.File("s2.exr"));
        Assert.Equal(2, code);
        Assert.Contains("not a start of this render's range [8, 12)", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--seed", "3", "seed: 3 here, 0 in the checkpoint")]
    [InlineData("--max-depth", "3", "max_depth: 3 here, 4 in the checkpoint")]
    [InlineData("--generator", "halton", "generator: halton here, sobol in the checkpoint")]
    [InlineData("--spp", "13", "planned_spp: 13 here, 12 in the checkpoint")]
    public void Resume_refuses_another_configuration_naming_the_field(string option, string value, string expected)
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        Ok(Run("render", scene, "--spp", "12", "--shard", "0/3", "--checkpoint", dir.File("c.accum"), "--out", dir.File("part.exr")));
        string[] args = option == "--spp"
            ? ["render", scene, "--spp", value, "--checkpoint", dir.File("c.accum"), "--resume", "--out", dir.File("r.exr")]
            : ["render", scene, "--spp", "12", "--checkpoint", dir.File("c.accum"), "--resume", "--out", dir.File("r.exr"), option, value];
        (int code, _, string err) = Run(args);
        Assert.Equal(2, code);
        Assert.Contains("cannot resume", err, StringComparison.Ordinal);
        Assert.Contains(expected, err, StringComparison.Ordinal);
    }

    [Fact]
    public void Resume_refuses_another_scene_and_a_missing_checkpoint()
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        string other = dir.Write("t.yaml", Scene.Replace("[20, 20, 20]", "[21, 20, 20]", StringComparison.Ordinal));
        Ok(Run("render", scene, "--spp", "12", "--shard", "0/3", "--checkpoint", dir.File("c.accum"), "--out", dir.File("part.exr")));
        (int code, _, string err) = Run("render", other, "--spp", "12", "--checkpoint", dir.File("c.accum"), "--resume", "--out", dir.File("r.exr"));
        Assert.Equal(2, code);
        Assert.Contains("scene_sha256:", err, StringComparison.Ordinal);
        (code, _, err) = Run("render", scene, "--spp", "12", "--checkpoint", dir.File("none.accum"), "--resume", "--out", dir.File("r.exr"));
        Assert.Equal(2, code);
        Assert.Contains("none.accum: cannot resume: no such checkpoint", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("--time-budget", "8x", "--time-budget: '8x' is not a duration")]
    [InlineData("--checkpoint-every", "h", "--checkpoint-every: 'h' is not a duration")]
    [InlineData("--shard", "3/3", "--shard expects I/N with 0 ≤ I < N, got '3/3'")]
    [InlineData("--shard", "1/0", "--shard expects I/N")]
    [InlineData("--resume", null, "--resume needs --checkpoint FILE")]
    public void Bad_long_render_options_give_one_line_and_exit_2(string option, string? value, string expected)
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        string[] args = value is null ? ["render", scene, option, "--out", dir.File("x.exr")] : ["render", scene, option, value, "--out", dir.File("x.exr")];
        (int code, _, string err) = Run(args);
        Assert.Equal(2, code);
        Assert.Contains(expected, err, StringComparison.Ordinal);
        Assert.Single(err.Trim().Split('\n'));
    }

    [Fact]
    public void A_time_budget_with_spp_stops_at_the_spp_when_that_comes_first()
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        Ok(Run("render", scene, "--spp", "4", "--time-budget", "1h", "--out", dir.File("a.exr")));
        Ok(Run("render", scene, "--spp", "4", "--out", dir.File("b.exr")));
        Assert.Equal(File.ReadAllBytes(dir.File("b.exr")), File.ReadAllBytes(dir.File("a.exr")));
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("a.json")));
        Assert.Equal("complete", doc.RootElement.GetProperty("stopped_by").GetString());
        (int code, _, string err) = Run("render", scene, "--generator", "jittered", "--time-budget", "1h", "--out", dir.File("c.exr"));
        Assert.Equal(2, code);
        Assert.Contains("give --spp too", err, StringComparison.Ordinal);
    }
}
