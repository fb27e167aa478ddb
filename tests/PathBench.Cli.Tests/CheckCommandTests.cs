using System.Globalization;
using System.Text.Json;
using System.Xml.Linq;
using PathBench.Imaging;

namespace PathBench.Cli.Tests;

/// <summary>
/// <c>pathbench check</c> and <c>pathbench baseline</c>: verdicts, exit codes, JUnit XML, the user's
/// renderer run as a command (here PathBench's own <c>render</c>, started as a separate process),
/// a deliberately biased renderer caught, and bad suites refused with their position.
/// </summary>
public sealed class CheckCommandTests
{
    private static readonly string Scene = TestScenes.LampAndBall.Replace("[24, 16]", "[32, 24]", StringComparison.Ordinal);

    private static (int Code, string Out, string Err) Run(params string[] args) => CliRunner.Run(args);

    /// <summary>The command line that runs this build's pathbench as a separate process (the "user's renderer").</summary>
    private static string PathBenchCommand => $"dotnet '{typeof(CliApp).Assembly.Location}'";

    private static TempFolder SceneWithReference()
    {
        var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        (int code, _, string err) = Run("reference", dir.File("s.yaml"), "--spp", "512", "--out", dir.File("ref.exr"), "--threads", "2");
        Assert.True(code == 0, err);
        return dir;
    }

    private static void RenderReplicates(TempFolder dir, string folder, int spp, int count, double scale = 1)
    {
        Directory.CreateDirectory(dir.File(folder));
        for (int seed = 1; seed <= count; seed++)
        {
            string path = dir.File(string.Create(CultureInfo.InvariantCulture, $"{folder}/r{seed}.pfm"));
            (int code, _, string err) = Run("render", dir.File("s.yaml"), "--spp", spp.ToString(CultureInfo.InvariantCulture), "--seed", seed.ToString(CultureInfo.InvariantCulture), "--out", path, "--threads", "2");
            Assert.True(code == 0, err);
            if (scale != 1)
            {
                RgbImage image = ImageFile.Read(path).Image;
                for (int i = 0; i < image.Data.Length; i++)
                {
                    image.Data[i] *= (float)scale;
                }

                ImageFile.Write(path, image);
            }
        }
    }

    [Fact]
    public void A_suite_of_files_a_command_and_our_renderer_gives_verdicts_exit_code_and_junit()
    {
        using TempFolder dir = SceneWithReference();
        RenderReplicates(dir, "runs", 16, 6);
        dir.Write("suite.yaml", $$"""
            reference: { path: ref.exr }
            cases:
              - name: files
                images: [ "runs/r*.pfm" ]
                spp: 16
                assert: { unbiased: {}, mse_at_most: 1.0, ssim_at_least: 0.2, nonfinite_at_most: 0 }
              - name: live
                command: "{{PathBenchCommand}} render s.yaml --seed {seed} --spp {spp} --out {out} --threads 1"
                spp: [4, 16]
                replicates: 4
                assert: { unbiased: {}, slope_at_most: -0.5 }
              - name: ours
                render: { scene: s.yaml, generator: sobol, randomize: owen }
                spp: [4, 16]
                replicates: 6
                assert: { unbiased: {}, structure_at_most: 4 }
              - name: broken
                command: "false {out}"
                spp: 4
                replicates: 2
                assert: { unbiased: {} }
            """);
        (int code, string output, string err) = Run("check", dir.File("suite.yaml"), "--junit", dir.File("j.xml"), "--json", dir.File("v.json"), "--threads", "2");
        Assert.True(code == 1, err + output); // only 'broken' fails
        Assert.Contains("FAIL broken unbiased: case 'broken': the command exited with status 1", output, StringComparison.Ordinal);
        Assert.Equal(1, output.Split('\n').Count(l => l.Contains(" FAIL", StringComparison.Ordinal) && !l.StartsWith("FAIL", StringComparison.Ordinal)));

        // JUnit: one test case per assertion, the failed case's as an error, with its message.
        XElement suite = XDocument.Load(dir.File("j.xml")).Root!.Element("testsuite")!;
        Assert.Equal("9", suite.Attribute("tests")!.Value);
        Assert.Equal("0", suite.Attribute("failures")!.Value);
        Assert.Equal("1", suite.Attribute("errors")!.Value);
        Assert.Equal(9, suite.Elements("testcase").Count());
        XElement error = suite.Elements("testcase").Single(t => t.Attribute("classname")!.Value == "broken").Element("error")!;
        Assert.Contains("exited with status 1", error.Value, StringComparison.Ordinal);

        using JsonDocument json = JsonDocument.Parse(File.ReadAllText(dir.File("v.json")));
        Assert.False(json.RootElement.GetProperty("passed").GetBoolean());
        Assert.Equal(9, json.RootElement.GetProperty("verdicts").GetArrayLength());

        // The command's log keeps what it printed.
        Assert.True(File.Exists(dir.File("suite.check/live/spp16-seed4.log")));
    }

