using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.BlueNoise;

/// <summary>What the ranking optimiser is run with; <see cref="Committed"/> made the embedded ranking table.</summary>
/// <param name="Seed">Drives the test integrands and the swap proposals.</param>
/// <param name="Integrands">Test integrands per level and pair.</param>
/// <param name="Sweeps">Proposals per pixel, level and pair.</param>
public sealed record RankingSettings(ulong Seed, int Integrands, int Sweeps)
{
    /// <summary>The settings of the committed table.</summary>
    public static RankingSettings Committed => new(2, 128, 64);

    /// <summary>The settings of one level: the seed tile's, for that sample count alone.</summary>
    public OptimizerSettings ForLevel(OptimizerSettings tile, int level)
    {
        ArgumentNullException.ThrowIfNull(tile);
        return tile with { Seed = Seed, Integrands = Integrands, Sweeps = Sweeps, Spp = [1 << level] };
    }

    /// <summary>The settings as provenance header fields.</summary>
    public IEnumerable<(string Key, string Value)> HeaderFields(OptimizerSettings tile)
    {
        ArgumentNullException.ThrowIfNull(tile);
        string Invariant(int v) => v.ToString(System.Globalization.CultureInfo.InvariantCulture);
        yield return ("tool", "tools/PathBench.BlueNoise (dotnet run -c Release --project tools/PathBench.BlueNoise)");
        yield return ("seed", Seed.ToString(System.Globalization.CultureInfo.InvariantCulture));
        yield return ("levels", "1, 2, 4, 8, 16 samples per pixel; per level and pair a permutation of the seed tile's positions, two 16-bit keys a word");
        yield return ("start", "the seed tile of bluenoise_owen_sobol.bin, each entry with its sequence block");
        yield return ("integrands", Invariant(Integrands) + " random oriented Heaviside steps per level and pair, each seen through a random common Owen scramble");
        yield return ("objective", "energy of the level's error images after a binomial low-pass of order " + Invariant(tile.FilterOrder) + ", toroidal");
        yield return ("search", "pair swaps within " + Invariant(tile.SwapRadius) + " pixels, " + Invariant(Sweeps) + " proposals per pixel, accepted when the energy falls");
    }
}

/// <summary>
/// The ranking keys: for every power-of-two sample count N (1 … 16) and every tabled dimension pair, which
/// entry of the seed tile each pixel takes, so that the errors of N-sample estimates are blue noise
/// across pixels (Heitz, Belcour, Ostromoukhov, Coeurjolly &amp; Iehl 2019, "A low-discrepancy sampler
/// that distributes Monte Carlo errors as a blue noise in screen space", who keep a table per sample
/// count). An entry is a scramble seed word together with a block of the sequence
/// (<see cref="BlueNoiseRankingTable.Block"/>): sample i of the pixel is sequence point
/// i XOR block·N, so the key also chooses which sub-sequence of the Owen-scrambled Sobol sequence the
/// pixel uses.
/// </summary>
/// <remarks>
/// <para>
/// Each level and pair is a permutation of the tile's entries, found by the swaps of
/// <see cref="SeedTileOptimizer"/> with that level's count alone: a swap moves two pixels' whole
/// estimators, so the per-pixel errors (and the mean squared error) never change, only their
/// arrangement; that is what makes the arrangement hold for integrands it was not optimised on.
/// </para>
/// <para>
/// Choosing a free block per pixel under the fixed seeds (a greedy search over 2^16 blocks, so a
/// pixel's error could change) was tried first: its low-band share on fresh steps rose (0.018 to
/// 0.025 at 1 spp, 0.023 to 0.031 at 4 spp) while its energy on the training steps fell: it fits the
/// training integrands instead of arranging the pixels. Moving all six pairs' entries of a pixel
/// together (one permutation per level, on steps in every pair and products of steps in two pairs,
/// so that the pairs' coupling in a path is seen) was tried too: on the fence yard at 4 spp the
/// lowest ring of the structure score rose to 0.95 of white, against 0.84 pair by pair.
/// </para>
/// </remarks>
public static class RankingTileOptimizer
{
    /// <summary>Runs every level and pair from the seed tile's words; the keys are level by level, pair by pair, position by position.</summary>
    public static (int[] Keys, PairOutcome[] Outcomes) Run(RankingSettings settings, OptimizerSettings tile, ReadOnlySpan<uint> seedWords)
    {
        ArgumentNullException.ThrowIfNull(settings);
        ArgumentNullException.ThrowIfNull(tile);
        int n = tile.Tile * tile.Tile;
        if (seedWords.Length != tile.Pairs * n)
        {
            throw new ArgumentException("the seed tile does not match its settings", nameof(seedWords));
        }

        var keys = new int[BlueNoiseRankingTable.Levels * tile.Pairs * n];
        var outcomes = new PairOutcome[BlueNoiseRankingTable.Levels * tile.Pairs];
        var words = new uint[n];
        for (int level = 0; level < BlueNoiseRankingTable.Levels; level++)
        {
            OptimizerSettings s = settings.ForLevel(tile, level);
            for (int pair = 0; pair < tile.Pairs; pair++)
            {
                int at = ((level * tile.Pairs) + pair) * n;
                Span<int> positions = keys.AsSpan(at, n);
                for (int p = 0; p < n; p++)
                {
                    positions[p] = p;
                }

                seedWords.Slice(pair * n, n).CopyTo(words);
                var random = new SeedTileOptimizer.Stream(SampleHash.Combine(SampleHash.Mix64(settings.Seed), (ulong)((level * tile.Pairs) + pair)));
                outcomes[(level * tile.Pairs) + pair] = SeedTileOptimizer.RunPair(s, pair, level, random, words, positions);
            }
        }

        return (keys, outcomes);
    }
}
