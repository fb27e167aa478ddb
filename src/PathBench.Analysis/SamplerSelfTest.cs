using System.Globalization;
using MathNet.Numerics.Distributions;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis;

/// <summary>One self-test: what was tested, the statistic, its p-value or bound, where the expectation comes from, the verdict.</summary>
/// <param name="Test">What was tested.</param>
/// <param name="Statistic">The measured statistic, as text (value and what it is).</param>
/// <param name="Criterion">The p-value against α, or the bound.</param>
/// <param name="Source">The source of the expected behaviour.</param>
/// <param name="Passed">The verdict; true with "n/a" when the property does not apply.</param>
public sealed record SelfTestResult(string Test, string Statistic, string Criterion, string Source, bool Passed);

/// <summary>
/// <c>pathbench selftest</c>: published properties of one generator × randomization, each as a
/// test with a stated false-alarm rate (α = 0.001 per group of tests, Šidák within a group).
/// </summary>
public static class SamplerSelfTest
{
    /// <summary>False-alarm rate of each group of tests.</summary>
    public const double Alpha = 0.001;

    /// <summary>Pixels pooled by the uniformity and independence tests.</summary>
    public const int Pixels = 256;

    /// <summary>Slack on a published convergence rate (RMSE exponent) before a slope counts as slower (common practice: finite counts and log factors).</summary>
    public const double SlopeSlack = 0.15;

