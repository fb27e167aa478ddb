namespace PathBench.Sampling.Analysis;

/// <summary>
/// The L2-star discrepancy by Warnock's closed form (Warnock 1972, "Computational
/// investigations of low-discrepancy point sets"):
/// T² = 3^−d − (2^(1−d)/n) Σ_i Π_k (1 − x_ik²) + (1/n²) Σ_i Σ_j Π_k (1 − max(x_ik, x_jk)).
/// Exact, O(n²·d). Reported as T (the square root), as scipy.stats.qmc.discrepancy does
/// with method="L2-star".
/// </summary>
public static class Discrepancy
{
    /// <summary>T for the points of <paramref name="dims"/> coordinates stored row by row.</summary>
    public static double L2Star(ReadOnlySpan<double> points, int dims)
    {
        if (dims <= 0 || points.Length == 0 || points.Length % dims != 0)
        {
            throw new ArgumentException("points must hold at least one whole point", nameof(points));
        }

        int n = points.Length / dims;
        double single = 0;
        for (int i = 0; i < n; i++)
        {
            double prod = 1;
            for (int k = 0; k < dims; k++)
            {
                double x = points[i * dims + k];
                prod *= 1 - x * x;
            }

            single += prod;
        }

        // The double sum is symmetric: diagonal once, each off-diagonal pair twice. The
        // summation order is fixed (i ascending, then j) so the result is reproducible.
        double pairs = 0;
        for (int i = 0; i < n; i++)
        {
            ReadOnlySpan<double> xi = points.Slice(i * dims, dims);
            double diag = 1;
            for (int k = 0; k < dims; k++)
            {
                diag *= 1 - xi[k];
            }

            double row = 0;
            for (int j = i + 1; j < n; j++)
            {
                ReadOnlySpan<double> xj = points.Slice(j * dims, dims);
                double prod = 1;
                for (int k = 0; k < dims; k++)
                {
                    prod *= 1 - Math.Max(xi[k], xj[k]);
                }

                row += prod;
            }

            pairs += diag + 2 * row;
        }

        double t2 = Math.Pow(3, -dims) - Math.Pow(2, 1 - dims) / n * single + pairs / ((double)n * n);
        return Math.Sqrt(Math.Max(0, t2));
    }
}
