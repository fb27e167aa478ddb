using System.Numerics;

namespace PathBench.Sampling.Analysis;

/// <summary>
/// The quality parameter t of a 2-D projection as a (t, m, 2)-net in base 2 (Niederreiter
/// 1992, "Random Number Generation and Quasi-Monte Carlo Methods", Def. 4.1): n = 2^m points
/// form a (t, m, 2)-net when every elementary interval [a·2^−p, (a+1)·2^−p) × [b·2^−q, (b+1)·2^−q)
/// with p + q = m − t holds exactly 2^t points.
/// </summary>
public static class NetQuality
{
    /// <summary>
    /// The smallest t for which dimensions (<paramref name="dimA"/>, <paramref name="dimB"/>) of the
    /// points form a (t, m, 2)-net, checked over all elementary intervals.
    /// </summary>
    public static int TValue(ReadOnlySpan<double> points, int dims, int dimA, int dimB)
    {
        int n = points.Length / dims;
        if (n == 0 || !BitOperations.IsPow2(n) || points.Length % dims != 0)
        {
            throw new ArgumentException("the (t,m,2)-net test needs a whole number of points that is a power of two", nameof(points));
        }

        int m = BitOperations.Log2((uint)n);
        var cellA = new uint[n];
        var cellB = new uint[n];
        for (int i = 0; i < n; i++)
        {
            // The leading m binary digits of each coordinate; every elementary interval of
            // volume at least 2^-m is a union of these.
            cellA[i] = Digits(points[i * dims + dimA], m);
            cellB[i] = Digits(points[i * dims + dimB], m);
        }

        var counts = new int[n];
        for (int t = 0; t < m; t++)
        {
            if (IsNet(cellA, cellB, m, t, counts))
            {
                return t;
            }
        }

        return m; // every set of 2^m points is a (m, m, 2)-net
    }

    private static bool IsNet(uint[] cellA, uint[] cellB, int m, int t, int[] counts)
    {
        int k = m - t;
        for (int p = 0; p <= k; p++)
        {
            int q = k - p;
            Array.Clear(counts, 0, 1 << k);
            for (int i = 0; i < cellA.Length; i++)
            {
                uint a = cellA[i] >> (m - p);
                uint b = cellB[i] >> (m - q);
                if (++counts[(int)((a << q) | b)] > 1 << t)
                {
                    return false;
                }
            }
        }

        // No box holds more than 2^t of the 2^m points and there are 2^(m-t) boxes: all hold exactly 2^t.
        return true;
    }

    private static uint Digits(double x, int m)
    {
        if (!(x >= 0 && x < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(x), x, "coordinates must lie in [0, 1)");
        }

        return (uint)Math.Min((ulong)(x * (1UL << m)), (1UL << m) - 1);
    }
}
