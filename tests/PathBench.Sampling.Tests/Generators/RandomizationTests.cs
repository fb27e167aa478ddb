using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Generators;

public sealed class RandomizationTests
{
    [Fact]
    public void Cranley_patterson_rotation_keeps_one_point_per_stratum_in_each_dimension()
    {
        // Sobol's first 2^m points put one point in each interval [k/2^m, (k+1)/2^m) of every
        // one-dimensional projection; a toroidal shift by u moves each to [(k+u)/2^m, …) mod 1,
        // so the gaps between sorted coordinates stay exactly 1/2^m (Cranley & Patterson 1976).
        const int n = 256, dims = 6;
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.CranleyPatterson, false, n, 11), dims);
        ulong key = s.PixelKey(2, 9);
        for (int d = 0; d < dims; d++)
        {
            double[] x = Enumerable.Range(0, n).Select(i => s.Sample(key, (uint)i, d)).Order().ToArray();
            for (int i = 1; i < n; i++)
            {
                Assert.Equal(1.0 / n, x[i] - x[i - 1], 12);
            }

            Assert.Equal(1.0 / n, x[0] + 1 - x[n - 1], 12);
        }
    }

    public static TheoryData<string, Randomization> RandomizedMarginals => new()
    {
        { "sobol", Randomization.CranleyPatterson },
        { "halton", Randomization.CranleyPatterson },
        { "sobol", Randomization.Owen },
        { "sobol", Randomization.DigitalShift },
        { "halton", Randomization.DigitPermutation },
        { "pmj02", Randomization.Owen },
        { "pmj02", Randomization.DigitalShift },
        { "pj", Randomization.DigitalShift },
        { "lattice", Randomization.CranleyPatterson },
    };

    [Theory]
    [MemberData(nameof(RandomizedMarginals))]
    public void A_randomized_coordinate_is_uniform_across_seeds(string generator, Randomization r)
    {
        // One fixed point (index 5, dimension 3) over 4000 independent seeds must be U(0,1):
        // Kolmogorov–Smirnov at α = 0.001 (see Uniformity), so a correct implementation fails
        // with probability about 0.001 per case.
        const int seeds = 4000;
        var x = new double[seeds];
        for (int k = 0; k < seeds; k++)
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, false, 16, (ulong)k), 4);
            x[k] = s.Sample(s.PixelKey(0, 0), 5, 3);
        }

        double ks = Uniformity.KolmogorovSmirnov(x);
        Assert.True(ks < Uniformity.CriticalValue001, $"KS statistic √N·D = {ks}");
    }

    public static TheoryData<string, Randomization> AntitheticCases => new()
    {
        { "random", Randomization.None },
        { "sobol", Randomization.Owen },
        { "halton", Randomization.DigitPermutation },
        { "jittered", Randomization.None },
    };

    [Theory]
    [MemberData(nameof(AntitheticCases))]
    public void Antithetic_pairs_sum_to_one(string generator, Randomization r)
    {
        // Antithetic variates (Hammersley & Morton 1956): x' = 1 − x in every coordinate.
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, true, 64, 3), 5);
        ulong key = s.PixelKey(4, 4);
        for (uint k = 0; k < 32; k++)
        {
            for (int d = 0; d < 5; d++)
            {
                double a = s.Sample(key, 2 * k, d), b = s.Sample(key, 2 * k + 1, d);
                Assert.InRange(b, 0.0, Math.BitDecrement(1.0));
                Assert.True(Math.Abs(a + b - 1.0) <= 2.3e-16, $"pair {k}, dim {d}: {a} + {b}");
            }
        }
    }

    [Fact]
    public void Pixels_and_seeds_are_decorrelated()
    {
        PointSampler a = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 16, 1), 2);
        PointSampler b = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 16, 2), 2);
        Assert.NotEqual(a.Sample(a.PixelKey(0, 0), 0, 0), a.Sample(a.PixelKey(1, 0), 0, 0));
        Assert.NotEqual(a.Sample(a.PixelKey(0, 0), 0, 0), a.Sample(a.PixelKey(0, 1), 0, 0));
        Assert.NotEqual(a.Sample(a.PixelKey(0, 0), 0, 0), b.Sample(b.PixelKey(0, 0), 0, 0));
    }

    public static TheoryData<string, string> MeaninglessCombinations => new()
    {
        { "random", "owen" },
        { "random", "cranley-patterson" },
        { "jittered", "digital-shift" },
        { "halton", "owen" },
        { "hammersley", "digit-permutation" },
        { "sobol", "digit-permutation" },
        { "pmj02", "cranley-patterson" },
        { "pmj", "digit-permutation" },
        { "lattice", "owen" },
        { "lattice", "digital-shift" },
        { "bluenoise", "cranley-patterson" },
        { "bluenoise", "digital-shift" },
    };

    [Theory]
    [MemberData(nameof(MeaninglessCombinations))]
    public void Meaningless_combinations_are_refused_with_a_reason(string generator, string randomize)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        var e = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Create(new SamplerSpec(generator, r, anti, 16, 0), 2));
        Assert.Contains("meaningless", e.Message, StringComparison.Ordinal);
        Assert.Contains(generator, e.Message, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("owen+antithetic", Randomization.Owen, true)]
    [InlineData("antithetic", Randomization.None, true)]
    [InlineData("none", Randomization.None, false)]
    [InlineData("digital-shift", Randomization.DigitalShift, false)]
    public void Randomization_names_parse(string text, Randomization kind, bool antithetic)
    {
        Assert.Equal((kind, antithetic), SamplerCatalog.ParseRandomization(text));
    }

    [Theory]
    [InlineData("owen+owen")]
    [InlineData("scramble")]
    [InlineData("antithetic+antithetic")]
    public void Bad_randomization_names_are_refused(string text)
    {
        Assert.Throws<SamplerSpecException>(() => SamplerCatalog.ParseRandomization(text));
    }

    [Theory]
    [InlineData(16, 4, 4)]
    [InlineData(12, 3, 4)]
    [InlineData(7, 1, 7)]
    [InlineData(32, 4, 8)]
    [InlineData(1, 1, 1)]
    public void Stratum_grid_has_exactly_n_cells(int n, int columns, int rows)
    {
        Assert.Equal(new StratumGrid(columns, rows), StratumGrid.For(n));
    }
}

