using MathNet.Numerics.Distributions;

namespace PathBench.Sampling.Analysis;

/// <summary>An ordinary least-squares line y = intercept + slope·x with the two-sided 95 % interval of the slope.</summary>
public sealed record LineFit(double Slope, double Intercept, double SlopeLow, double SlopeHigh, int Points)
{
    /// <summary>
    /// Fits the line and the slope's interval from Student's t with n − 2 degrees of freedom
    /// (e.g. Draper &amp; Smith, "Applied Regression Analysis", §1.4): slope ± t·s/√Sxx.
    /// </summary>
    public static LineFit Fit(IReadOnlyList<double> x, IReadOnlyList<double> y)
    {
        ArgumentNullException.ThrowIfNull(x);
        ArgumentNullException.ThrowIfNull(y);
        int n = x.Count;
        if (n != y.Count || n < 2)
        {
            throw new ArgumentException("a line fit needs at least two (x, y) pairs");
        }

        double mx = x.Average(), my = y.Average();
        double sxx = 0, sxy = 0;
        for (int i = 0; i < n; i++)
        {
            sxx += (x[i] - mx) * (x[i] - mx);
            sxy += (x[i] - mx) * (y[i] - my);
        }

        double slope = sxy / sxx;
        double intercept = my - slope * mx;
        if (n == 2)
        {
            return new LineFit(slope, intercept, double.NegativeInfinity, double.PositiveInfinity, n);
        }

        double sse = 0;
        for (int i = 0; i < n; i++)
        {
            double r = y[i] - intercept - slope * x[i];
            sse += r * r;
        }

        double se = Math.Sqrt(sse / (n - 2) / sxx);
        double t = StudentT.InvCDF(0, 1, n - 2, 0.975);
        return new LineFit(slope, intercept, slope - t * se, slope + t * se, n);
    }
}
