using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Analysis;

/// <summary>
/// Every randomized generator must be unbiased: the mean of K independent replicate
/// estimates lies within z·s/√K of the exact integral (central limit theorem, with s the
/// replicate standard deviation). z = 4.0 gives a two-sided false-failure probability of
/// 6.3e-5 per check; over the 360 checks below (36 combinations × 5 integrands × 2 counts) the family-wise rate stays under 2.3 %.
/// </summary>
public sealed class UnbiasednessTests
{
    private const double Z = 4.0;
    private const int Replicates = 400;

    // Every randomized combination the catalog knows, each also with antithetic pairing.
    public static TheoryData<string, string> RandomizedGenerators
    {
        get
        {
            var data = new TheoryData<string, string>();
            foreach ((string generator, string randomize) in SamplerCatalog.RandomizedCombinations(withAntithetic: true))
            {
                data.Add(generator, randomize);
            }

            return data;
        }
    }

    [Theory]
    [MemberData(nameof(RandomizedGenerators))]
    public void Mean_over_replicates_matches_the_analytic_integral(string generator, string randomize)
    {
        // 16 is a power of two (the nets' natural size); 12 is not (sets with uneven grids).
        foreach (int n in new[] { 16, 12 })
        {
            Assert.Equal([], Failures(generator, randomize, n));
        }
    }

    [Fact]
    public void A_biased_generator_is_caught()
    {
        // The check must be able to fail: unscrambled Hammersley is the same fixed quadrature
        // for every seed, so its estimates have zero spread and a nonzero error.
        Assert.NotEmpty(Failures("hammersley", "none", 16));
    }

    private static List<string> Failures(string generator, string randomize, int n)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        var estimates = new double[TestIntegrands.All.Count, Replicates];
        for (int k = 0; k < Replicates; k++)
        {
            PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, n, 1000 + (ulong)k), 4);
            ulong key = s.PixelKey(3, 1);
            for (int i = 0; i < n; i++)
            {
                // Dimensions 2 and 3, not only 0 and 1: padding and higher dimensions must be unbiased too.
                double x = s.Sample(key, (uint)i, 2), y = s.Sample(key, (uint)i, 3);
                for (int f = 0; f < TestIntegrands.All.Count; f++)
                {
                    estimates[f, k] += TestIntegrands.All[f].F(x, y) / n;
                }
            }
        }

        var failures = new List<string>();
        for (int f = 0; f < TestIntegrands.All.Count; f++)
        {
            TestIntegrand integrand = TestIntegrands.All[f];
            double mean = 0, sq = 0;
            for (int k = 0; k < Replicates; k++)
            {
                mean += estimates[f, k];
            }

            mean /= Replicates;
            for (int k = 0; k < Replicates; k++)
            {
                sq += (estimates[f, k] - mean) * (estimates[f, k] - mean);
            }

            double sd = Math.Sqrt(sq / (Replicates - 1));
            // A floor of 1e-12 for estimators that happen to be exact (zero spread).
            double bound = Z * sd / Math.Sqrt(Replicates) + 1e-12;
            if (!(Math.Abs(mean - integrand.Exact) <= bound))
            {
                failures.Add($"{generator}/{randomize}, n={n}, {integrand.Name}: mean {mean}, exact {integrand.Exact}, bound {bound}");
            }
        }

        return failures;
    }
}
