using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Sequences;

/// <summary>
/// The published properties of the three families of Christensen, Kensler &amp; Kilpatrick (2018),
/// "Progressive Multi-Jittered Sample Sequences", Comput. Graph. Forum 37(4): pj is stratified in
/// the dyadic squares; pmj also in both 1-D projections; pmj02 in every elementary interval in base 2,
/// so that every prefix of 2^m points is a (0,m,2)-net (Niederreiter 1992, Def. 4.1, checked by
/// <see cref="NetQuality"/>). The sequences are built from fixed seeds: nothing here is random per run.
/// </summary>
public sealed class ProgressiveMultiJitteredTests
{
    private const int Largest = 12; // prefixes up to 4096 points

    private static double[] Prefix(ProgressiveMultiJittered s, int n)
    {
        var points = new double[2 * n];
        for (int i = 0; i < n; i++)
        {
            points[2 * i] = s.X[i] / 4294967296.0;
            points[2 * i + 1] = s.Y[i] / 4294967296.0;
        }

        return points;
    }

    private static ProgressiveMultiJittered ProgressiveMultiJittered02(int table) =>
        ProgressiveMultiJitteredSampler.Sequence(PmjVariant.ProgressiveMultiJittered02, table);

    [Fact]
    public void Every_power_of_two_prefix_of_every_pmj02_sequence_is_a_zero_m_two_net()
    {
        for (int table = 0; table < ProgressiveMultiJitteredSampler.TableCount; table++)
        {
            ProgressiveMultiJittered s = ProgressiveMultiJittered02(table);
            Assert.Equal(0, s.OctaveRetries); // as the construction's remarks state
            for (int m = 0; m <= Largest; m++)
            {
                Assert.True(NetQuality.TValue(Prefix(s, 1 << m), 2, 0, 1) == 0, $"sequence {table}, prefix 2^{m}");
            }
        }

        // The whole table once: 2^14 points.
        ProgressiveMultiJittered first = ProgressiveMultiJitteredSampler.Sequence(PmjVariant.ProgressiveMultiJittered02, 0);
        Assert.Equal(0, NetQuality.TValue(Prefix(first, first.Count), 2, 0, 1));
    }

    [Fact]
    public void Pmj_without_the_zero_two_search_is_not_a_zero_two_sequence()
    {
        // The net check must be able to fail on this family: pmj stratifies the squares and the
        // 1-D strata only, so the oblong elementary intervals go unchecked and some prefix has t > 0.
        ProgressiveMultiJittered s = ProgressiveMultiJitteredSampler.Sequence(PmjVariant.ProgressiveMultiJittered, 0);
        Assert.Contains(Enumerable.Range(4, Largest - 3), m => NetQuality.TValue(Prefix(s, 1 << m), 2, 0, 1) > 0);
    }

    public static TheoryData<PmjVariant> OneDimensional => new() { PmjVariant.ProgressiveMultiJittered, PmjVariant.ProgressiveMultiJittered02 };

    [Theory]
    [MemberData(nameof(OneDimensional))]
    public void Every_prefix_is_stratified_in_each_one_dimensional_projection(PmjVariant variant)
    {
        // Prefix of any length n, 2^(m−1) < n ≤ 2^m: its points lie in distinct 1-D strata of width
        // 2^-m on each axis. Walking i = 0 … 2^m − 1 and failing at the first repeated stratum
        // checks every such n at once.
        ProgressiveMultiJittered s = ProgressiveMultiJitteredSampler.Sequence(variant, 3);
        for (int m = 1; m <= Largest; m++)
        {
            var seenX = new bool[1 << m];
            var seenY = new bool[1 << m];
            for (int i = 0; i < 1 << m; i++)
            {
                uint a = s.X[i] >> (32 - m), b = s.Y[i] >> (32 - m);
                Assert.False(seenX[a], $"x: point {i} repeats a stratum of width 2^-{m}");
                Assert.False(seenY[b], $"y: point {i} repeats a stratum of width 2^-{m}");
                seenX[a] = seenY[b] = true;
            }
        }
    }

    public static TheoryData<PmjVariant> All => new() { PmjVariant.ProgressiveJittered, PmjVariant.ProgressiveMultiJittered, PmjVariant.ProgressiveMultiJittered02 };

