using System.CommandLine;
using System.Globalization;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary>The options every sampling command shares, and their translation into a <see cref="SamplerSpec"/>.</summary>
/// <remarks>Library errors (<see cref="SamplerSpecException"/>) propagate: <see cref="CliApp"/> prints them with exit code 2.</remarks>
internal sealed class SamplerOptions
{
    /// <summary>
    /// Creates the options; with no <paramref name="defaultGenerator"/>, --generator is required. With
    /// no --randomize, the generator's own default from the catalog is used (owen for sobol,
    /// digit-permutation for halton, none for the sets that are random by construction).
    /// </summary>
    public SamplerOptions(string? defaultGenerator = null)
    {
        Generator = new Option<string>("--generator") { Description = "Sample generator (see 'pathbench samplers')" };
        if (defaultGenerator is null)
        {
            Generator.Required = true;
        }
        else
        {
            Generator.DefaultValueFactory = _ => defaultGenerator;
        }

        Randomize = new Option<string>("--randomize")
        {
            Description = "Randomization: none, cranley-patterson, digital-shift, owen, digit-permutation; append +antithetic to pair points " +
                "(default: the generator's own, see 'pathbench samplers')",
        };
    }

    public Option<string> Generator { get; }

    public Option<string> Randomize { get; }

    public Option<ulong> Seed { get; } = new("--seed")
    {
        Description = "Global seed; different seeds give independent replicates",
        DefaultValueFactory = _ => 0UL,
    };

    public void AddTo(Command command)
    {
        command.Options.Add(Generator);
        command.Options.Add(Randomize);
        command.Options.Add(Seed);
    }

    /// <summary>Builds and validates the sampler for <paramref name="count"/> points of <paramref name="dims"/> dimensions.</summary>
    public PointSampler CreateSampler(ParseResult parse, int count, int dims) => SamplerCatalog.Create(Spec(parse, count), dims);

    /// <summary>The spec the options describe, with the generator and randomization names checked.</summary>
    public SamplerSpec Spec(ParseResult parse, int count)
    {
        string generator = parse.GetValue(Generator)!;
        GeneratorInfo info = SamplerCatalog.Find(generator);
        (Randomization kind, bool antithetic) = parse.GetValue(Randomize) is { } text
            ? SamplerCatalog.ParseRandomization(text)
            : (info.DefaultRandomization, false);
        return new SamplerSpec(generator, kind, antithetic, count, parse.GetValue(Seed));
    }

    /// <summary>Parses "X,Y" as two non-negative integers.</summary>
    public static (int X, int Y) ParsePixel(string text)
    {
        string[] parts = text.Split(',');
        if (parts.Length == 2
            && int.TryParse(parts[0], NumberStyles.None, CultureInfo.InvariantCulture, out int x)
            && int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out int y))
        {
            return (x, y);
        }

        throw new CliUsageException($"--pixel expects X,Y with two non-negative integers, got '{text}'");
    }

    /// <summary>
    /// Bytes a generator's own tables may take per point of the count it is planned for: the rank-1 lattice's
    /// component-by-component search holds two doubles a point (RankOneLattice); every other built-in
    /// generator's tables have a fixed size, and a point file is checked when it is read.
    /// </summary>
    public const long GeneratorBytesPerPoint = 2 * sizeof(double);

    public static void RequireAtLeast(string option, long value, long min)
    {
        if (value < min)
        {
            throw new CliUsageException($"{option} must be at least {min}, got {value}");
        }
    }

    public static void RequireAtMost(string option, long value, long max, string why)
    {
        if (value > max)
        {
            throw new CliUsageException($"{option} must be at most {max} ({why}), got {value}");
        }
    }
}