    /// <summary>Runs every self-test with <paramref name="count"/> points per pixel.</summary>
    /// <exception cref="SamplerSpecException">The generator or randomization is unknown or meaningless together.</exception>
    public static IReadOnlyList<SelfTestResult> Run(string generator, Randomization randomize, bool antithetic, int count, ulong seed, int threads)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(count, 16);
        GeneratorInfo info = SamplerCatalog.Find(generator);
        int dims = Math.Min(8, info.MaxDimensions);
        PointSampler Make(ulong s) => SamplerCatalog.Create(new SamplerSpec(generator, randomize, antithetic, count, s), dims);
        bool randomized = info.IsRandomized(randomize);
        var results = new List<SelfTestResult>();
        results.Add(Determinism(Make, count, dims, seed));
        results.AddRange(Uniformity(Make(seed), count, dims));
        results.Add(NetProperty(generator, randomize, antithetic, Make(seed), count));
        var configuration = new StudyConfiguration(generator, generator, randomize, antithetic, HemisphereStrategy.Cosine, LightStrategy.Mis, null, true);
        results.AddRange(Integrands(generator, randomize, antithetic, count, seed, threads, randomized, TheoryRate.For(configuration)));
        results.Add(SamplerCatalog.Find(generator).PixelsCorrelatedBecause is { } why
            ? new SelfTestResult("independence between neighbouring pixels", "n/a: " + why, "-", "Heitz, Belcour, Ostromoukhov, Coeurjolly & Iehl 2019", true)
            : Independence("between neighbouring pixels", randomized, Make(seed), Make(seed), count, neighbours: true));
        results.Add(Independence("between replicates (seeds)", randomized, Make(seed), Make(seed + 1), count, neighbours: false));
        results.AddRange(Warps(seed));
        return results;
    }

    private static SelfTestResult Determinism(Func<ulong, PointSampler> make, int count, int dims, ulong seed)
    {
        PointSampler a = make(seed), b = make(seed);
        foreach ((int x, int y) in new[] { (0, 0), (5, 3), (17, 9) })
        {
            ulong ka = a.PixelKey(x, y), kb = b.PixelKey(x, y);
            for (int i = 0; i < count; i++)
            {
                for (int d = 0; d < dims; d++)
                {
                    if (BitConverter.DoubleToUInt64Bits(a.Sample(ka, (uint)i, d)) != BitConverter.DoubleToUInt64Bits(b.Sample(kb, (uint)i, d)))
                    {
                        return new SelfTestResult("determinism", Inv($"pixel {x},{y} point {i} dimension {d} differs between two samplers of one spec"), "bit-identical", "PathBench's design: a sample is a pure function of (spec, pixel, index, dimension)", false);
                    }
                }
            }
        }

        return new SelfTestResult("determinism", Inv($"{3 * count * dims} values bit-identical across two samplers"), "bit-identical", "PathBench's design: a sample is a pure function of (spec, pixel, index, dimension)", true);
    }

    /// <summary>Pearson's χ² of each 2-D projection (0,1), (2,3), … pooled over <see cref="Pixels"/> pixels in an 8×8 grid; upper tail, Šidák over the pairs.</summary>
    private static IEnumerable<SelfTestResult> Uniformity(PointSampler sampler, int count, int dims)
    {
        int pairs = dims / 2;
        double level = ChiSquareWarpTest.SidakLevel(Alpha, pairs);
        for (int p = 0; p < pairs; p++)
        {
            var observed = new double[64];
            for (int px = 0; px < Pixels; px++)
            {
                ulong key = sampler.PixelKey(px % 16, px / 16);
                for (int i = 0; i < count; i++)
                {
                    (double u, double v) = sampler.Sample2D(key, (uint)i, 2 * p);
                    observed[(Math.Min(7, (int)(u * 8)) * 8) + Math.Min(7, (int)(v * 8))]++;
                }
            }

            double[] expected = [.. Enumerable.Repeat((double)Pixels * count / 64, 64)];
            ChiSquareResult chi = ChiSquareWarpTest.Evaluate(Inv($"dimensions {2 * p},{(2 * p) + 1}"), observed, expected);
            yield return new SelfTestResult(Inv($"uniformity of dimensions {2 * p},{(2 * p) + 1}"), Inv($"χ² = {chi.Statistic:F1}, {chi.DegreesOfFreedom} dof ({Pixels} pixels × {count} points, 8×8 bins)"),
                Inv($"p = {chi.PValue:G3} ≥ {level:G3} (Šidák, α = {Alpha})"), "Pearson's χ² goodness of fit; every projection of a uniform point set is uniform", chi.PValue >= level);
        }
    }

    private static SelfTestResult NetProperty(string generator, Randomization randomize, bool antithetic, PointSampler sampler, int count)
    {
        bool claims = generator is "sobol" or "pmj02" && !antithetic && randomize is Randomization.None or Randomization.Owen or Randomization.DigitalShift && (count & (count - 1)) == 0;
        if (!claims)
        {
            return new SelfTestResult("(0,m,2)-net in base 2, dimensions 0,1", "n/a", "-", "claimed by Sobol's first two dimensions (Sobol 1967) and pmj02 (Christensen, Kensler & Kilpatrick 2018) with net-preserving randomizations (Owen 1995; digital shifts) at counts 2^m", true);
        }

        var points = new double[2 * count];
        ulong key = sampler.PixelKey(3, 7);
        for (int i = 0; i < count; i++)
        {
            (points[2 * i], points[(2 * i) + 1]) = sampler.Sample2D(key, (uint)i, 0);
        }

        int t = NetQuality.TValue(points, 2, 0, 1);
        return new SelfTestResult("(0,m,2)-net in base 2, dimensions 0,1", Inv($"t = {t} (every elementary interval of volume 1/{count} checked)"), "t = 0", "Sobol 1967; Christensen, Kensler & Kilpatrick 2018; Owen 1995 (scrambling keeps the net property)", t == 0);
    }

    private static IEnumerable<SelfTestResult> Integrands(string generator, Randomization randomize, bool antithetic, int count, ulong seed, int threads, bool randomized, TheoryRate theory)
    {
        const int replicates = 32;
        IReadOnlyList<IntegrandConvergence> runs = ConvergenceStudy.Run(generator, randomize, antithetic, 16, count, replicates, seed + 1000, threads);
        int family = runs.Sum(r => r.Counts.Count);
        double level = ChiSquareWarpTest.SidakLevel(Alpha, family);
        foreach (IntegrandConvergence r in runs)
        {
            if (!randomized)
            {
                yield return new SelfTestResult(Inv($"unbiased on '{r.Integrand}'"), "n/a: a deterministic rule has no variance, its error is bias", "-", "Monte Carlo theory", true);
            }
            else
            {
                // |mean − exact| against the spread: the replicates' RMSE about the exact value over √K.
                double worstP = 1;
                int worstCount = 0;
                for (int c = 0; c < r.Counts.Count; c++)
                {
                    double se = r.Rmse[c] / Math.Sqrt(replicates);
                    double z = se > 0 ? (r.Mean[c] - r.Exact) / se : (r.Mean[c] == r.Exact ? 0 : double.PositiveInfinity);
                    double p = 2 * StudentT.CDF(0, 1, replicates - 1, -Math.Abs(z));
                    if (p < worstP)
                    {
                        worstP = p;
                        worstCount = r.Counts[c];
                    }
                }

                yield return new SelfTestResult(Inv($"unbiased on '{r.Integrand}'"), Inv($"smallest p at {worstCount} points, {replicates} replicates"),
                    Inv($"p = {worstP:G3} ≥ {level:G3} (Šidák over {family}, α = {Alpha})"), "a randomized quadrature's mean is the integral (Owen 1995; Cranley & Patterson 1976)", worstP >= level);
            }

            bool smooth = r.Integrand is "gaussian" or "bilinear";
            double? mseRate = smooth ? theory.Smooth : theory.Discontinuous;
            if (!randomized || mseRate is null)
            {
                yield return new SelfTestResult(Inv($"convergence on '{r.Integrand}'"), Inv($"RMSE slope {r.Fit.Slope:F2} over 16…{count} points"), "n/a", "no published rate for this generator and randomization", true);
                continue;
            }

            double expected = mseRate.Value / 2;
            yield return new SelfTestResult(Inv($"convergence on '{r.Integrand}'"), Inv($"RMSE slope {r.Fit.Slope:F2} [{r.Fit.SlopeLow:F2}, {r.Fit.SlopeHigh:F2}] over 16…{count} points"),
                Inv($"≤ {expected:G3} + {SlopeSlack} ({(smooth ? "smooth" : "discontinuous")})"), theory.Source, r.Fit.Slope <= expected + SlopeSlack);
        }
    }

    /// <summary>Pearson correlation of per-pixel estimates of the Gaussian integrand: neighbouring pixels, or one pixel under two seeds; z = r·√(P − 1), two-sided.</summary>
    private static SelfTestResult Independence(string what, bool randomized, PointSampler a, PointSampler b, int count, bool neighbours)
    {
        if (!randomized)
        {
            return new SelfTestResult("independence " + what, "n/a: without randomization every pixel holds the same points", "-", "Owen 1995: independent randomizations give independent estimates", true);
        }

        TestIntegrand f = TestIntegrands.Find("gaussian");
        var x = new double[Pixels];
        var y = new double[Pixels];
        for (int p = 0; p < Pixels; p++)
        {
            // Pairs of pixels in rows 64 wide: a generator whose per-pixel seeds come from a tile
            // (bluenoise's repeats every 64 pixels) then gives 256 distinct pixels, not 32 repeated.
            int px = (2 * p) % 64, py = (2 * p) / 64;
            x[p] = Estimate(a, px, py, f, count);
            y[p] = neighbours ? Estimate(a, px + 1, py, f, count) : Estimate(b, px, py, f, count);
        }

        double mx = x.Average(), my = y.Average(), sxy = 0, sxx = 0, syy = 0;
        for (int p = 0; p < Pixels; p++)
        {
            sxy += (x[p] - mx) * (y[p] - my);
            sxx += (x[p] - mx) * (x[p] - mx);
            syy += (y[p] - my) * (y[p] - my);
        }

        double r = sxx > 0 && syy > 0 ? sxy / Math.Sqrt(sxx * syy) : 1;
        double z = r * Math.Sqrt(Pixels - 1);
        double pValue = 2 * (1 - Normal.CDF(0, 1, Math.Abs(z)));
        return new SelfTestResult("independence " + what, Inv($"correlation r = {r:F3} over {Pixels} pairs of estimates"), Inv($"p = {pValue:G3} ≥ {Alpha}"),
            "independent randomizations give uncorrelated estimates; r·√(P−1) ≈ N(0, 1) under independence (Fisher 1915)", pValue >= Alpha);
    }

    private static double Estimate(PointSampler s, int px, int py, TestIntegrand f, int count)
    {
        ulong key = s.PixelKey(px, py);
        double sum = 0;
        for (int i = 0; i < count; i++)
        {
            (double u, double v) = s.Sample2D(key, (uint)i, 0);
            sum += f.F(u, v);
        }

        return sum / count;
    }

    private static IEnumerable<SelfTestResult> Warps(ulong seed)
    {
        IReadOnlyList<WarpCase> cases = ChiSquareWarpTest.StandardCases();
        double level = ChiSquareWarpTest.SidakLevel(Alpha, cases.Count);
        for (int i = 0; i < cases.Count; i++)
        {
            ChiSquareResult chi = ChiSquareWarpTest.Run(cases[i], 50_000, 10, 10, seed + (ulong)i);
            yield return new SelfTestResult(Inv($"warp '{chi.Name}' against its pdf"), Inv($"χ² = {chi.Statistic:F1}, {chi.DegreesOfFreedom} dof (50000 independent inputs)"),
                Inv($"p = {chi.PValue:G3} ≥ {level:G3} (Šidák over {cases.Count}, α = {Alpha})"), "Pearson's χ²; the warp's density from its derivation (Shirley & Chiu 1997 for the concentric map)", chi.PValue >= level);
        }
    }

    private static string Inv(FormattableString s) => s.ToString(CultureInfo.InvariantCulture);
}
