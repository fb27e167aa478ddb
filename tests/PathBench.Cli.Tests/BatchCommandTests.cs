using System.Text.Json;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests;

/// <summary>pathbench batch: renders each job, skips completed ones, resumes from checkpoints, logs, and refuses a bad file with its position.</summary>
public sealed class BatchCommandTests
{
    private const string Jobs = """
        jobs:
          - { scene: s.yaml, out: out/a.exr, options: { spp: 8, seed: 1 } }
          - { scene: s.yaml, out: out/b.exr, reference: true, options: { spp: 8, no-roulette: true } }
        """;

    [Fact]
    public void Renders_then_skips_then_resumes_and_logs()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", ShardMergeTests.Scene);
        dir.Write("out/keep", "");
        string jobs = dir.Write("jobs.yaml", Jobs);
        var first = Run("batch", jobs);
        Assert.True(first.Code == 0, first.Err);
        Assert.Contains("2 rendered, 0 skipped, 0 failed", first.Out, StringComparison.Ordinal);
        Assert.True(File.Exists(dir.File("out/b.variance.exr")), "a reference job writes the variance image");
        using (JsonDocument b = JsonDocument.Parse(File.ReadAllText(dir.File("out/b.json"))))
        {
            Assert.False(b.RootElement.GetProperty("russian_roulette").GetBoolean());
        }

        // The same image as a plain render of the same options.
        Assert.Equal(0, Run("render", dir.File("s.yaml"), "--spp", "8", "--seed", "1", "--out", dir.File("plain.exr")).Code);
        Assert.Equal(File.ReadAllBytes(dir.File("plain.exr")), File.ReadAllBytes(dir.File("out/a.exr")));

        var second = Run("batch", jobs);
        Assert.Equal(0, second.Code);
        Assert.Contains("0 rendered, 2 skipped", second.Out, StringComparison.Ordinal);

        // An interrupted job: its image and sidecar gone, its checkpoint left; the batch resumes it.
        File.Delete(dir.File("out/a.exr"));
        File.Delete(dir.File("out/a.json"));
        var third = Run("batch", jobs);
        Assert.Equal(0, third.Code);
        Assert.Contains("1 rendered, 1 skipped", third.Out, StringComparison.Ordinal);
        Assert.Contains("resumed", third.Out, StringComparison.Ordinal);
        Assert.Equal(File.ReadAllBytes(dir.File("plain.exr")), File.ReadAllBytes(dir.File("out/a.exr")));

        string log = File.ReadAllText(dir.File("jobs.log"));
        Assert.Contains("a.exr: skipped, completed earlier", log, StringComparison.Ordinal);
        Assert.Contains("a.exr: resuming", log, StringComparison.Ordinal);
        Assert.Equal(3, log.Split('\n').Count(l => l.Contains("finished with exit code 0", StringComparison.Ordinal)));
    }

    [Fact]
    public void A_failing_job_is_logged_and_the_batch_goes_on()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", ShardMergeTests.Scene);
        string jobs = dir.Write("jobs.yaml", """
            jobs:
              - { scene: missing.yaml, out: a.exr }
              - { scene: s.yaml, out: b.exr, options: { spp: 2 } }
            """);
        var r = Run("batch", jobs);
        Assert.Equal(1, r.Code);
        Assert.Contains("1 rendered, 0 skipped, 1 failed", r.Out, StringComparison.Ordinal);
        Assert.True(File.Exists(dir.File("b.exr")));
        Assert.Contains("a.exr: failed, exit 2: pathbench: error:", File.ReadAllText(dir.File("jobs.log")), StringComparison.Ordinal);
    }

    [Fact]
    public void The_batchs_memory_budget_holds_for_every_job()
    {
        // A 12x8 render holds 12 · 8 · 188 bytes (README), above a 10 KiB budget: the job must be refused
        // by the budget the batch was given, not by the default each job's command line would set.
        using var dir = new TempFolder();
        dir.Write("s.yaml", ShardMergeTests.Scene);
        string jobs = dir.Write("jobs.yaml", "jobs:\n  - { scene: s.yaml, out: a.exr, options: { spp: 2 } }\n");
        var r = Run("--max-memory", "10K", "batch", jobs);
        Assert.Equal(1, r.Code);
        Assert.Contains("0 rendered, 0 skipped, 1 failed", r.Out, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("a.exr")));
        Assert.Contains("above the memory budget of 10 KiB", File.ReadAllText(dir.File("jobs.log")), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("jobs:\n  - { scene: s.yaml }\n", ":2:5: a job needs 'out'")]
    [InlineData("jobs:\n  - { scene: s.yaml, out: a.exr, colour: red }\n", ":2:34: unknown key 'colour' in a job")]
    [InlineData("jobs:\n  - { scene: s.yaml, out: a.exr, options: { checkpoint: x } }\n", ":2:45: option 'checkpoint' is set by the batch itself")]
    [InlineData("jobs:\n  - { scene: s.yaml, out: a.exr }\n  - { scene: s.yaml, out: a.exr }\n", ":3:5: two jobs write")]
    [InlineData("jobs: []\n", ":1:1: 'jobs' must be a non-empty list")]
    [InlineData("jobs: [\n", "not valid YAML")]
    public void A_bad_jobs_file_gives_its_position_and_exit_2(string text, string expected)
    {
        using var dir = new TempFolder();
        string jobs = dir.Write("jobs.yaml", text);
        (int code, _, string err) = Run("batch", jobs);
        Assert.Equal(2, code);
        Assert.Contains(expected, err, StringComparison.Ordinal);
        Assert.StartsWith("pathbench: error: " + jobs, err, StringComparison.Ordinal);
    }
}