/// <summary>
/// Random digit permutations keep the radical inverse's stratification: the first b^m points
/// of a base-b dimension fall one in each interval [j b^−m, (j+1) b^−m), for any permutations
/// (each index below b^m has a distinct m-digit tuple, and permuting each digit position keeps
/// the tuples distinct; Braaten &amp; Weller 1979; Owen 1995 §3 for the nested case).
/// </summary>
/// <summary>The default randomization each generator brings when none is asked for.</summary>
public sealed class DefaultRandomizationTests
{
    /// <summary>
    /// Every default is one the generator accepts and gives random points, so a render with no
    /// --randomize is an unbiased estimate (common practice: the usual randomized form of each family,
    /// Owen 1995 for Sobol, digit permutations for Halton, Cranley and Patterson 1976 for Hammersley).
    /// </summary>
    [Fact]
    public void Every_default_is_accepted_and_randomized()
    {
        foreach (GeneratorInfo g in SamplerCatalog.Generators)
        {
            Assert.Contains(g.DefaultRandomization, g.Randomizations);
            Assert.True(g.IsRandomized(g.DefaultRandomization), $"{g.Name}'s default {g.DefaultRandomization} leaves it deterministic");
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(g.Name, g.DefaultRandomization, false, 16, 1), 2);
            Assert.InRange(s.Sample(0, 3, 1), 0.0, 1.0);
        }
    }
}

public sealed class DigitPermutationStratificationTests
{
    [Theory]
    [InlineData(1, 3, 3)]   // dimension 1: base 3, 27 points
    [InlineData(1, 3, 4)]   // 81 points
    [InlineData(2, 5, 3)]   // base 5, 125 points
    [InlineData(3, 7, 2)]   // base 7, 49 points
    public void First_b_to_the_m_points_fill_every_stratum(int dimension, int b, int m)
    {
        int n = (int)Math.Pow(b, m);
        for (ulong seed = 0; seed < 50; seed++)
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec("halton", Randomization.DigitPermutation, false, n, seed), dimension + 1);
            ulong key = s.PixelKey((int)seed, 3);
            var strata = new bool[n];
            for (int i = 0; i < n; i++)
            {
                int j = (int)(s.Sample(key, (uint)i, dimension) * n);
                Assert.False(strata[j], $"seed {seed}: stratum {j} of {n} hit twice");
                strata[j] = true;
            }
        }
    }
}
