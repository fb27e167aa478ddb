using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Analysis;

/// <summary>The RMSE of one integrand at each count, over independent replicates, and the fitted log-log slope.</summary>
public sealed record IntegrandConvergence(string Integrand, double Exact, IReadOnlyList<int> Counts, IReadOnlyList<double> Rmse, IReadOnlyList<double> Mean, LineFit Fit);

/// <summary>
/// Error against the analytic value as the count grows: for each count n = 2^k, K
/// replicates (global seeds seed, seed+1, … — independent randomizations of the same
/// generator), each estimating the integral by the mean of f over dimensions 0 and 1 of the
/// n points of pixel (0, 0). RMSE over replicates; slope of log RMSE on log n by least squares.
/// </summary>
public static class ConvergenceStudy
{
    /// <summary>Runs the study. Replicates run in parallel; each writes its own slot and the reduction runs in a fixed order, so the numbers do not depend on <paramref name="threads"/>.</summary>
    public static IReadOnlyList<IntegrandConvergence> Run(
        string generator, Randomization randomize, bool antithetic, int minCount, int maxCount, int replicates, ulong seed, int threads,
        IReadOnlyList<TestIntegrand>? integrands = null)
    {
        // Validate once, before any work, so a bad combination fails fast.
        SamplerCatalog.Create(new SamplerSpec(generator, randomize, antithetic, Math.Max(1, minCount), seed), 2);
        return Run((n, s) => SamplerCatalog.Create(new SamplerSpec(generator, randomize, antithetic, n, s), 2), minCount, maxCount, replicates, seed, threads, integrands);
    }

    /// <summary>
    /// Runs the study on samplers built by <paramref name="create"/> (planned count, global seed; at
    /// least two dimensions): the seam for a sampler that is not in the catalog.
    /// </summary>
    public static IReadOnlyList<IntegrandConvergence> Run(
        Func<int, ulong, PointSampler> create, int minCount, int maxCount, int replicates, ulong seed, int threads,
        IReadOnlyList<TestIntegrand>? integrands = null)
    {
        ArgumentNullException.ThrowIfNull(create);
        integrands ??= TestIntegrands.All;
        if (minCount < 1 || maxCount < minCount)
        {
            throw new SamplerSpecException($"counts must satisfy 1 <= min <= max, got {minCount}..{maxCount}");
        }

        if (replicates < 2)
        {
            throw new SamplerSpecException($"replicates must be at least 2, got {replicates}");
        }

        var counts = new List<int>();
        for (long n = minCount; n <= maxCount; n *= 2)
        {
            counts.Add((int)n);
        }

        // estimates[c][r][f]
        var estimates = new double[counts.Count, replicates, integrands.Count];
        var options = new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, threads) };
        Parallel.For(0, counts.Count * replicates, options, job =>
        {
            int c = job / replicates, r = job % replicates;
            int n = counts[c];
            PointSampler sampler = create(n, seed + (ulong)r);
            ulong pixel = sampler.PixelKey(0, 0);
            Span<double> sums = stackalloc double[integrands.Count];
            for (int i = 0; i < n; i++)
            {
                (double x, double y) = sampler.Sample2D(pixel, (uint)i, 0);
                for (int f = 0; f < integrands.Count; f++)
                {
                    sums[f] += integrands[f].F(x, y);
                }
            }

            for (int f = 0; f < integrands.Count; f++)
            {
                estimates[c, r, f] = sums[f] / n;
            }
        });

        var results = new List<IntegrandConvergence>();
        for (int f = 0; f < integrands.Count; f++)
        {
            var rmse = new double[counts.Count];
            var mean = new double[counts.Count];
            for (int c = 0; c < counts.Count; c++)
            {
                double se = 0, sum = 0;
                for (int r = 0; r < replicates; r++)
                {
                    double e = estimates[c, r, f] - integrands[f].Exact;
                    se += e * e;
                    sum += estimates[c, r, f];
                }

                rmse[c] = Math.Sqrt(se / replicates);
                mean[c] = sum / replicates;
            }

            // Zero error (an integrand a set integrates exactly) has no logarithm: such counts are left out of the fit.
            var lx = new List<double>();
            var ly = new List<double>();
            for (int c = 0; c < counts.Count; c++)
            {
                if (rmse[c] > 0)
                {
                    lx.Add(Math.Log(counts[c]));
                    ly.Add(Math.Log(rmse[c]));
                }
            }

            LineFit fit = lx.Count >= 2
                ? LineFit.Fit(lx, ly)
                : new LineFit(double.NaN, double.NaN, double.NaN, double.NaN, lx.Count);
            results.Add(new IntegrandConvergence(integrands[f].Name, integrands[f].Exact, counts, rmse, mean, fit));
        }

        return results;
    }
}
