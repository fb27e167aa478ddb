using PathBench.Sampling;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.BlueNoise;

/// <summary>What the optimiser is run with; <see cref="Committed"/> made the embedded table.</summary>
/// <param name="Seed">Drives the initial seeds, the test integrands and the swap proposals.</param>
/// <param name="Tile">Edge of the tile in pixels (the table file holds 64).</param>
/// <param name="Pairs">Dimension pairs optimised, each on its own (the table file holds 4).</param>
/// <param name="Integrands">Test integrands per pair.</param>
/// <param name="Spp">Sample counts whose errors are made blue together, each weighted by its own error scale.</param>
/// <param name="FilterOrder">Order B (even) of the binomial low-pass filter whose output energy is minimised: a σ = √(B/4)-pixel near-Gaussian.</param>
/// <param name="Sweeps">Proposals per pixel.</param>
/// <param name="SwapRadius">Largest offset, in pixels along each axis, between the two pixels of a proposed swap.</param>
public sealed record OptimizerSettings(ulong Seed, int Tile, int Pairs, int Integrands, int[] Spp, int FilterOrder, int Sweeps, int SwapRadius)
{
    /// <summary>The settings of the committed table.</summary>
    public static OptimizerSettings Committed => new(1, BlueNoiseSeedTable.Tile, BlueNoiseSeedTable.Pairs, 128, [1, 2, 4, 8], 4, 64, 31);

    /// <summary>The settings as provenance header fields.</summary>
    public IEnumerable<(string Key, string Value)> HeaderFields()
    {
        yield return ("tool", "tools/PathBench.BlueNoise (dotnet run -c Release --project tools/PathBench.BlueNoise)");
        yield return ("seed", Seed.ToString(System.Globalization.CultureInfo.InvariantCulture));
        yield return ("tile", Invariant(Tile));
        yield return ("pairs", Invariant(Pairs));
        yield return ("integrands", Invariant(Integrands) + " random oriented Heaviside steps per pair, each seen through a random common Owen scramble");
        yield return ("spp", string.Join(",", Spp.Select(Invariant)));
        yield return ("objective", "energy of the error images after a binomial low-pass of order " + Invariant(FilterOrder) + ", toroidal");
        yield return ("search", "pair swaps within " + Invariant(SwapRadius) + " pixels, " + Invariant(Sweeps) + " proposals per pixel, accepted when the energy falls");
    }

    private static string Invariant(int v) => v.ToString(System.Globalization.CultureInfo.InvariantCulture);
}

/// <summary>What one pair's optimisation achieved.</summary>
/// <param name="InitialEnergy">Low-pass energy of the random arrangement (white noise).</param>
/// <param name="FinalEnergy">Low-pass energy after the swaps.</param>
/// <param name="Accepted">Swaps accepted.</param>
public sealed record PairOutcome(double InitialEnergy, double FinalEnergy, long Accepted);