    [Theory]
    [MemberData(nameof(All))]
    public void Squares_hold_one_point_and_partners_sit_diagonally_opposite(PmjVariant variant)
    {
        // The construction of the paper (its Fig. 2): the first 4^k points fill the 4^k squares of
        // side 2^-k one each; point N + i (N = 4^k) lies in the sub-square diagonally opposite point
        // i's, and points 2N + i and 3N + i in the other two, diagonally opposite each other.
        ProgressiveMultiJittered s = ProgressiveMultiJitteredSampler.Sequence(variant, 1);
        for (int k = 0; k <= Largest / 2; k++)
        {
            int n = 1 << (2 * k);
            var seen = new bool[n];
            for (int i = 0; i < n; i++)
            {
                int cell = k == 0 ? 0 : (int)(((s.X[i] >> (32 - k)) << k) | (s.Y[i] >> (32 - k)));
                Assert.False(seen[cell], $"{variant}: point {i} shares a square of side 2^-{k}");
                seen[cell] = true;
            }

            if (4 * n > s.Count)
            {
                break;
            }

            for (int i = 0; i < n; i++)
            {
                (uint x0, uint y0) = SubSquare(s, i, k);
                (uint x1, uint y1) = SubSquare(s, n + i, k);
                (uint x2, uint y2) = SubSquare(s, 2 * n + i, k);
                (uint x3, uint y3) = SubSquare(s, 3 * n + i, k);
                Assert.Equal((x0 ^ 1, y0 ^ 1), (x1, y1));
                Assert.Equal((x2 ^ 1, y2 ^ 1), (x3, y3));
                Assert.NotEqual((x0, y0), (x2, y2));
                Assert.NotEqual((x1, y1), (x2, y2));
            }
        }
    }

    private static (uint X, uint Y) SubSquare(ProgressiveMultiJittered s, int i, int k) => (s.X[i] >> (31 - k), s.Y[i] >> (31 - k));

    [Fact]
    public void The_construction_is_a_pure_function_of_its_seed()
    {
        ProgressiveMultiJittered a = ProgressiveMultiJittered.Generate(PmjVariant.ProgressiveMultiJittered02, 10, 42);
        ProgressiveMultiJittered b = ProgressiveMultiJittered.Generate(PmjVariant.ProgressiveMultiJittered02, 10, 42);
        ProgressiveMultiJittered c = ProgressiveMultiJittered.Generate(PmjVariant.ProgressiveMultiJittered02, 10, 43);
        Assert.True(a.X.SequenceEqual(b.X) && a.Y.SequenceEqual(b.Y));
        Assert.False(a.X.SequenceEqual(c.X));
        Assert.Equal(0, NetQuality.TValue(Prefix(c, 1024), 2, 0, 1));
    }

    public static TheoryData<string, Randomization> Randomized => new()
    {
        { "pmj02", Randomization.DigitalShift }, { "pmj02", Randomization.Owen },
    };

    [Theory]
    [MemberData(nameof(Randomized))]
    public void Randomization_keeps_every_prefix_a_net_in_every_pair(string generator, Randomization r)
    {
        // A digital shift and a nested scramble map each dyadic interval onto one of the same
        // length (Owen 1995, Prop. 1, for the nested scramble; the shift is its special case), so
        // the elementary intervals keep one point each; the padded pairs are sequences of their own.
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, false, 1024, 9), 6);
        double[] bare = Prefix(ProgressiveMultiJitteredSampler.Sequence(PmjVariant.ProgressiveMultiJittered02, 0), 1024);
        for (int px = 0; px < 3; px++)
        {
            ulong key = s.PixelKey(px, 7);
            for (int m = 0; m <= 10; m++)
            {
                int n = 1 << m;
                var points = new double[6 * n];
                s.Fill(key, 6, points);
                for (int pair = 0; pair < 3; pair++)
                {
                    Assert.True(NetQuality.TValue(points, 6, 2 * pair, 2 * pair + 1) == 0, $"pixel {px}, pair {pair}, prefix 2^{m}");
                }
            }

            var first = new double[2048];
            s.Fill(key, 2, first);
            Assert.True(first.Zip(bare).Count(z => Math.Abs(z.First - z.Second) < 1e-6) < 8, "the randomization left the points in place");
        }
    }

    [Fact]
    public void Points_do_not_depend_on_the_planned_count()
    {
        // Progressive: a prefix is the same whatever count was planned, which is what lets the study
        // take every spp of a ladder from one render (GeneratorInfo.NeedsCount is false).
        foreach (string g in new[] { "pmj02", "pmj", "pj" })
        {
            Assert.False(SamplerCatalog.Find(g).NeedsCount);
            PointSampler small = SamplerCatalog.Create(new SamplerSpec(g, Randomization.Owen, false, 16, 5), 4);
            PointSampler large = SamplerCatalog.Create(new SamplerSpec(g, Randomization.Owen, false, 4096, 5), 4);
            for (uint i = 0; i < 16; i++)
            {
                for (int d = 0; d < 4; d++)
                {
                    Assert.Equal(small.Sample(small.PixelKey(2, 3), i, d), large.Sample(large.PixelKey(2, 3), i, d));
                }
            }
        }
    }

    [Fact]
    public void Counts_past_the_tables_and_a_toroidal_shift_are_refused()
    {
        var e = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Create(new SamplerSpec("pmj02", Randomization.Owen, false, ProgressiveMultiJitteredSampler.MaxPoints + 1, 0), 2));
        Assert.Contains("at most 16384 points", e.Message, StringComparison.Ordinal);
        var cp = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Create(new SamplerSpec("pmj02", Randomization.CranleyPatterson, false, 16, 0), 2));
        Assert.Contains("dyadic", cp.Message, StringComparison.Ordinal);
    }
}
