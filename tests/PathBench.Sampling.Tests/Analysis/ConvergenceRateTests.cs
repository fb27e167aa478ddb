using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Analysis;

/// <summary>
/// Measured log-log slopes of RMSE against the published rates. The fitted slope's standard
/// error at these replicate counts is about 0.02 (half the printed 95 % interval), so each
/// tolerance is at least 5 standard errors: a correct implementation fails a check with
/// probability below 1e-6 for a random seed. The seeds are fixed, so the run is repeatable.
/// </summary>
public sealed class ConvergenceRateTests
{
    private static IReadOnlyList<IntegrandConvergence> Study(string generator, Randomization r, int min, int max, int replicates) =>
        ConvergenceStudy.Run(generator, r, false, min, max, replicates, seed: 20261201, threads: Environment.ProcessorCount);

    private static double Slope(IReadOnlyList<IntegrandConvergence> study, string integrand) =>
        study.Single(s => s.Integrand == integrand).Fit.Slope;

    [Fact]
    public void Independent_random_converges_at_minus_one_half()
    {
        // Monte Carlo: RMSE = σ/√N exactly, on every integrand.
        var study = Study("random", Randomization.None, 16, 16384, 256);
        foreach (TestIntegrand f in TestIntegrands.All)
        {
            Assert.InRange(Slope(study, f.Name), -0.6, -0.4);
        }
    }

    [Fact]
    public void Jittered_converges_at_minus_three_quarters_with_edges_and_minus_one_when_smooth()
    {
        // Mitchell 1996 and He & Owen 2014: N^(-1/2 - 1/(2d)) = N^-0.75 in 2-D for integrands
        // with edges; N^(-1/2 - 1/d) = N^-1 for smooth ones (Pilleboue et al. 2015).
        var study = Study("jittered", Randomization.None, 16, 16384, 256);
        Assert.InRange(Slope(study, "disk"), -0.85, -0.65);
        Assert.InRange(Slope(study, "triangle"), -0.85, -0.65);
        Assert.InRange(Slope(study, "gaussian"), -1.1, -0.9);
        Assert.InRange(Slope(study, "bilinear"), -1.1, -0.9);
    }

    [Fact]
    public void Owen_scrambled_sobol_converges_at_minus_three_halves_when_smooth()
    {
        // Owen 1997 ("Scrambled net variance for integrals of smooth functions"): variance
        // O(N^-3 (log N)^(s-1)), so RMSE ∝ N^-1.5·√log N in 2-D. Over N = 64 … 65536 the √log N
        // factor alone flattens the fitted slope by about 1/(2 ln N) ≈ 0.06 on average, hence the
        // asymmetric window around −1.5.
        var study = Study("sobol", Randomization.Owen, 64, 65536, 64);
        Assert.InRange(Slope(study, "gaussian"), -1.6, -1.36);
        Assert.InRange(Slope(study, "bilinear"), -1.6, -1.36);
    }

    [Fact]
    public void Blue_noise_sobol_converges_at_minus_three_halves_when_smooth()
    {
        // Each pixel's points are an Owen-scrambled Sobol net (a fixed scramble from the tile, then a
        // random common one), so Owen 1997 applies as for plain Owen-scrambled Sobol above, with the same
        // window. The study's points come from pixel (0, 0), dimensions 0 and 1: a tabled pair.
        var study = Study("bluenoise", Randomization.Owen, 64, 65536, 64);
        Assert.InRange(Slope(study, "gaussian"), -1.6, -1.36);
        Assert.InRange(Slope(study, "bilinear"), -1.6, -1.36);
    }

    [Fact]
    public void Owen_scrambled_pmj02_converges_at_minus_three_halves_when_smooth_and_minus_three_quarters_with_edges()
    {
        // Christensen, Kensler & Kilpatrick 2018 (their error plots): pmj02 matches Owen-scrambled
        // Sobol, N^-1.5 on smooth integrands and N^-0.75 on discontinuous ones; Owen 1997 gives the
        // smooth rate for any nested-scrambled (0,m,2)-net, with the same √log N flattening as above.
        var study = Study("pmj02", Randomization.Owen, 64, 16384, 64);
        Assert.InRange(Slope(study, "gaussian"), -1.6, -1.36);
        Assert.InRange(Slope(study, "bilinear"), -1.6, -1.36);
        Assert.InRange(Slope(study, "disk"), -0.85, -0.65);
    }

