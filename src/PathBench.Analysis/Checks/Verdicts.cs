using System.Globalization;
using MathNet.Numerics.Distributions;
using PathBench.Imaging;

namespace PathBench.Analysis.Checks;

/// <summary>The outcome of one assertion.</summary>
/// <param name="Case">The case's name.</param>
/// <param name="Assertion">What was asserted.</param>
/// <param name="Measured">The measured value (NaN when it could not be measured).</param>
/// <param name="Bound">The bound it was held to (the threshold on |z| for <c>unbiased</c>).</param>
/// <param name="P">The p-value of the assertion's test, when it has one.</param>
/// <param name="Passed">Whether the assertion holds.</param>
/// <param name="Detail">One line on how the verdict was reached.</param>
public sealed record Verdict(string Case, Assertion Assertion, double Measured, double Bound, double? P, bool Passed, string Detail);

/// <summary>A case's figures as a baseline keeps them, at its largest spp, and its slope.</summary>
/// <param name="Spp">The largest spp.</param>
/// <param name="Mse">Mean corrected MSE over replicates.</param>
/// <param name="MseSd">Standard deviation of the replicates' MSE.</param>
/// <param name="Replicates">Replicates.</param>
/// <param name="Slope">Fitted slope of log MSE on log spp; null with one spp.</param>
public sealed record CaseFigures(int Spp, double Mse, double MseSd, int Replicates, double? Slope);

/// <summary>
/// Decides a case's assertions from its measurements. Every test is arranged so that a correct
/// sampler fails it with probability at most the assertion's α (the false-alarm rate CI sees):
/// <list type="bullet">
/// <item><c>unbiased</c>: the z of every 16×16 tile and of the whole image at every spp
/// (<see cref="BiasTest"/>, Student's t with Welch–Satterthwaite degrees of freedom); the smallest
/// two-sided p-value, Šidák-adjusted over all of them (Šidák 1967), must not fall below α. The
/// measured value is that adjusted p-value and the bound is α.</item>
/// <item><c>mse_at_most: V</c>: one-sided t-test of H₀ "mean MSE ≤ V" at the largest spp, from the
/// replicates' spread; fails when the MSE is significantly above V.</item>
/// <item><c>mse_at_most: { baseline: f }</c>: one-sided Welch test (Welch 1947) of H₀ "MSE ≤ f × baseline
/// MSE", with both the run's and the baseline's replicate spread.</item>
/// <item><c>slope_at_most: S</c>: weighted least-squares slope of log mean MSE on log spp, each point
/// weighted by the inverse of its variance from the delta method, Var(log m̄) ≈ s²/(K·m̄²); one-sided
/// normal test of H₀ "slope ≤ S".</item>
/// <item><c>structure_at_most</c>, <c>ssim_at_least</c>, <c>nonfinite_at_most</c>: the measured value
/// against the bound (the structure score is itself −log₁₀ of a p-value; SSIM is the mean over
/// replicates at the largest spp, Wang et al. 2004, on luminance with data range 1).</item>
/// </list>
/// </summary>
public static class Verdicts
{
    /// <summary>The figures a baseline records for a case.</summary>
    public static CaseFigures Figures(CheckCase c, CaseMeasurements m)
    {
        ArgumentNullException.ThrowIfNull(c);
        ArgumentNullException.ThrowIfNull(m);
        (double mean, double sd, int k) = Mse(m.Errors[c.Spp[^1]]);
        return new CaseFigures(c.Spp[^1], mean, sd, k, c.Spp.Count >= 2 ? Slope(c, m).Slope : null);
    }

    /// <summary>Every assertion of the case.</summary>
    /// <exception cref="InvalidOperationException">An assertion needs a baseline that has no figures for this case.</exception>
    public static IReadOnlyList<Verdict> Decide(CheckCase c, CaseMeasurements m, IReadOnlyDictionary<string, CaseFigures>? baseline)
    {
        ArgumentNullException.ThrowIfNull(c);
        ArgumentNullException.ThrowIfNull(m);
        return [.. c.Assertions.Select(a => Decide(c, a, m, baseline))];
    }

