using System.Globalization;
using System.Numerics;
using System.Text.Json;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests.Plugins;

/// <summary>
/// The example plug-in (tools/plugin-example, a 2-D Kronecker sequence) built from its sources and
/// loaded with --plugin: every generator command takes it, its points are the published formula, and
/// it is seeded exactly as the built-ins are. Bad plug-ins give one line naming the plug-in.
/// </summary>
public sealed class PluginTests(PluginBuilds builds) : IClassFixture<PluginBuilds>
{
    private const string Scene = TestScenes.LampAndBall;

    [Fact]
    public void Samplers_lists_the_plugin_generator_marked_with_its_path()
    {
        (int code, string output, string err) = Run("--plugin", builds.Example, "samplers");
        Assert.True(code == 0, err);
        string line = output.Split('\n').Single(l => l.StartsWith("  kronecker ", StringComparison.Ordinal));
        Assert.EndsWith($"[plug-in {builds.Example}]", line.TrimEnd(), StringComparison.Ordinal);
        Assert.Contains("Weyl 1916", line, StringComparison.Ordinal);

        // Only when named: without --plugin the generator is unknown.
        (code, _, err) = Run("points", "--generator", "kronecker");
        Assert.Equal(2, code);
        Assert.Contains("unknown generator 'kronecker'", err, StringComparison.Ordinal);
    }

    /// <summary>
    /// Point i is ({i·√2}, {i·√3}) (Weyl 1916, Math. Ann. 77). The test computes the fractional parts
    /// independently from 30-digit integer square roots (exact to 10^-27 for these i), not from the
    /// plug-in's 64-bit constants; the plug-in keeps the top 53 bits of a 64-bit fraction, so it is
    /// within 2^-53 + i·2^-64 of the exact value.
    /// </summary>
    [Fact]
    public void Points_the_cli_prints_are_the_Kronecker_formula()
    {
        const int n = 500;
        (int code, string output, string err) = Run("--plugin", builds.Example, "points", "--generator", "kronecker", "--randomize", "none",
            "--count", n.ToString(CultureInfo.InvariantCulture), "--dims", "2");
        Assert.True(code == 0, err);
        string[] lines = output.TrimEnd('\n').Split('\n');
        Assert.Equal(n, lines.Length);
        BigInteger scale = BigInteger.Pow(10, 30);
        BigInteger[] roots = [IntegerSqrt(2 * scale * scale), IntegerSqrt(3 * scale * scale)];
        for (int i = 0; i < n; i++)
        {
            double[] printed = [.. lines[i].Split(',').Select(t => double.Parse(t, CultureInfo.InvariantCulture))];
            for (int d = 0; d < 2; d++)
            {
                BigInteger fraction = i * roots[d] % scale;
                double exact = (double)(fraction / BigInteger.Pow(10, 12)) / 1e18;
                Assert.True(Math.Abs(printed[d] - exact) <= Math.ScaleB(1.0, -52), $"point {i} dimension {d}: printed {printed[d]:R}, formula {exact:R}");
            }
        }
    }

    /// <summary>
    /// Seeded as the built-ins: point 0 of the Kronecker sequence, of Hammersley and of the rank-1 lattice
    /// is the origin, so under the Cranley–Patterson rotation (Cranley &amp; Patterson 1976) each prints the
    /// pixel's offsets themselves, and the three must agree bit for bit for every pixel and seed.
    /// </summary>
    [Theory]
    [InlineData("0,0", "0")]
    [InlineData("3,2", "5")]
    [InlineData("17,40", "123456789")]
    public void Cranley_Patterson_offsets_are_the_built_ins(string pixel, string seed)
    {
        string Point0(string generator, params string[] plugin)
        {
            (int code, string output, string err) = Run([.. plugin, "points", "--generator", generator, "--randomize", "cranley-patterson",
                "--count", "1", "--dims", "2", "--pixel", pixel, "--seed", seed]);
            Assert.True(code == 0, err);
            return output;
        }

        string kronecker = Point0("kronecker", "--plugin", builds.Example);
        Assert.Equal(Point0("hammersley"), kronecker);
        Assert.Equal(Point0("lattice"), kronecker);
    }

