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
                string points = g.MaxPoints == int.MaxValue ? "" : $", <= {g.MaxPoints} points";
                string origin = g.Origin is null ? "" : $" [{g.Origin}]";
                io.Out.WriteLine($"  {g.Name,-16} {g.Source}; {(g.NeedsCount ? "needs --count" : "sequence")}, {dims}{points}, randomize {randomizations} (default {RandomizationNames.NameOf(g.DefaultRandomization)}){origin}");
            }

            io.Out.WriteLine($"  {SamplerCatalog.FilePrefix + "PATH",-16} precomputed points, one per line (CSV) or binary; the same set in every pixel, randomize none|cranley-patterson|digital-shift (default cranley-patterson); see tools/point-files.md");

            io.Out.WriteLine("randomizations:");
            foreach ((Randomization _, string name, string source) in RandomizationNames.All)
            {
                io.Out.WriteLine($"  {name,-18} {source}");
            }

            io.Out.WriteLine($"  {RandomizationNames.Antithetic,-18} antithetic variates: point 2k+1 mirrors point 2k (1 - x); combine as R+antithetic");
            io.Out.WriteLine("stratified hemisphere sampling:");
            io.Out.WriteLine("  render with --generator jittered (or multi-jittered) and --hemisphere uniform|cosine: each 2-D pair, the directions' included,");
            io.Out.WriteLine("  is jittered, and both warps map the strata of the square onto regions of equal measure, one sample in each");
            io.Out.WriteLine("  (cosine: the concentric map, Shirley & Chiu 1997, J. Graphics Tools 2(3); uniform: z = 1 - u, equal areas by Archimedes)");
            return 0;
        });
        return command;
    }
}