    /// <summary>Every assertion of a case that could not produce its images: each fails with the reason.</summary>
    public static IReadOnlyList<Verdict> Failed(CheckCase c, string reason)
    {
        ArgumentNullException.ThrowIfNull(c);
        return [.. c.Assertions.Select(a => new Verdict(c.Name, a, double.NaN, a.Bound, null, false, reason))];
    }

    private static Verdict Decide(CheckCase c, Assertion a, CaseMeasurements m, IReadOnlyDictionary<string, CaseFigures>? baseline)
    {
        int largest = c.Spp[^1];
        switch (a.Kind)
        {
            case "unbiased":
                return Unbiased(c, a, m);
            case "mse_at_most" when a.AgainstBaseline:
            {
                if (baseline is null || !baseline.TryGetValue(c.Name, out CaseFigures? b))
                {
                    throw new InvalidOperationException($"case '{c.Name}' asserts mse_at_most against a baseline, and {(baseline is null ? "no --baseline was given" : "the baseline has no figures for it")}");
                }

                (double mean, double sd, int k) = Mse(m.Errors[largest]);
                double bound = a.Bound * b.Mse;
                double s1 = sd * sd / k, s2 = a.Bound * a.Bound * b.MseSd * b.MseSd / b.Replicates;
                double dof = (s1 + s2) * (s1 + s2) / ((s1 * s1 / (k - 1)) + (s2 * s2 / Math.Max(1, b.Replicates - 1)));
                double t = (mean - bound) / Math.Sqrt(s1 + s2);
                double p = OneSided(t, dof);
                return new Verdict(c.Name, a, mean, bound, p, p >= a.Alpha,
                    Inv($"mean MSE {mean:G4} at {largest} spp against {a.Bound:G4} × baseline {b.Mse:G4} (K = {k} and {b.Replicates}); one-sided Welch t = {t:F2}, p = {p:G3}, α = {a.Alpha:G3}"));
            }

            case "mse_at_most":
            {
                (double mean, double sd, int k) = Mse(m.Errors[largest]);
                double t = (mean - a.Bound) / (sd / Math.Sqrt(k));
                double p = OneSided(t, k - 1);
                return new Verdict(c.Name, a, mean, a.Bound, p, p >= a.Alpha,
                    Inv($"mean MSE {mean:G4} at {largest} spp over {k} replicates (sd {sd:G3}); one-sided t = {t:F2}, p = {p:G3}, α = {a.Alpha:G3}"));
            }

            case "slope_at_most":
            {
                (double slope, double se) = Slope(c, m);
                double zs = (slope - a.Bound) / se;
                double p = 1 - Normal.CDF(0, 1, zs);
                return new Verdict(c.Name, a, slope, a.Bound, p, p >= a.Alpha,
                    Inv($"slope {slope:F3} ± {se:F3} (weighted least squares over {c.Spp.Count} spp); one-sided z = {zs:F2}, p = {p:G3}, α = {a.Alpha:G3}"));
            }

            case "structure_at_most":
            {
                StructureScore? s = StructureScore.Measure(m.Final, m.Reference.Width, m.Reference.Height);
                double score = s?.Score ?? double.NaN;
                return new Verdict(c.Name, a, score, a.Bound, s?.P, score <= a.Bound,
                    s is null ? "no structure score (it needs two replicates and an image of at least 8×8)" : Inv($"structure score {score:F2} (-log10 p of white noise) at {largest} spp"));
            }

            case "ssim_at_least":
            {
                RgbImage reference = m.Reference.ToValueImage();
                var region = new PixelRect(0, 0, reference.Width, reference.Height);
                double?[] values = [.. m.Final.Select(img => Ssim.MeanOnLuminance(reference, new RgbImage(reference.Width, reference.Height, img), region, 1.0))];
                double ssim = values.All(v => v is not null) ? values.Average(v => v!.Value) : double.NaN;
                return new Verdict(c.Name, a, ssim, a.Bound, null, ssim >= a.Bound,
                    Inv($"mean SSIM {ssim:F4} over {values.Length} replicates at {largest} spp (luminance, data range 1)"));
            }

            default: // nonfinite_at_most
                return new Verdict(c.Name, a, m.NonFinite, a.Bound, null, m.NonFinite <= a.Bound,
                    Inv($"{m.NonFinite} non-finite samples or pixel values"));
        }
    }

