namespace PathBench.TestSupport;

/// <summary>
/// The one-sample Kolmogorov–Smirnov test against U(0, 1) (Kolmogorov 1933; Smirnov 1948):
/// √N·D has the asymptotic tail P(K &gt; x) ≈ 2·exp(−2x²), so 1.95 is the α = 0.001 critical value.
/// </summary>
public static class Uniformity
{
    /// <summary>The α = 0.001 critical value of √N·D.</summary>
    public const double CriticalValue001 = 1.95;

    /// <summary>√N·D of the samples (any order) against the uniform distribution on [0, 1).</summary>
    public static double KolmogorovSmirnov(IEnumerable<double> samples)
    {
        double[] x = samples.Order().ToArray();
        int n = x.Length;
        double d = 0;
        for (int i = 0; i < n; i++)
        {
            d = Math.Max(d, Math.Max((i + 1.0) / n - x[i], x[i] - (double)i / n));
        }

        return Math.Sqrt(n) * d;
    }
}
