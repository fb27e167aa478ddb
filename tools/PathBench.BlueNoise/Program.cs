using System.Diagnostics;
using System.Globalization;
using PathBench.BlueNoise;
using PathBench.Sampling.Sequences;

// Regenerates src/PathBench.Sampling/Data/bluenoise_owen_sobol.bin from OptimizerSettings.Committed:
//   dotnet run -c Release --project tools/PathBench.BlueNoise [-- --out PATH]
// The output is a pure function of the settings (see SeedTileOptimizer), so a rerun writes the same bytes.
string output = "src/PathBench.Sampling/Data/bluenoise_owen_sobol.bin";
OptimizerSettings settings = OptimizerSettings.Committed;
for (int i = 0; i < args.Length; i++)
{
    if (args[i] == "--out" && i + 1 < args.Length)
    {
        output = args[++i];
    }
    else if (args[i] == "--try" && i + 4 < args.Length)
    {
        // Exploration only: --try SPP INTEGRANDS RADIUS SWEEPS, e.g. --try 1,2,4 16 16 64.
        settings = settings with
        {
            Spp = [.. args[++i].Split(',').Select(x => int.Parse(x, CultureInfo.InvariantCulture))],
            Integrands = int.Parse(args[++i], CultureInfo.InvariantCulture),
            SwapRadius = int.Parse(args[++i], CultureInfo.InvariantCulture),
            Sweeps = int.Parse(args[++i], CultureInfo.InvariantCulture),
        };
    }
    else
    {
        Console.Error.WriteLine($"bluenoise: unknown argument '{args[i]}'; usage: [--out PATH]");
        return 2;
    }
}

var clock = Stopwatch.StartNew();
(uint[] words, PairOutcome[] outcomes) = SeedTileOptimizer.Run(settings);
clock.Stop();
for (int pair = 0; pair < outcomes.Length; pair++)
{
    PairOutcome o = outcomes[pair];
    Console.WriteLine(string.Create(CultureInfo.InvariantCulture,
        $"pair {pair} (dimensions {2 * pair}-{(2 * pair) + 1}): low-pass energy {o.FinalEnergy / o.InitialEnergy:F3} of the random arrangement's, {o.Accepted} swaps"));
}

int n = settings.Tile * settings.Tile;
foreach (int spp in new[] { 1, 2, 4, 8, 16 })
{
    Console.Write(string.Create(CultureInfo.InvariantCulture, $"spp {spp,2}: low-band share"));
    for (int pair = 0; pair < settings.Pairs; pair++)
    {
        double blue = SpectrumCheck.LowBandShare(words.AsSpan(pair * n, n), settings.Tile, pair, spp, 16, 99);
        Console.Write(string.Create(CultureInfo.InvariantCulture, $"  pair {pair}: {blue:F4}"));
    }

    Console.WriteLine();
}

File.WriteAllBytes(output, BlueNoiseSeedTable.Write(settings.HeaderFields(), words));
Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"wrote {output} in {clock.Elapsed.TotalSeconds:F1} s (optimisation only)"));
return 0;