    private static Verdict Unbiased(CheckCase c, Assertion a, CaseMeasurements m)
    {
        var tests = c.Spp.Select(n => (Spp: n, Test: BiasTest.Of(m.Moments[n], m.Reference, StudySummary.TileSize))).ToList();
        int family = tests.Sum(t => t.Test.TileZ.Count + 1);
        double pMin = 1, worstZ = 0, worstDof = 0;
        string where = "";
        foreach ((int spp, BiasTest test) in tests)
        {
            var all = test.TileZ.Select((z, i) => (Z: z, Dof: test.TileDof[i], Where: Inv($"tile ({i % test.TilesX}, {i / test.TilesX}) at {spp} spp")))
                .Append((Z: test.ImageZ ?? 0, Dof: test.ImageDof, Where: Inv($"the whole image at {spp} spp")));
            foreach ((double z, double dof, string at) in all)
            {
                double p = BiasTest.PValue(z, dof);
                if (p < pMin || where.Length == 0)
                {
                    pMin = p;
                    worstZ = z;
                    worstDof = dof;
                    where = at;
                }
            }
        }

        // Šidák-adjusted p-value of the smallest: the chance that any test of the family is as extreme.
        double adjusted = 1 - Math.Pow(1 - pMin, family);
        return new Verdict(c.Name, a, adjusted, a.Alpha, adjusted, adjusted >= a.Alpha,
            Inv($"most extreme: z = {worstZ:F2} ({where}, {Math.Min(worstDof, 1e6):G3} effective dof), p = {pMin:G3}; Šidák-adjusted over {family} tests of tiles, images and spp: p = {adjusted:G3}, fails below α = {a.Alpha:G3}"));
    }

    private static (double Mean, double Sd, int K) Mse(IReadOnlyList<ReplicateError> errors)
    {
        double[] mse = [.. errors.Select(e => e.Mse)];
        double mean = mse.Average();
        double sd = mse.Length >= 2 ? Math.Sqrt(mse.Sum(v => (v - mean) * (v - mean)) / (mse.Length - 1)) : 0;
        return (mean, sd, mse.Length);
    }

    /// <summary>Weighted least squares of log mean MSE on log spp with delta-method weights; the slope and its standard error.</summary>
    private static (double Slope, double Se) Slope(CheckCase c, CaseMeasurements m)
    {
        var x = new List<double>();
        var y = new List<double>();
        var w = new List<double>();
        foreach (int spp in c.Spp)
        {
            (double mean, double sd, int k) = Mse(m.Errors[spp]);
            if (!(mean > 0))
            {
                continue;
            }

            double variance = Math.Max(sd * sd / (k * mean * mean), 1e-12);
            x.Add(Math.Log(spp));
            y.Add(Math.Log(mean));
            w.Add(1 / variance);
        }

        if (x.Count < 2)
        {
            return (double.NaN, double.NaN);
        }

        double sw = w.Sum();
        double mx = x.Zip(w, (a, b) => a * b).Sum() / sw;
        double my = y.Zip(w, (a, b) => a * b).Sum() / sw;
        double sxx = 0, sxy = 0;
        for (int i = 0; i < x.Count; i++)
        {
            sxx += w[i] * (x[i] - mx) * (x[i] - mx);
            sxy += w[i] * (x[i] - mx) * (y[i] - my);
        }

        return (sxy / sxx, Math.Sqrt(1 / sxx));
    }

    /// <summary>P(T ≥ t) for Student's t with <paramref name="dof"/> degrees of freedom; NaN statistics fail.</summary>
    private static double OneSided(double t, double dof)
    {
        if (double.IsNaN(t))
        {
            return 0;
        }

        return double.IsPositiveInfinity(t) ? 0 : double.IsNegativeInfinity(t) ? 1 : 1 - StudentT.CDF(0, 1, Math.Max(dof, 1), t);
    }

    private static string Inv(FormattableString s) => s.ToString(CultureInfo.InvariantCulture);
}
