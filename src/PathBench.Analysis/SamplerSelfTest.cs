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

/// <summary>The stratification a point set claims in its 2-D pairs of dimensions, checked exactly by the self-test.</summary>
public enum StratificationClaim
{
    /// <summary>No stratification is claimed.</summary>
    None,

    /// <summary>Latin hypercube: in every dimension one point in each of the n slabs of width 1/n (McKay, Beckman &amp; Conover 1979).</summary>
    Latin,

    /// <summary>Jittered: one point in each cell of the n-cell grid of <see cref="StratumGrid"/>, in every pair.</summary>
    Jittered,

    /// <summary>Multi-jittered: both of the above (Chiu, Shirley &amp; Wang 1994; Kensler 2013).</summary>
    MultiJittered,

    /// <summary>A (0,m,2)-net in base 2 in dimensions 0 and 1 at counts 2^m (Sobol 1967; Christensen, Kensler &amp; Kilpatrick 2018).</summary>
    Net02,
}

/// <summary>
/// What <see cref="SamplerSelfTest"/> tests: how to build the sampler for a planned count and a
/// global seed, and what it claims. The catalog's generators come from <see cref="FromCatalog"/>;
/// a sampler built outside the catalog (a test's deliberately broken one) states its claims itself.
/// </summary>
/// <param name="Name">How results name it, e.g. <c>sobol/owen</c>.</param>
/// <param name="Create">The sampler for a planned count and a global seed; it must define <paramref name="Dimensions"/> dimensions.</param>
/// <param name="Dimensions">Dimensions the uniformity, stratification and determinism tests look at (even, at least 2).</param>
/// <param name="Randomized">Whether its points are random (so estimates are unbiased and have a variance).</param>
/// <param name="Stratification">The stratification it claims.</param>
/// <param name="Theory">Its published convergence rates.</param>
public sealed record SelfTestSubject(string Name, Func<int, ulong, PointSampler> Create, int Dimensions, bool Randomized, StratificationClaim Stratification, TheoryRate Theory)
{
    /// <summary>Why neighbouring pixels' points are dependent by design (<see cref="GeneratorInfo.PixelsCorrelatedBecause"/>); null when they should be independent.</summary>
    public string? PixelsCorrelatedBecause { get; init; }