    [Fact]
    public void A_renderer_biased_by_three_percent_is_caught_and_the_unbiased_one_passes()
    {
        // The "renderer" is our own at 64 spp; the biased one multiplies its images by 1.03. With 8
        // replicates against a 512-spp reference the bias test must reject the biased images and
        // accept the plain ones at family-wise α = 0.001 (a false failure of the plain one once in
        // a thousand seeds; the seeds are fixed).
        using TempFolder dir = SceneWithReference();
        RenderReplicates(dir, "plain", 64, 8);
        RenderReplicates(dir, "biased", 64, 8, scale: 1.03);
        dir.Write("suite.yaml", """
            reference: { path: ref.exr }
            cases:
              - { name: plain, images: [ "plain/*.pfm" ], spp: 64, assert: { unbiased: { alpha: 0.001 } } }
              - { name: biased, images: [ "biased/*.pfm" ], spp: 64, assert: { unbiased: { alpha: 0.001 } } }
            """);
        (int code, string output, _) = Run("check", dir.File("suite.yaml"), "--json", dir.File("v.json"));
        Assert.Equal(1, code);
        using JsonDocument json = JsonDocument.Parse(File.ReadAllText(dir.File("v.json")));
        JsonElement[] verdicts = [.. json.RootElement.GetProperty("verdicts").EnumerateArray()];
        Assert.True(verdicts[0].GetProperty("passed").GetBoolean(), output);
        Assert.False(verdicts[1].GetProperty("passed").GetBoolean(), output);
    }

