using System.Globalization;
using System.Text.Json;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Tests;

/// <summary>The sampling commands driven in-process, as a user runs them.</summary>
public sealed class SamplingCommandTests
{
    private static (int Code, string Out, string Err) Run(params string[] args) => CliRunner.Run(args);

    [Fact]
    public void Samplers_lists_every_generator_and_randomization()
    {
        (int code, string output, _) = Run("samplers");
        Assert.Equal(0, code);
        foreach (GeneratorInfo g in SamplerCatalog.Generators)
        {
            Assert.Contains("  " + g.Name + " ", output, StringComparison.Ordinal);
        }

        foreach ((Randomization _, string name, string _) in RandomizationNames.All)
        {
            Assert.Contains("  " + name + " ", output, StringComparison.Ordinal);
        }

        // Stratified hemisphere sampling is named as the combination that gives it.
        Assert.Contains("stratified hemisphere sampling:", output, StringComparison.Ordinal);
        Assert.Contains("--generator jittered (or multi-jittered) and --hemisphere uniform|cosine", output, StringComparison.Ordinal);
        Assert.Contains("sequence, any dims, <= 16384 points", output, StringComparison.Ordinal); // pmj02
    }

    [Fact]
    public void Points_csv_round_trips_the_library_values_exactly()
    {
        (int code, string output, _) = Run("points", "--generator", "sobol", "--randomize", "owen", "--count", "32", "--dims", "3", "--seed", "9", "--pixel", "5,7");
        Assert.Equal(0, code);
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 32, 9), 3);
        ulong key = s.PixelKey(5, 7);
        string[] lines = output.TrimEnd('\n').Split('\n');
        Assert.Equal(32, lines.Length);
        for (int i = 0; i < 32; i++)
        {
            double[] values = lines[i].Split(',').Select(t => double.Parse(t, CultureInfo.InvariantCulture)).ToArray();
            Assert.Equal([s.Sample(key, (uint)i, 0), s.Sample(key, (uint)i, 1), s.Sample(key, (uint)i, 2)], values);
        }
    }

    [Fact]
    public void Points_json_has_the_documented_fields()
    {
        (int code, string output, _) = Run("points", "--generator", "halton", "--randomize", "none", "--count", "4", "--dims", "2", "--format", "json");
        Assert.Equal(0, code);
        using JsonDocument doc = JsonDocument.Parse(output);
        Assert.Equal(4, doc.RootElement.GetProperty("count").GetInt32());
        Assert.Equal(0.5, doc.RootElement.GetProperty("points")[1][0].GetDouble());
        Assert.Equal(1.0 / 3, doc.RootElement.GetProperty("points")[1][1].GetDouble());
    }

    [Fact]
    public void Pointstats_json_reports_discrepancy_and_pair_t_values()
    {
        (int code, string output, _) = Run("pointstats", "--generator", "sobol", "--count", "64", "--dims", "3", "--json");
        Assert.Equal(0, code);
        using JsonDocument doc = JsonDocument.Parse(output);
        JsonElement root = doc.RootElement;
        Assert.Equal(64, root.GetProperty("count").GetInt32());
        Assert.Equal(3, root.GetProperty("dims").GetInt32());
        Assert.True(root.GetProperty("l2_star").GetDouble() > 0);
        JsonElement pairs = root.GetProperty("pairs");
        Assert.Equal(3, pairs.GetArrayLength());
        Assert.Equal(0, pairs[0].GetProperty("t").GetInt32()); // Sobol dims 0,1: a (0,m,2)-net
        Assert.Equal([0, 1], pairs[0].GetProperty("dims").EnumerateArray().Select(e => e.GetInt32()));
    }

    [Fact]
    public void Pointstats_omits_pairs_when_the_count_is_not_a_power_of_two()
    {
        (int code, string output, _) = Run("pointstats", "--generator", "halton", "--count", "100", "--dims", "2", "--json");
        Assert.Equal(0, code);
        using JsonDocument doc = JsonDocument.Parse(output);
        Assert.False(doc.RootElement.TryGetProperty("pairs", out _));
    }

    [Fact]
    public void Integrands_json_is_independent_of_threads()
    {
        string[] args = ["integrands", "--generator", "jittered", "--max-count", "256", "--replicates", "8", "--json"];
        (int c1, string one, _) = Run([.. args, "--threads", "1"]);
        (int c2, string two, _) = Run([.. args, "--threads", "2"]);
        Assert.Equal(0, c1);
        Assert.Equal(0, c2);
        Assert.Equal(one, two);
        using JsonDocument doc = JsonDocument.Parse(one);
        JsonElement first = doc.RootElement.GetProperty("integrands")[0];
        Assert.Equal("disk", first.GetProperty("name").GetString());
        Assert.Equal(7, first.GetProperty("rmse").GetArrayLength()); // counts 4 … 256
        Assert.True(first.GetProperty("slope_low").GetDouble() < first.GetProperty("slope").GetDouble());
        Assert.True(first.GetProperty("slope_high").GetDouble() > first.GetProperty("slope").GetDouble());
    }

    public static TheoryData<string[], string> BadArguments => new()
    {
        { ["points", "--generator", "nonesuch"], "unknown generator 'nonesuch'" },
        { ["points", "--generator", "sobol", "--count", "0"], "--count must be at least 1" },
        { ["points", "--generator", "sobol", "--dims", "30000"], "at most 21201 dimensions" },
        { ["points", "--generator", "halton", "--dims", "2000"], "at most 1024 dimensions" },
        { ["points", "--generator", "random", "--randomize", "owen"], "meaningless for 'random'" },
        { ["points", "--generator", "pmj02", "--count", "20000"], "'pmj02' defines at most 16384 points per pixel" },
        { ["points", "--generator", "pmj02", "--randomize", "cranley-patterson"], "meaningless for 'pmj02'" },
        { ["points", "--generator", "lattice", "--count", "20000"], "'lattice' defines at most 16384 points per pixel" },
        { ["points", "--generator", "lattice", "--randomize", "owen"], "meaningless for 'lattice'" },
        { ["points", "--generator", "lattice", "--dims", "13"], "at most 12 dimensions" },
        { ["points", "--generator", "sobol", "--randomize", "shuffle"], "unknown randomization 'shuffle'" },
        { ["points", "--generator", "sobol", "--pixel", "3"], "--pixel expects X,Y" },
        { ["points", "--generator", "sobol", "--format", "xml"], "xml" },
        { ["points"], "--generator" },
        { ["pointstats", "--generator", "sobol", "--count", "100000", "--dims", "2"], "--count must be at most 65536" },
        { ["integrands", "--generator", "sobol", "--max-count", "1000"], "powers of two" },
        { ["integrands", "--generator", "sobol", "--replicates", "1"], "--replicates must be at least 2" },
        { ["nonesuch"], "nonesuch" },
    };

    [Theory]
    [MemberData(nameof(BadArguments))]
    public void Bad_arguments_give_one_line_and_exit_code_2(string[] args, string expected)
    {
        (int code, string output, string error) = Run(args);
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Single(error.TrimEnd('\n').Split('\n'));
        Assert.StartsWith("pathbench: error: ", error, StringComparison.Ordinal);
        Assert.Contains(expected, error, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", error, StringComparison.Ordinal);
    }
}