/// <summary>
/// Places per-pixel Owen scrambling seeds over a toroidal tile so that the errors of a set of test
/// integrands are blue noise across pixels, by swapping seeds between pixels (Heitz &amp; Belcour 2019,
/// "Distributing Monte Carlo errors as a blue noise in screen space by permuting pixel seeds
/// temporally", Comput. Graph. Forum 38(4): there the swaps are driven by a rendered frame's errors;
/// here, as in Heitz, Belcour, Ostromoukhov, Coeurjolly &amp; Iehl 2019, by test integrands known in
/// advance, random oriented Heaviside steps).
/// </summary>
/// <remarks>
/// <para>
/// A swap moves two pixels' seeds, so the set of per-pixel errors (and with it the mean squared
/// error) never changes: only their arrangement does. The objective is E = Σ_v Σ_q ((G ∗ e_v)(q))²,
/// the energy left after a low-pass filter G, summed over the error images e_v (one per integrand
/// and sample count, centred and scaled to unit mean square per sample count). With H = G ∗ G ∗ e
/// kept up to date, a swap of p₁ and p₂ with δ = e(p₂) − e(p₁) changes E by
/// Σ_v 2δ_v(H_v(p₁) − H_v(p₂)) + 2δ_v²((G∗G)(0) − (G∗G)(p₁ − p₂)): O(V) per proposal.
/// </para>
/// <para>
/// The integrands are seen the way the <c>owen</c> randomization of the sampler shows them to the
/// pixels: through an Owen scramble common to all pixels, a different random one per integrand.
/// Only IEEE-754 basic operations (and <see cref="PortableMath"/>) are used, single-threaded, in
/// a fixed order: the table is a pure function of the settings on any machine.
/// </para>
/// </remarks>
public static class SeedTileOptimizer
{
    /// <summary>Runs every pair; the words are pair by pair, row by row.</summary>
    public static (uint[] Words, PairOutcome[] Outcomes) Run(OptimizerSettings settings)
    {
        ArgumentNullException.ThrowIfNull(settings);
        if (settings.FilterOrder % 2 != 0 || 2 * settings.FilterOrder + 1 > settings.Tile || settings.SwapRadius < 1 || 2 * settings.SwapRadius + 1 > settings.Tile)
        {
            throw new ArgumentException("the filter order must be even and filter and swaps must fit in the tile", nameof(settings));
        }

        int n = settings.Tile * settings.Tile;
        var words = new uint[settings.Pairs * n];
        var outcomes = new PairOutcome[settings.Pairs];
        for (int pair = 0; pair < settings.Pairs; pair++)
        {
            Span<uint> pairWords = words.AsSpan(pair * n, n);
            var random = new Stream(SampleHash.Combine(SampleHash.Mix64(settings.Seed), (ulong)pair));
            for (int p = 0; p < n; p++)
            {
                pairWords[p] = random.Next32();
            }

            outcomes[pair] = RunPair(settings, pair, -1, random, pairWords, []);
        }

        return (words, outcomes);
    }

    internal sealed class Stream(ulong key)
    {
        private ulong _counter;

        public ulong Next() => SampleHash.Combine(key, _counter++);

        public uint Next32() => (uint)(Next() >> 32);

        public double Unit() => SampleHash.ToUnit(Next());

        public int Below(int bound) => (int)((Next() >> 33) % (ulong)bound);
    }

    /// <summary>
    /// Rearranges one pair's words (with <paramref name="positions"/>, when given, swapped alongside)
    /// to minimise the low-pass energy; with <paramref name="level"/> ≥ 0, pixel sample i is sequence
    /// point i XOR (<see cref="BlueNoiseRankingTable.Block"/>(word) · 2^level), as the ranking tables use it.
    /// </summary>
    internal static PairOutcome RunPair(OptimizerSettings s, int pair, int level, Stream random, Span<uint> words, Span<int> positions)
    {
        ArgumentNullException.ThrowIfNull(s);
        ArgumentNullException.ThrowIfNull(random);
        int t = s.Tile, n = t * t, levels = s.Spp.Length, v = s.Integrands * levels;
        double[] e = Errors(s, pair, level, words, random);
        Normalise(e, n, s.Integrands, levels);

        int b = s.FilterOrder;
        double[] gg = LowPass.Autocorrelation(b);
        double[] h = LowPass.Smooth(e, t, v, gg, b);
        double energy = LowPass.Dot(e, h);
        double initial = energy;
        long accepted = 0;
        int side = 2 * s.SwapRadius + 1;
        long proposals = (long)s.Sweeps * n;
        var delta = new double[v];
        for (long k = 0; k < proposals; k++)
        {
            int p1 = random.Below(n);
            int offset = random.Below(side * side);
            int dx = (offset % side) - s.SwapRadius, dy = (offset / side) - s.SwapRadius;
            if (dx == 0 && dy == 0)
            {
                continue;
            }

            int x1 = p1 % t, y1 = p1 / t;
            int p2 = (Wrap(y1 + dy, t) * t) + Wrap(x1 + dx, t);
            double cross = 2 * (Gg(gg, b, 0, 0) - Gg(gg, b, dx, dy));
            double change = 0;
            int r1 = p1 * v, r2 = p2 * v;
            for (int c = 0; c < v; c++)
            {
                double d = e[r2 + c] - e[r1 + c];
                change += (2 * d * (h[r1 + c] - h[r2 + c])) + (cross * d * d);
            }

            if (!(change < 0))
            {
                continue;
            }

            accepted++;
            energy += change;
            (words[p1], words[p2]) = (words[p2], words[p1]);
            if (!positions.IsEmpty)
            {
                (positions[p1], positions[p2]) = (positions[p2], positions[p1]);
            }

            for (int c = 0; c < v; c++)
            {
                delta[c] = e[r2 + c] - e[r1 + c];
                (e[r1 + c], e[r2 + c]) = (e[r2 + c], e[r1 + c]);
            }

            LowPass.AddWindow(h, t, gg, b, x1, y1, delta, 1);
            LowPass.AddWindow(h, t, gg, b, p2 % t, p2 / t, delta, -1);
        }

        return new PairOutcome(initial, energy, accepted);
    }