    [Fact]
    public void A_baseline_is_recorded_and_checked_against()
    {
        using TempFolder dir = SceneWithReference();
        dir.Write("suite.yaml", """
            reference: { path: ref.exr }
            cases:
              - name: ours
                render: { scene: s.yaml, generator: sobol, randomize: owen }
                spp: 16
                replicates: 6
                assert: { mse_at_most: { baseline: 1.5 } }
            """);
        (int code, _, string err) = Run("check", dir.File("suite.yaml"));
        Assert.Equal(2, code);
        Assert.Contains("pass --baseline FILE", err, StringComparison.Ordinal);

        (code, string output, err) = Run("baseline", dir.File("suite.yaml"), "--out", dir.File("base.json"), "--threads", "2");
        Assert.True(code == 0, err);
        Assert.Contains("figures of 1 of 1 cases", output, StringComparison.Ordinal);
        using (JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("base.json"))))
        {
            Assert.True(doc.RootElement.GetProperty("cases").GetProperty("ours").GetProperty("mse").GetDouble() > 0);
        }

        // The same renders against their own baseline: the Welch test cannot reject "MSE ≤ 1.5 × baseline".
        (code, output, err) = Run("check", dir.File("suite.yaml"), "--baseline", dir.File("base.json"), "--threads", "2");
        Assert.True(code == 0, err + output);

        dir.Write("bad.json", "{\"format\": \"something else\"}");
        (code, _, err) = Run("check", dir.File("suite.yaml"), "--baseline", dir.File("bad.json"));
        Assert.Equal(2, code);
        Assert.Contains("not a PathBench baseline", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Selftest_does_not_demand_independent_neighbours_of_the_blue_noise_sampler()
    {
        // Its neighbouring pixels are correlated on purpose (Heitz, Belcour, Ostromoukhov, Coeurjolly
        // & Iehl 2019): the check reports n/a with the reason instead of failing it.
        (_, string output, _) = Run("selftest", "--generator", "bluenoise", "--count", "64", "--json");
        using JsonDocument doc = JsonDocument.Parse(output);
        JsonElement check = doc.RootElement.GetProperty("tests").EnumerateArray().Single(t => t.GetProperty("test").GetString() == "independence between neighbouring pixels");
        Assert.StartsWith("n/a: neighbouring pixels' seeds are chosen together", check.GetProperty("statistic").GetString(), StringComparison.Ordinal);
        Assert.True(check.GetProperty("passed").GetBoolean());
        JsonElement seeds = doc.RootElement.GetProperty("tests").EnumerateArray().Single(t => t.GetProperty("test").GetString() == "independence between replicates (seeds)");
        Assert.True(seeds.GetProperty("passed").GetBoolean());
    }

    [Theory]
    [InlineData("random", "none")]
    [InlineData("sobol", "owen")]
    [InlineData("jittered", "none")]
    public void Selftest_of_a_correct_generator_passes_every_published_property(string generator, string randomize)
    {
        // Each group of tests has family-wise α = 0.001; the seed is fixed.
        (int code, string output, string err) = Run("selftest", "--generator", generator, "--randomize", randomize, "--count", "256", "--json");
        Assert.True(code == 0, err + output);
        using JsonDocument doc = JsonDocument.Parse(output);
        Assert.True(doc.RootElement.GetProperty("passed").GetBoolean());
        string[] tests = [.. doc.RootElement.GetProperty("tests").EnumerateArray().Select(t => t.GetProperty("test").GetString()!)];
        foreach (string expected in new[] { "determinism", "uniformity of dimensions 0,1", "unbiased on 'disk'", "convergence on 'gaussian'", "independence between neighbouring pixels", "independence between replicates (seeds)" })
        {
            Assert.Contains(expected, tests);
        }

        if (generator == "sobol")
        {
            JsonElement net = doc.RootElement.GetProperty("tests").EnumerateArray().Single(t => t.GetProperty("test").GetString()!.StartsWith("(0,m,2)-net", StringComparison.Ordinal));
            Assert.StartsWith("t = 0", net.GetProperty("statistic").GetString(), StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Selftest_refuses_a_count_that_is_not_a_power_of_two()
    {
        (int code, _, string err) = Run("selftest", "--generator", "random", "--count", "100");
        Assert.Equal(2, code);
        Assert.Contains("power of two", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("cases: []\n", "suite.yaml:1:8:", "1 to 256 cases")]
    [InlineData("reference: { path: ref.exr }\ncolour: 1\ncases: []\n", "suite.yaml:2:1:", "unknown key 'colour'")]
    [InlineData("cases:\n  - { name: a, spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:2:5:", "exactly one of 'render', 'images' or 'command', got none")]
    [InlineData("cases:\n  - { name: a, images: [r.pfm], command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:2:5:", "got images and command")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:25:", "must contain {out}")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x '{out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:25:", "unclosed ' quote")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: [nothing*.pfm], spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:25:", "matches no file")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: [ref.exr], spp: 4, replicates: 3, assert: { unbiased: {} } }\n", "suite.yaml:3:5:", "'replicates' and 'seeds' do not apply")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: [ref.exr], spp: [4, 8], assert: { unbiased: {} } }\n", "suite.yaml:3:24:", "must map each spp")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: { 4: [ref.exr], 9: [ref.exr] }, spp: [4, 8], assert: { unbiased: {} } }\n", "suite.yaml:3:40:", "'images' lists 9 spp")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: [ref.exr], spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:5:", "at least 2")]
    [InlineData("cases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:2:5:", "has no reference")]
    [InlineData("reference: { spp: 64 }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:5:", "must be an image")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: {} }\n", "suite.yaml:3:52:", "lists no assertion")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { fast: 1 } }\n", "suite.yaml:3:54:", "unknown key 'fast'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: { alpha: 0.7 } } }\n", "suite.yaml:3:73:", "'alpha' must be between 0 and 0.5")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { slope_at_most: -1 } }\n", "suite.yaml:3:54:", "at least two sample counts")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { mse_at_most: -1 } }\n", "suite.yaml:3:67:", "must be above 0")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { ssim_at_least: 2 } }\n", "suite.yaml:3:69:", "between -1 and 1")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { mse_at_most: { baseline: 1.1, value: 2 } } }\n", "suite.yaml:3:84:", "unknown key 'value'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, seeds: [1, 1, 2, 3, 4, 5, 6, 7], assert: { unbiased: {} } }\n", "suite.yaml:3:55:", "listed twice")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, seeds: [1, 2], assert: { unbiased: {} } }\n", "suite.yaml:3:51:", "must list 8 seeds")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, output_format: tif, assert: { unbiased: {} } }\n", "suite.yaml:3:59:", "pfm, exr or png")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: [ref.exr, ref.exr], spp: 4, timeout: 5, assert: { unbiased: {} } }\n", "suite.yaml:3:61:", "'timeout' applies to 'command' cases only")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a/b, command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:13:", "may hold only letters")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:4:13:", "duplicate case name 'a'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, render: { scene: s.yaml }, spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:24:", "missing required key 'generator'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, render: { scene: s.yaml, generator: random, randomize: owen }, spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:71:", "meaningless")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: [8, 4], assert: { unbiased: {} } }\n", "suite.yaml:3:45:", "must increase")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, replicates: 1, assert: { unbiased: {} } }\n", "suite.yaml:3:56:", "between 2 and 1024")]
    [InlineData("cases: 3\n", "suite.yaml:1:8:", "1 to 256 cases")]
    [InlineData("- a\n", "suite.yaml:1:1:", "the top level must be a mapping")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - 7\n", "suite.yaml:3:5:", "case 1 must be a mapping")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 0, assert: { unbiased: {} } }\n", "suite.yaml:3:41:", "between 1 and 16777216")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4.5, assert: { unbiased: {} } }\n", "suite.yaml:3:41:", "must be a whole number")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, shell: maybe, assert: { unbiased: {} } }\n", "suite.yaml:3:51:", "must be true or false")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, timeout: 0, assert: { unbiased: {} } }\n", "suite.yaml:3:53:", "between 1 and 604800")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"   \", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:25:", "must contain {out}")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { nonfinite_at_most: -1 } }\n", "suite.yaml:3:73:", "'nonfinite_at_most' must be between 0")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { structure_at_most: 0 } }\n", "suite.yaml:3:73:", "'structure_at_most' must be above 0")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: { beta: 1 } } }\n", "suite.yaml:3:66:", "unknown key 'beta'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { mse_at_most: { baseline: 0 } } }\n", "suite.yaml:3:79:", "the factor 'baseline'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, images: [ \"w*/x.exr\" ], spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:26:", "wildcards are allowed in the file name only")]
    [InlineData("reference: { path: ref.exr, spp: 4 }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:1:12:", "exactly one of 'spp'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, render: { scene: s.yaml, generator: warp9 }, spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:52:", "unknown generator 'warp9'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, render: { scene: s.yaml, generator: random, resolution: [0, 4] }, spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:73:", "the width in 'resolution'")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, assert: [ unbiased ] }\n", "suite.yaml:3:52:", "'assert' in case 1 must be a mapping")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: 4, seeds: 3, assert: { unbiased: {} } }\n", "suite.yaml:3:51:", "must list 8 seeds")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: \"\", command: \"x {out}\", spp: 4, assert: { unbiased: {} } }\n", "suite.yaml:3:13:", "must be a name")]
    [InlineData("reference: { path: ref.exr }\ncases:\n  - { name: a, command: \"x {out}\", spp: [], assert: { unbiased: {} } }\n", "suite.yaml:3:41:", "a list of 1 to 32")]
    public void Bad_suites_name_file_line_and_column(string text, string position, string what)
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        dir.Write("ref.exr", "");
        dir.Write("suite.yaml", text);
        (int code, string output, string err) = Run("check", dir.File("suite.yaml"), "--work", dir.File("work"));
        Assert.True(code == 2, err);
        Assert.Equal("", output);
        Assert.Contains(position, err, StringComparison.Ordinal);
        Assert.Contains(what, err, StringComparison.Ordinal);
    }
}
