using System.Diagnostics;
using System.Globalization;
using PathBench.BlueNoise;
using PathBench.Sampling.Sequences;

// Regenerates the blue-noise tables from OptimizerSettings.Committed and RankingSettings.Committed:
//   dotnet run -c Release --project tools/PathBench.BlueNoise [-- --out-dir DIR]
// writing DIR/bluenoise_owen_sobol.bin (scrambling seeds) and DIR/bluenoise_owen_sobol_ranking.bin
// (ranking keys, optimised on top of those seeds). Both are pure functions of the settings (see the
// optimisers), so a rerun writes the same bytes.
string directory = "src/PathBench.Sampling/Data";
OptimizerSettings settings = OptimizerSettings.Committed;
RankingSettings ranking = RankingSettings.Committed;
for (int i = 0; i < args.Length; i++)
{
    if (args[i] == "--out-dir" && i + 1 < args.Length)
    {
        directory = args[++i];
    }
    else if (args[i] == "--try-ranking" && i + 2 < args.Length)
    {
        // Exploration only: --try-ranking INTEGRANDS SWEEPS, e.g. 64 32.
        ranking = ranking with { Integrands = Int(args[++i]), Sweeps = Int(args[++i]) };
    }
    else
    {
        Console.Error.WriteLine($"bluenoise: unknown argument '{args[i]}'; usage: [--out-dir DIR]");
        return 2;
    }
}

var clock = Stopwatch.StartNew();
(uint[] words, PairOutcome[] outcomes) = SeedTileOptimizer.Run(settings);
double seedSeconds = clock.Elapsed.TotalSeconds;
for (int pair = 0; pair < outcomes.Length; pair++)
{
    PairOutcome o = outcomes[pair];
    Console.WriteLine(Text($"pair {pair} (dimensions {2 * pair}-{(2 * pair) + 1}): low-pass energy {o.FinalEnergy / o.InitialEnergy:F3} of the random arrangement's, {o.Accepted} swaps"));
}

clock.Restart();
(int[] keys, PairOutcome[] ranked) = RankingTileOptimizer.Run(ranking, settings, words);
double rankingSeconds = clock.Elapsed.TotalSeconds;

// Low-band shares of fresh steps (white noise: 0.047): the seed tile alone, and the level's ranking.
int n = settings.Tile * settings.Tile;
for (int level = 0; level < BlueNoiseRankingTable.Levels; level++)
{
    int spp = 1 << level;
    Console.Write(Text($"spp {spp,2}: low-band share seeds alone / ranked"));
    for (int pair = 0; pair < settings.Pairs; pair++)
    {
        PairOutcome o = ranked[(level * settings.Pairs) + pair];
        int at = ((level * settings.Pairs) + pair) * n;
        ReadOnlySpan<uint> pairWords = words.AsSpan(pair * n, n);
        (uint[] levelWords, uint[] blocks) = SpectrumCheck.Ranked(pairWords, q => keys[at + q], level);
        double alone = SpectrumCheck.LowBandShare(pairWords, [], settings.Tile, pair, spp, 16, 99);
        double share = SpectrumCheck.LowBandShare(levelWords, blocks, settings.Tile, pair, spp, 16, 99);
        Console.Write(Text($"  pair {pair}: {alone:F3}/{share:F3} ({o.FinalEnergy / o.InitialEnergy:F2})"));
    }

    Console.WriteLine();
}

string seedFile = Path.Combine(directory, "bluenoise_owen_sobol.bin");
string rankingFile = Path.Combine(directory, "bluenoise_owen_sobol_ranking.bin");
File.WriteAllBytes(seedFile, BlueNoiseSeedTable.Write(settings.HeaderFields(), words));
File.WriteAllBytes(rankingFile, BlueNoiseRankingTable.Write(ranking.HeaderFields(settings), keys));
Console.WriteLine(Text($"wrote {seedFile} (seeds, {seedSeconds:F1} s) and {rankingFile} (ranking keys, {rankingSeconds:F1} s); optimisation time only"));
return 0;

static int Int(string s) => int.Parse(s, CultureInfo.InvariantCulture);

static string Text(FormattableString s) => s.ToString(CultureInfo.InvariantCulture);
