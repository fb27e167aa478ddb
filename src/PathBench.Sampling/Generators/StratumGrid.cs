namespace PathBench.Sampling.Generators;

/// <summary>
/// The near-square grid of exactly n strata used by jittered and multi-jittered sets:
/// columns = the largest divisor of n not above √n, rows = n / columns. Every stratum
/// holds exactly one point, which keeps the estimator unbiased for any n (a grid with
/// empty cells would weight the filled ones wrongly); for prime n it degrades to 1 × n.
/// </summary>
public readonly record struct StratumGrid(int Columns, int Rows)
{
    /// <summary>The grid for <paramref name="n"/> points.</summary>
    public static StratumGrid For(int n)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(n, 1);
        int c = (int)Math.Sqrt(n);
        while (c * c > n)
        {
            c--;
        }

        while (n % c != 0)
        {
            c--;
        }

        return new StratumGrid(c, n / c);
    }
}