    // e[p·V + k·L + l]: the mean of integrand k over the first Spp[l] points of pixel p.
    private static double[] Errors(OptimizerSettings s, int pair, int rankLevel, ReadOnlySpan<uint> words, Stream random)
    {
        int n = words.Length, levels = s.Spp.Length, v = s.Integrands * levels, most = s.Spp[^1];
        var steps = new (double Nx, double Ny, double Cx, double Cy, uint ScrambleX, uint ScrambleY)[s.Integrands];
        for (int k = 0; k < steps.Length; k++)
        {
            (double sin, double cos) = PortableMath.SinCos(2 * Math.PI * random.Unit());
            steps[k] = (cos, sin, random.Unit(), random.Unit(), random.Next32(), random.Next32());
        }

        SobolMatrices matrices = SobolMatrices.Default;
        var e = new double[n * v];
        var xs = new double[most];
        var ys = new double[most];
        for (int p = 0; p < n; p++)
        {
            (uint sx, uint sy) = BlueNoiseSeedTable.ScrambleSeeds(words[p]);
            uint key = rankLevel < 0 ? 0 : BlueNoiseRankingTable.Block(words[p]) << rankLevel;
            for (int k = 0; k < steps.Length; k++)
            {
                var step = steps[k];
                int count = 0, level = 0;
                for (int i = 0; i < most; i++)
                {
                    uint reversed = BitReversal.Reverse((uint)i ^ key);
                    double x = Unit(BlueNoiseSobolSampler.ScrambledReversed(matrices, reversed, 2 * pair, sx, step.ScrambleX));
                    double y = Unit(BlueNoiseSobolSampler.ScrambledReversed(matrices, reversed, (2 * pair) + 1, sy, step.ScrambleY));
                    if (((x - step.Cx) * step.Nx) + ((y - step.Cy) * step.Ny) >= 0)
                    {
                        count++;
                    }

                    if (i + 1 == s.Spp[level])
                    {
                        e[(p * v) + (k * levels) + level] = (double)count / (i + 1);
                        level++;
                    }
                }
            }
        }

        return e;
    }

    private static double Unit(uint reversed) => (BitReversal.Reverse(reversed) + 0.5) / 4294967296.0;

    // Centre every error image (swaps keep its mean) and give each sample count unit mean square.
    private static void Normalise(double[] e, int n, int integrands, int levels)
    {
        int v = integrands * levels;
        for (int c = 0; c < v; c++)
        {
            double mean = 0;
            for (int p = 0; p < n; p++)
            {
                mean += e[(p * v) + c];
            }

            mean /= n;
            for (int p = 0; p < n; p++)
            {
                e[(p * v) + c] -= mean;
            }
        }

        for (int l = 0; l < levels; l++)
        {
            double sum = 0;
            for (int p = 0; p < n; p++)
            {
                for (int k = 0; k < integrands; k++)
                {
                    double x = e[(p * v) + (k * levels) + l];
                    sum += x * x;
                }
            }

            double scale = sum > 0 ? 1 / Math.Sqrt(sum / (n * integrands)) : 0;
            for (int p = 0; p < n; p++)
            {
                for (int k = 0; k < integrands; k++)
                {
                    e[(p * v) + (k * levels) + l] *= scale;
                }
            }
        }
    }

    private static double Gg(double[] gg, int b, int dx, int dy)
    {
        if (Math.Abs(dx) > b || Math.Abs(dy) > b)
        {
            return 0;
        }

        // Separable: the 2-D value is the product of the two axes'.
        return gg[b + dx] * gg[b + dy];
    }

    private static int Wrap(int i, int t) => ((i % t) + t) % t;
}
