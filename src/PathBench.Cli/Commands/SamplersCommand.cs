using System.CommandLine;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary><c>pathbench samplers</c>: the generators and randomizations, one line each with its published source.</summary>
internal static class SamplersCommand
{
    public static Command Create(CliIo io)
    {
        var command = new Command("samplers", "List sample generators and randomizations with their published sources");
        command.SetAction(_ =>
        {
            io.Out.WriteLine("generators:");
            foreach (GeneratorInfo g in SamplerCatalog.Generators)
            {
                string dims = g.MaxDimensions == int.MaxValue ? "any dims" : $"<= {g.MaxDimensions} dims";
                string randomizations = string.Join("|", g.Randomizations.Select(RandomizationNames.NameOf));
                io.Out.WriteLine($"  {g.Name,-16} {g.Source}; {(g.NeedsCount ? "needs --count" : "sequence")}, {dims}, randomize {randomizations} (default {RandomizationNames.NameOf(g.DefaultRandomization)})");
            }

            io.Out.WriteLine("randomizations:");
            foreach ((Randomization _, string name, string source) in RandomizationNames.All)
            {
                io.Out.WriteLine($"  {name,-18} {source}");
            }

            io.Out.WriteLine($"  {RandomizationNames.Antithetic,-18} antithetic variates: point 2k+1 mirrors point 2k (1 - x); combine as R+antithetic");
            return 0;
        });
        return command;
    }
}