    /// <summary>A generator of the catalog with its randomization, and the claims its published construction makes.</summary>
    /// <exception cref="SamplerSpecException">The generator or randomization is unknown or meaningless together.</exception>
    public static SelfTestSubject FromCatalog(string generator, Randomization randomize, bool antithetic)
    {
        GeneratorInfo info = SamplerCatalog.Find(generator);
        int dims = Math.Min(8, info.MaxDimensions) & ~1;
        SamplerCatalog.Create(new SamplerSpec(generator, randomize, antithetic, 16, 1), dims); // refuse a bad combination before any work
        StratificationClaim claim = antithetic
            ? StratificationClaim.None // pairs (x, 1 − x) of a half-size set: the set's strata are not the count's
            : generator switch
            {
                "jittered" => StratificationClaim.Jittered,
                "multi-jittered" => StratificationClaim.MultiJittered,
                "latin-hypercube" => StratificationClaim.Latin,
                "sobol" or "pmj02" or "bluenoise" when randomize is Randomization.None or Randomization.Owen or Randomization.DigitalShift => StratificationClaim.Net02,
                _ => StratificationClaim.None,
            };
        var configuration = new StudyConfiguration(generator, generator, randomize, antithetic, HemisphereStrategy.Cosine, LightStrategy.Mis, null, true);
        return new SelfTestSubject(
            generator + "/" + new SamplerSpec(generator, randomize, antithetic, 1, 0).RandomizeName,
            (count, seed) => SamplerCatalog.Create(new SamplerSpec(generator, randomize, antithetic, count, seed), dims),
            dims,
            info.IsRandomized(randomize),
            claim,
            TheoryRate.For(configuration))
        {
            PixelsCorrelatedBecause = info.PixelsCorrelatedBecause,
        };
    }
}

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

    /// <summary>Fewest counts (16, 32, …) the convergence slope is judged on.</summary>
    public const int MinSlopeCounts = 5;

    /// <summary>Pixels whose claimed strata are checked one by one.</summary>
    public const int StratifiedPixels = 16;

    /// <summary>Slack on a published convergence rate (RMSE exponent) before a slope counts as slower (common practice: finite counts and log factors).</summary>
    public const double SlopeSlack = 0.15;

    /// <summary>Runs every self-test with <paramref name="count"/> points per pixel.</summary>
    /// <exception cref="SamplerSpecException">The generator or randomization is unknown or meaningless together.</exception>
    public static IReadOnlyList<SelfTestResult> Run(string generator, Randomization randomize, bool antithetic, int count, ulong seed, int threads) =>
        Run(SelfTestSubject.FromCatalog(generator, randomize, antithetic), count, seed, threads);

    /// <summary>Runs every self-test on <paramref name="subject"/> with <paramref name="count"/> points per pixel.</summary>
    public static IReadOnlyList<SelfTestResult> Run(SelfTestSubject subject, int count, ulong seed, int threads)
    {
        ArgumentNullException.ThrowIfNull(subject);
        ArgumentOutOfRangeException.ThrowIfLessThan(count, 16);
        if (subject.Dimensions < 2 || subject.Dimensions % 2 != 0)
        {
            throw new ArgumentOutOfRangeException(nameof(subject), subject.Dimensions, "a self-test looks at whole 2-D pairs of dimensions");
        }

        PointSampler Make(ulong s) => subject.Create(count, s);
        var results = new List<SelfTestResult>();
        results.Add(Determinism(Make, count, subject.Dimensions, seed));
        results.AddRange(Uniformity(Make(seed), count, subject.Dimensions));
        results.Add(Stratification(subject.Stratification, Make(seed), count, subject.Dimensions));
        results.AddRange(Integrands(subject, count, seed, threads));
        results.Add(subject.PixelsCorrelatedBecause is { } why
            ? new SelfTestResult("independence between neighbouring pixels", "n/a: " + why, "-", "Heitz, Belcour, Ostromoukhov, Coeurjolly & Iehl 2019", true)
            : Independence("between neighbouring pixels", subject.Randomized, Make(seed), Make(seed), count, neighbours: true));
        results.Add(Independence("between replicates (seeds)", subject.Randomized, Make(seed), Make(seed + 1), count, neighbours: false));
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

    /// <summary>
    /// The claimed stratification, checked exactly (a deterministic property: no false alarms): every
    /// stratum of every pair holds one point, in <see cref="StratifiedPixels"/> pixels; or the (0,m,2)-net
    /// property of dimensions 0,1 in one pixel.
    /// </summary>
    private static SelfTestResult Stratification(StratificationClaim claim, PointSampler sampler, int count, int dims)
    {
        const string what = "stratification claimed by the construction";
        switch (claim)
        {
            case StratificationClaim.None:
                return new SelfTestResult(what, "n/a: no stratification claimed", "-", "-", true);
            case StratificationClaim.Net02:
            {
                const string name = "(0,m,2)-net in base 2, dimensions 0,1";
                const string source = "Sobol 1967; Christensen, Kensler & Kilpatrick 2018; Owen 1995 (scrambling keeps the net property)";
                if ((count & (count - 1)) != 0)
                {
                    return new SelfTestResult(name, Inv($"n/a: {count} is not a power of 2"), "-", source, true);
                }

                var points = new double[2 * count];
                ulong key = sampler.PixelKey(3, 7);
                for (int i = 0; i < count; i++)
                {
                    (points[2 * i], points[(2 * i) + 1]) = sampler.Sample2D(key, (uint)i, 0);
                }

                int t = NetQuality.TValue(points, 2, 0, 1);
                return new SelfTestResult(name, Inv($"t = {t} (every elementary interval of volume 1/{count} checked)"), "t = 0", source, t == 0);
            }

            default:
            {
                bool cells = claim is StratificationClaim.Jittered or StratificationClaim.MultiJittered;
                bool slabs = claim is StratificationClaim.Latin or StratificationClaim.MultiJittered;
                StratumGrid grid = StratumGrid.For(count);
                int worst = 0;
                string where = "";
                var cellCount = new int[count];
                var slabX = new int[count];
                var slabY = new int[count];
                for (int px = 0; px < StratifiedPixels; px++)
                {
                    ulong key = sampler.PixelKey(px % 4, px / 4);
                    for (int pair = 0; pair < dims / 2; pair++)
                    {
                        Array.Clear(cellCount);
                        Array.Clear(slabX);
                        Array.Clear(slabY);
                        for (int i = 0; i < count; i++)
                        {
                            (double u, double v) = sampler.Sample2D(key, (uint)i, 2 * pair);
                            cellCount[Math.Min(grid.Columns - 1, (int)(u * grid.Columns)) + (grid.Columns * Math.Min(grid.Rows - 1, (int)(v * grid.Rows)))]++;
                            slabX[Math.Min(count - 1, (int)(u * count))]++;
                            slabY[Math.Min(count - 1, (int)(v * count))]++;
                        }

                        int empty = (cells ? cellCount.Count(c => c == 0) : 0) + (slabs ? slabX.Count(c => c == 0) + slabY.Count(c => c == 0) : 0);
                        if (empty > worst)
                        {
                            worst = empty;
                            where = Inv($" (worst: pixel {px % 4},{px / 4}, dimensions {2 * pair},{(2 * pair) + 1})");
                        }
                    }
                }

                string strata = (cells ? Inv($"{grid.Columns}×{grid.Rows} cells") : "") + (cells && slabs ? " and " : "") + (slabs ? Inv($"{count} slabs per axis") : "");
                string source = claim switch
                {
                    StratificationClaim.Latin => "Latin hypercube: McKay, Beckman & Conover 1979",
                    StratificationClaim.Jittered => "jittered sampling: one point per stratum of the grid",
                    _ => "multi-jittered: Chiu, Shirley & Wang 1994; Kensler 2013",
                };
                return new SelfTestResult(what, Inv($"{worst} empty strata{where}; {strata}, {StratifiedPixels} pixels × {dims / 2} pairs"), "0 empty strata (one point in each)", source, worst == 0);
            }
        }
    }

    private static IEnumerable<SelfTestResult> Integrands(SelfTestSubject subject, int count, ulong seed, int threads)
    {
        const int replicates = 32;
        bool randomized = subject.Randomized;
        TheoryRate theory = subject.Theory;
        IReadOnlyList<IntegrandConvergence> runs = ConvergenceStudy.Run(subject.Create, 16, count, replicates, seed + 1000, threads);
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
                // Replicates that are all equal carry no spread to test against: a Latin set on the
                // step integrand takes two values, one of them with probability near 1 at some counts
                // (0.97 at 512 points: all 32 replicates agree 38 % of the time), and the t statistic
                // would then read √K whatever the bias. Such a count is left out of the test, and said.
                double worstP = 1;
                int worstCount = 0, noSpread = 0;
                for (int c = 0; c < r.Counts.Count; c++)
                {
                    double offset = r.Mean[c] - r.Exact;
                    if ((r.Rmse[c] * r.Rmse[c]) - (offset * offset) <= 1e-9 * r.Rmse[c] * r.Rmse[c])
                    {
                        noSpread++;
                        continue;
                    }

                    double se = r.Rmse[c] / Math.Sqrt(replicates);
                    double z = se > 0 ? (r.Mean[c] - r.Exact) / se : (r.Mean[c] == r.Exact ? 0 : double.PositiveInfinity);
                    double p = 2 * StudentT.CDF(0, 1, replicates - 1, -Math.Abs(z));
                    if (p < worstP)
                    {
                        worstP = p;
                        worstCount = r.Counts[c];
                    }
                }

                string skipped = noSpread > 0 ? Inv($"; {noSpread} count(s) with identical replicates left out") : "";
                yield return new SelfTestResult(Inv($"unbiased on '{r.Integrand}'"), Inv($"smallest p at {worstCount} points, {replicates} replicates{skipped}"),
                    Inv($"p = {worstP:G3} ≥ {level:G3} (Šidák over {family}, α = {Alpha})"), "a randomized quadrature's mean is the integral (Owen 1995; Cranley & Patterson 1976)", worstP >= level);
            }

            bool smooth = r.Integrand is "gaussian" or "bilinear";
            double? mseRate = smooth ? theory.Smooth : theory.Discontinuous;
            if (!randomized || mseRate is null)
            {
                yield return new SelfTestResult(Inv($"convergence on '{r.Integrand}'"), Inv($"RMSE slope {r.Fit.Slope:F2} over 16…{count} points"), "n/a", "no published rate for this generator and randomization", true);
                continue;
            }

            if (r.Rmse.All(e => e == 0))
            {
                // Exact at every count (antithetic pairs integrate the triangle exactly): no error to fit, nothing slow.
                yield return new SelfTestResult(Inv($"convergence on '{r.Integrand}'"), Inv($"zero error at every count 16…{count}"), "n/a: exact", theory.Source, true);
                continue;
            }

            if (r.Fit.Points < MinSlopeCounts)
            {
                // Three or four counts leave the slope too uncertain for a fixed slack (±1.3 at 16…64, measured).
                yield return new SelfTestResult(Inv($"convergence on '{r.Integrand}'"), Inv($"RMSE slope {r.Fit.Slope:F2} over 16…{count} points"),
                    Inv($"n/a: fewer than {MinSlopeCounts} counts (use --count {16 << (MinSlopeCounts - 1)} or more)"), theory.Source, true);
                continue;
            }

            // A rate with a log factor, MSE ∝ N^e·(log N)^L, is flatter over a finite range: the secant
            // slope of log RMSE on log N from 16 to the count is e/2 + L·(ln ln N₁ − ln ln N₀)/(2(ln N₁ − ln N₀)),
            // 0.11 for Owen-scrambled nets over 16…1024 (L = 1 in 2-D, Owen 1997).
            double logFlattening = smooth && theory.SmoothLogPower > 0
                ? theory.SmoothLogPower * (Math.Log(Math.Log(count)) - Math.Log(Math.Log(16))) / (2 * (Math.Log(count) - Math.Log(16)))
                : 0;
            double expected = (mseRate.Value / 2) + logFlattening;
            string logNote = logFlattening > 0 ? Inv($", log factor {logFlattening:F2}") : "";
            yield return new SelfTestResult(Inv($"convergence on '{r.Integrand}'"), Inv($"RMSE slope {r.Fit.Slope:F2} [{r.Fit.SlopeLow:F2}, {r.Fit.SlopeHigh:F2}] over 16…{count} points"),
                Inv($"≤ {expected:G3} + {SlopeSlack} ({(smooth ? "smooth" : "discontinuous")}{logNote})"), theory.Source, r.Fit.Slope <= expected + SlopeSlack);
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
