using System.Collections.Concurrent;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// Generating vectors of rank-1 lattice rules: point k of n is ({k·z₁/n}, …, {k·z_s/n}).
/// </summary>
/// <remarks>
/// <para>
/// When n is a Fibonacci number F_m (m ≥ 3), the first two components are the Fibonacci lattice
/// z = (1, F_{m−1}) (Niederreiter 1992, "Random Number Generation and Quasi-Monte Carlo Methods",
/// §5.2; Sloan &amp; Joe 1994, "Lattice Methods for Multiple Integration", §2). Every other component
/// comes from the component-by-component (CBC) construction: z₁ = 1, then each z_j in turn is the
/// unit 1 ≤ z ≤ n/2 (gcd(z, n) = 1) that minimises, with the earlier components fixed, the weighted
/// criterion P₂(z) = −1 + (1/n) Σ_k Π_j (1 + γ_j·2π²·B₂({k·z_j/n})), B₂(x) = x² − x + 1/6 — the
/// squared worst-case error in the Korobov space of smoothness 2 (Sloan &amp; Reztsov 2002,
/// "Component-by-component construction of good lattice rules", Math. Comp. 71(237); weighted form
/// and its fast FFT evaluation in Nuyens &amp; Cools 2006, "Fast algorithms for component-by-component
/// construction of rank-1 lattice rules in shift-invariant reproducing kernel Hilbert spaces",
/// Math. Comp. 75(254)). Here the criterion is evaluated directly, O(s·n²/4) for n a power of two;
/// the fast algorithm would not change the vector. Ties go to the smaller z; z and n − z give the
/// same criterion, hence the search up to n/2.
/// </para>
/// <para>Product weights γ_j = 1/j² (common practice: decaying weights, later dimensions matter less).</para>
/// </remarks>
public static class RankOneLattice
{
    // Vectors are a pure function of (n, dims); the cache only saves the O(n²) search.
    private static readonly ConcurrentDictionary<(int N, int Dims), Lazy<int[]>> Cache = new();

    /// <summary>The generating vector of <paramref name="dims"/> components for <paramref name="n"/> points.</summary>
    public static ReadOnlySpan<int> GeneratingVector(int n, int dims)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(n, 1);
        ArgumentOutOfRangeException.ThrowIfLessThan(dims, 1);
        return Cache.GetOrAdd((n, dims), key => new Lazy<int[]>(() => Build(key.N, key.Dims), LazyThreadSafetyMode.ExecutionAndPublication)).Value;
    }

    /// <summary>F_{m−1} when <paramref name="n"/> = F_m is a Fibonacci number of at least 2 (1, 2, 3, 5, 8, …), otherwise 0.</summary>
    public static int FibonacciPredecessor(int n)
    {
        (long a, long b) = (1, 2); // consecutive Fibonacci numbers F_2, F_3
        if (n == 2)
        {
            return 1;
        }

        while (b < n)
        {
            (a, b) = (b, a + b);
        }

        return b == n ? (int)a : 0;
    }

    /// <summary>The weighted P₂ criterion of a whole vector (the quantity the CBC search minimises one component at a time).</summary>
    public static double P2(int n, ReadOnlySpan<int> z)
    {
        double[] omega = Omega(n);
        double sum = 0;
        for (int k = 0; k < n; k++)
        {
            double product = 1;
            for (int j = 0; j < z.Length; j++)
            {
                product *= 1 + Weight(j) * omega[(int)((long)k * z[j] % n)];
            }

            sum += product;
        }

        return sum / n - 1;
    }

    private static double Weight(int j) => 1.0 / ((j + 1.0) * (j + 1.0));

    // ω(k/n) = 2π²·B₂(k/n) for k = 0 … n − 1: the Korobov kernel's one-dimensional part.
    private static double[] Omega(int n)
    {
        const double TwoPiSquared = 2 * Math.PI * Math.PI;
        var omega = new double[n];
        for (int k = 0; k < n; k++)
        {
            double x = (double)k / n;
            omega[k] = TwoPiSquared * (x * x - x + 1.0 / 6.0);
        }

        return omega;
    }

    private static int[] Build(int n, int dims)
    {
        var z = new int[dims];
        z[0] = 1;
        if (dims == 1 || n == 1)
        {
            for (int j = 1; j < dims; j++)
            {
                z[j] = 1;
            }

            return z;
        }

        double[] omega = Omega(n);
        var product = new double[n];
        for (int k = 0; k < n; k++)
        {
            product[k] = 1 + Weight(0) * omega[k];
        }

        int fibonacci = FibonacciPredecessor(n);
        for (int j = 1; j < dims; j++)
        {
            int best = j == 1 && fibonacci > 0 ? fibonacci : Search(n, omega, product, Weight(j));
            z[j] = best;
            for (int k = 0; k < n; k++)
            {
                product[k] *= 1 + Weight(j) * omega[(int)((long)k * best % n)];
            }
        }

        return z;
    }

    private static int Search(int n, double[] omega, double[] product, double weight)
    {
        int best = 1;
        double bestValue = double.PositiveInfinity;
        for (int z = 1; z <= n / 2; z++)
        {
            if (Gcd(z, n) != 1)
            {
                continue;
            }

            // Σ_k product_k · ω({k z / n}); the constant Σ_k product_k is the same for every z.
            double sum = 0;
            int index = 0;
            for (int k = 0; k < n; k++)
            {
                sum += product[k] * omega[index];
                index += z;
                if (index >= n)
                {
                    index -= n;
                }
            }

            double value = weight * sum;
            if (value < bestValue)
            {
                bestValue = value;
                best = z;
            }
        }

        return best;
    }

    private static int Gcd(int a, int b)
    {
        while (b != 0)
        {
            (a, b) = (b, a % b);
        }

        return a;
    }
}