    [Fact]
    public void Progressive_jittered_converges_as_jittered()
    {
        // Christensen, Kensler & Kilpatrick 2018: pj is "nearly identical" to jittered sampling, so it
        // takes jittered's rates (Pilleboue et al. 2015, as above): N^-0.75 with edges, N^-1 when smooth.
        // The smooth slopes scatter more here (standard error about 0.03, not 0.02), hence ±0.15.
        var study = Study("pj", Randomization.Owen, 16, 16384, 256);
        Assert.InRange(Slope(study, "disk"), -0.85, -0.65);
        Assert.InRange(Slope(study, "gaussian"), -1.15, -0.85);
        Assert.InRange(Slope(study, "bilinear"), -1.15, -0.85);
    }

    [Fact]
    public void Randomly_shifted_lattice_converges_at_minus_one_on_smooth_integrands()
    {
        // Sloan, Kuo & Joe 2002 ("Constructing randomly shifted lattice rules in weighted Sobolev
        // spaces", SIAM J. Numer. Anal. 40(5)): for non-periodic integrands with square-integrable
        // mixed first derivatives the shift-averaged error is O(n^(-1+δ)), δ > 0 arbitrary, so the
        // fitted slope sits at or a little above −1; the window is asymmetric for that δ.
        var study = Study("lattice", Randomization.CranleyPatterson, 64, 4096, 64);
        Assert.InRange(Slope(study, "gaussian"), -1.15, -0.85);
        Assert.InRange(Slope(study, "bilinear"), -1.15, -0.85);
    }

    [Fact]
    public void The_fit_recovers_a_known_line()
    {
        // y = 2 − 0.75 x exactly: the slope is −0.75 and its interval collapses onto it.
        double[] x = [1, 2, 3, 4, 5];
        double[] y = x.Select(v => 2 - 0.75 * v).ToArray();
        LineFit fit = LineFit.Fit(x, y);
        Assert.Equal(-0.75, fit.Slope, 12);
        Assert.Equal(2.0, fit.Intercept, 12);
        Assert.Equal(-0.75, fit.SlopeLow, 9);
        Assert.Equal(-0.75, fit.SlopeHigh, 9);
    }

    [Fact]
    public void The_slope_interval_matches_the_textbook_formula()
    {
        // Worked example computed by hand with t(0.975, 3) = 3.182446 (Student's t table):
        // x = 1..5, y = 1, 3, 2, 5, 4 → slope 0.8, residual SS 3.6, s² = 1.2, Sxx = 10,
        // se = √0.12 = 0.3464102, interval 0.8 ± 3.182446 · 0.3464102 = 0.8 ± 1.102432.
        LineFit fit = LineFit.Fit([1, 2, 3, 4, 5], [1, 3, 2, 5, 4]);
        Assert.Equal(0.8, fit.Slope, 12);
        Assert.Equal(0.8 - 1.102432, fit.SlopeLow, 5);
        Assert.Equal(0.8 + 1.102432, fit.SlopeHigh, 5);
    }

    [Fact]
    public void Results_do_not_depend_on_the_thread_count()
    {
        var one = ConvergenceStudy.Run("sobol", Randomization.Owen, false, 4, 1024, 16, 5, threads: 1);
        var two = ConvergenceStudy.Run("sobol", Randomization.Owen, false, 4, 1024, 16, 5, threads: 2);
        for (int f = 0; f < one.Count; f++)
        {
            Assert.Equal(one[f].Rmse, two[f].Rmse);
            Assert.Equal(one[f].Fit.Slope, two[f].Fit.Slope);
        }
    }
}