    [Fact]
    public void Renders_with_the_plugin_are_deterministic_and_record_it()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        string[] common = ["--plugin", builds.Example, "render", dir.File("s.yaml"), "--generator", "kronecker", "--spp", "8"];
        (int code, _, string err) = Run([.. common, "--seed", "4", "--threads", "1", "--out", dir.File("one.pfm")]);
        Assert.True(code == 0, err);
        (code, _, err) = Run([.. common, "--seed", "4", "--threads", "2", "--out", dir.File("two.pfm")]);
        Assert.True(code == 0, err);
        // DESIGN.md decision 1: the image does not depend on the thread count, for a plug-in as for a built-in.
        Assert.Equal(File.ReadAllBytes(dir.File("one.pfm")), File.ReadAllBytes(dir.File("two.pfm")));

        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("one.json")));
        Assert.Equal("kronecker", doc.RootElement.GetProperty("generator").GetString());
        Assert.Equal("cranley-patterson", doc.RootElement.GetProperty("randomize").GetString());
        Assert.Equal(2, doc.RootElement.GetProperty("generator_dimensions").GetInt32());

        (code, _, err) = Run([.. common, "--seed", "5", "--threads", "1", "--out", dir.File("other.pfm")]);
        Assert.True(code == 0, err);
        Assert.NotEqual(File.ReadAllBytes(dir.File("one.pfm")), File.ReadAllBytes(dir.File("other.pfm")));
    }

    [Fact]
    public void Selftest_runs_on_the_plugin_generator()
    {
        (int code, string output, string err) = Run("--plugin", builds.Example, "selftest", "--generator", "kronecker", "--count", "64", "--json");
        Assert.True(code == 0, err + output);
        using JsonDocument doc = JsonDocument.Parse(output);
        Assert.Equal("kronecker", doc.RootElement.GetProperty("generator").GetString());
    }

    [Theory]
    [InlineData("pointstats", "--count", "64", "--dims", "2", "--json")]
    [InlineData("integrands", "--max-count", "64", "--replicates", "4", "--json")]
    public void Generator_commands_take_the_plugin(params string[] args)
    {
        (int code, string output, string err) = Run(["--plugin", builds.Example, args[0], "--generator", "kronecker", .. args[1..]]);
        Assert.True(code == 0, err);
        using JsonDocument doc = JsonDocument.Parse(output);
        Assert.Equal("kronecker", doc.RootElement.GetProperty("generator").GetString());
    }

    [Fact]
    public void A_study_names_the_plugin_and_a_point_file_relative_to_itself()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", Scene);
        dir.Write("points/four.csv", "0.125,0.375\n0.375,0.875\n0.625,0.125\n0.875,0.625\n");
        dir.Write("study.yaml", """
            scene: s.yaml
            reference: { spp: 16 }
            spp: [2, 4]
            replicates: 2
            configurations:
              - { name: weyl, generator: kronecker }
              - { name: mine, generator: "file:points/four.csv" }
            """);
        (int code, _, string err) = Run("--plugin", builds.Example, "study", dir.File("study.yaml"), "--out", dir.File("out"), "--threads", "2", "--quiet");
        Assert.True(code == 0, err);
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("out/summary.json")));
        string?[] generators = [.. doc.RootElement.GetProperty("configurations").EnumerateArray().Select(c => c.GetProperty("generator").GetString())];
        Assert.Equal("kronecker", generators[0]);
        Assert.Equal("file:" + dir.File("points/four.csv"), generators[1]);
    }

    /// <summary>A plug-in's own dependencies are found beside it, in its load context; PathBench does not ship them.</summary>
    [Fact]
    public void A_plugins_dependency_is_loaded_from_beside_it()
    {
        Assert.False(File.Exists(Path.Combine(AppContext.BaseDirectory, "Invented.Constants.dll")));
        Assert.True(File.Exists(Path.Combine(Path.GetDirectoryName(builds.WithDependency)!, "Invented.Constants.dll")));
        (int code, string output, string err) = Run("--plugin", builds.WithDependency, "points", "--generator", "quarter", "--count", "2");
        Assert.True(code == 0, err);
        Assert.Equal("0.25,0.25\n0.25,0.25\n", output.ReplaceLineEndings("\n"));
    }

    public static TheoryData<string, string> BadPlugins => new()
    {
        { "missing", "no such file" },
        { "folder", "is a folder; name the plug-in's .dll" },
        { "text", "not a .NET assembly" },
        { "no-implementation", "no public class implementing PathBench.Sampling.Generators.IGeneratorPlugin" },
        { "clash", "generator name 'sobol' clashes with the built-in generator" },
        { "throw", "Misbehaving.MisbehavingPlugin's constructor failed: InvalidOperationException: the invented licence file is missing" },
    };

    [Theory]
    [MemberData(nameof(BadPlugins))]
    public void A_bad_plugin_is_one_line_naming_it(string which, string expected)
    {
        using var dir = new TempFolder();
        string path = which switch
        {
            "missing" => dir.File("none.dll"),
            "folder" => dir.Path,
            "text" => dir.Write("notes.dll", "not an assembly, just text\n"),
            "no-implementation" => Path.Combine(AppContext.BaseDirectory, "PathBench.Imaging.dll"),
            "clash" => builds.Clashing,
            _ => builds.Throwing,
        };
        (int code, string output, string err) = Run("--plugin", path, "points", "--generator", "sobol");
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.StartsWith("pathbench: error: ", err, StringComparison.Ordinal);
        Assert.Contains(path, err, StringComparison.Ordinal);
        Assert.Contains(expected, err, StringComparison.Ordinal);
    }

    /// <summary>
    /// A plug-in generator that throws while points are being made (here from its fourth point on):
    /// one line naming the plug-in's path and the method that threw, exit code 1, on a worker thread
    /// (render, which writes no image or sidecar) as on the main one (points, whose list is a stream:
    /// the points made before the failure are out, and no more).
    /// </summary>
    [Theory]
    [InlineData("render")]
    [InlineData("points")]
    public void A_plugin_that_throws_while_sampling_is_named_and_nothing_is_written(string command)
    {
        using var dir = new TempFolder();
        string plugin = builds.ThrowingWhileSampling;
        (int code, string output, string err) = RunHalf(plugin, command, dir);
        Assert.Equal(1, code);
        Assert.Equal(command == "render" ? "" : "0.5,0.5\n0.5,0.5\n0.5,0.5\n", output.ReplaceLineEndings("\n"));
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.Equal($"pathbench: error: plug-in {plugin}: Misbehaving.Half.Sample threw InvalidOperationException: the invented table holds 3 points\n", err.ReplaceLineEndings("\n"));
        Assert.False(File.Exists(dir.File("out.pfm")));
        Assert.False(File.Exists(dir.File("out.json")));
    }

    /// <summary>
    /// A plug-in generator that returns a coordinate outside [0, 1) (here 1, from its fourth point on) is
    /// stopped at the first such value, before it can bias an image: one line naming the plug-in, the
    /// generator, the value and where it came from, exit code 2, no image or sidecar.
    /// </summary>
    [Theory]
    [InlineData("render")]
    [InlineData("points")]
    public void A_plugin_coordinate_outside_the_unit_interval_is_refused(string command)
    {
        using var dir = new TempFolder();
        string plugin = builds.OutOfRange;
        (int code, string output, string err) = RunHalf(plugin, command, dir);
        Assert.Equal(2, code);
        Assert.Equal(command == "render" ? "" : "0.5,0.5\n0.5,0.5\n0.5,0.5\n", output.ReplaceLineEndings("\n"));
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        // The first value asked for at point 3 is the film position's first coordinate (dimension 0); the
        // pixel is whichever a worker reached first, so its key is matched by form only.
        Assert.Matches(
            $"^pathbench: error: plug-in {System.Text.RegularExpressions.Regex.Escape(plugin)}: generator 'half' returned 1 for dimension 0 of point 3 \\(pixel key 0x[0-9a-f]{{16}}\\); every coordinate must lie in \\[0, 1\\)\n$",
            err.ReplaceLineEndings("\n"));
        Assert.False(File.Exists(dir.File("out.pfm")));
        Assert.False(File.Exists(dir.File("out.json")));
    }

    // The misbehaving plug-in's 'half' generator, 8 points: a 2-thread render of the test scene into dir/out.pfm, or a point list.
    private static (int Code, string Output, string Err) RunHalf(string plugin, string command, TempFolder dir)
    {
        dir.Write("s.yaml", Scene);
        return Run(command == "render"
            ? ["--plugin", plugin, "render", dir.File("s.yaml"), "--generator", "half", "--spp", "8", "--threads", "2", "--out", dir.File("out.pfm")]
            : ["--plugin", plugin, "points", "--generator", "half", "--count", "8"]);
    }

    // Newton's iteration on integers from above: decreases to floor(√v) and stops there (common practice).
    private static BigInteger IntegerSqrt(BigInteger v)
    {
        BigInteger x = 2 * (BigInteger)Math.Sqrt((double)v) + 1;
        while (true)
        {
            BigInteger y = (x + v / x) / 2;
            if (y >= x)
            {
                return x;
            }

            x = y;
        }
    }
}
