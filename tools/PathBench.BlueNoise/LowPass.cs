namespace PathBench.BlueNoise;

/// <summary>
/// The toroidal binomial low-pass both optimisers minimise the output energy of: the filter G of
/// order B (even) along each axis, binomial weights C(B, k)/2^B, so G ∗ G has weights C(2B, B + d)/4^B.
/// </summary>
public static class LowPass
{
    /// <summary>(G ∗ G) along one axis for the binomial filter of order b: C(2b, b + d) / 4^b, d = −b … b.</summary>
    public static double[] Autocorrelation(int b)
    {
        var row = new double[(2 * b) + 1];
        row[0] = 1;
        for (int i = 1; i <= 2 * b; i++)
        {
            for (int j = i; j > 0; j--)
            {
                row[j] += row[j - 1];
            }
        }

        double total = 0;
        foreach (double x in row)
        {
            total += x;
        }

        for (int i = 0; i < row.Length; i++)
        {
            row[i] /= total;
        }

        return row;
    }

    /// <summary>G ∗ G ∗ e for every one of the v interleaved images in e (e[p·v + c]).</summary>
    public static double[] Smooth(double[] e, int t, int v, double[] gg, int b)
    {
        var h = new double[e.Length];
        for (int p = 0; p < t * t; p++)
        {
            AddWindow(h, t, gg, b, p % t, p / t, e.AsSpan(p * v, v), 1);
        }

        return h;
    }

    /// <summary>h += sign · (G∗G)(· − (x, y)) · amount, over the window where G∗G is non-zero.</summary>
    public static void AddWindow(double[] h, int t, double[] gg, int b, int x, int y, ReadOnlySpan<double> amount, double sign)
    {
        int v = amount.Length;
        for (int dy = -b; dy <= b; dy++)
        {
            int row = Wrap(y + dy, t) * t;
            for (int dx = -b; dx <= b; dx++)
            {
                double w = sign * gg[b + dy] * gg[b + dx];
                Span<double> target = h.AsSpan((row + Wrap(x + dx, t)) * v, v);
                for (int c = 0; c < v; c++)
                {
                    target[c] += w * amount[c];
                }
            }
        }
    }

    /// <summary>Σ a_i·b_i in index order.</summary>
    public static double Dot(double[] a, double[] b)
    {
        double sum = 0;
        for (int i = 0; i < a.Length; i++)
        {
            sum += a[i] * b[i];
        }

        return sum;
    }

    private static int Wrap(int i, int t) => ((i % t) + t) % t;
}
