using System.CommandLine;
using System.Globalization;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary>The options every sampling command shares, and their translation into a <see cref="SamplerSpec"/>.</summary>
internal sealed class SamplerOptions
{
    public Option<string> Generator { get; } = new("--generator")
    {
        Description = "Sample generator (see 'pathbench samplers')",
        Required = true,
    };

    public Option<string> Randomize { get; } = new("--randomize")
    {
        Description = "Randomization: none, cranley-patterson, digital-shift, owen, digit-permutation; append +antithetic to pair points",
        DefaultValueFactory = _ => "none",
    };

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
    public PointSampler CreateSampler(ParseResult parse, int count, int dims)
    {
        SamplerSpec spec = Spec(parse, count);
        try
        {
            return SamplerCatalog.Create(spec, dims);
        }
        catch (SamplerSpecException e)
        {
            throw new CliUsageException(e.Message, e);
        }
    }

    public SamplerSpec Spec(ParseResult parse, int count)
    {
        string generator = parse.GetValue(Generator)!;
        try
        {
            SamplerCatalog.Find(generator);
            (Randomization kind, bool antithetic) = SamplerCatalog.ParseRandomization(parse.GetValue(Randomize)!);
            return new SamplerSpec(generator, kind, antithetic, count, parse.GetValue(Seed));
        }
        catch (SamplerSpecException e)
        {
            throw new CliUsageException(e.Message, e);
        }
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
