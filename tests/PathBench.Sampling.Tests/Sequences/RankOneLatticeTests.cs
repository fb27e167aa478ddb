using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Sequences;
using PathBench.TestSupport;

namespace PathBench.Sampling.Tests.Sequences;

/// <summary>Rank-1 lattice rules against their published properties and against scipy.</summary>
public sealed class RankOneLatticeTests
{
    private static double[] Points(int n, int dims, Randomization r = Randomization.None, ulong seed = 0, int px = 0)
    {
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("lattice", r, false, n, seed), dims);
        var points = new double[n * dims];
        s.Fill(s.PixelKey(px, 0), dims, points);
        return points;
    }

    [Theory]
    [InlineData(2, 1)]
    [InlineData(3, 2)]
    [InlineData(89, 55)]
    [InlineData(610, 377)]
    [InlineData(10946, 6765)]
    [InlineData(100, 0)]
    [InlineData(4096, 0)]
    public void Fibonacci_counts_get_the_fibonacci_lattice(int n, int predecessor)
    {
        // Niederreiter 1992, §5.2: for n = F_m the Fibonacci lattice has z = (1, F_{m−1}).
        Assert.Equal(predecessor, RankOneLattice.FibonacciPredecessor(n));
        if (predecessor > 0)
        {
            Assert.Equal([1, predecessor], RankOneLattice.GeneratingVector(n, 2).ToArray());
        }
    }

    [Theory]
    [InlineData(89, 0)]
    [InlineData(233, 0)]
    [InlineData(987, 0)]
    [InlineData(1597, 4)] // the first two dimensions of a lattice of 12 components
    public void Fibonacci_lattice_l2_star_discrepancy_equals_scipy(int n, int firstDim)
    {
        // The points are built again in Python from the definition (k/n, {k·F_{m−1}/n}), and
        // scipy.stats.qmc.discrepancy(method="L2-star") (Debian python3-scipy) measures them; ours
        // must give the same points exactly and the same discrepancy to rounding.
        int f = RankOneLattice.FibonacciPredecessor(n);
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("lattice", Randomization.None, false, n, 0), 12);
        var ours = new double[2 * n];
        for (int k = 0; k < n; k++)
        {
            ours[2 * k] = s.Sample(0, (uint)k, firstDim);
            ours[2 * k + 1] = s.Sample(0, (uint)k, firstDim + 1);
        }

        if (firstDim > 0)
        {
            // Dimensions 4 and 5 are not the Fibonacci pair: only the discrepancy is compared, on our points.
            string measure = $$"""
                import sys, numpy as np
                from scipy.stats import qmc
                x = np.array([float(t) for t in sys.stdin.read().split()]).reshape({{n}}, 2)
                print(repr(float(qmc.discrepancy(x, method="L2-star"))))
                """;
            double theirs = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(measure, ReferenceTools.FormatNumbers(ours)))[0];
            AssertSameDiscrepancy(theirs, Discrepancy.L2Star(ours, 2));
            return;
        }

        string script = $$"""
            import numpy as np
            from scipy.stats import qmc
            k = np.arange({{n}})
            x = np.column_stack([k / {{n}}, (k * {{f}} % {{n}}) / {{n}}])
            print(" ".join(repr(float(v)) for v in x.ravel()), repr(float(qmc.discrepancy(x, method="L2-star"))))
            """;
        double[] scipy = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(script));
        Assert.Equal(2 * n + 1, scipy.Length);
        Assert.Equal(scipy[..^1], ours);
        AssertSameDiscrepancy(scipy[^1], Discrepancy.L2Star(ours, 2));
    }

    // Warnock's formula gets T² as the difference of sums of order 1/9, so both programs carry an
    // absolute rounding error of some 1e-16 in T², not in T: a lattice's T of order 1e-3 leaves only
    // 1e-6 of T² and a relative agreement of 1e-10 in T at best. Hence the bound on T² (about 50 units
    // in the last place of the cancelled terms; common practice).
    private static void AssertSameDiscrepancy(double scipy, double ours) =>
        Assert.True(Math.Abs(scipy * scipy - ours * ours) <= 1e-14, $"scipy {scipy}, ours {ours}");

    public static TheoryData<int, int> Rules => new() { { 377, 4 }, { 1024, 4 }, { 1000, 3 }, { 64, 6 } };

    [Theory]
    [MemberData(nameof(Rules))]
    public void The_rule_integrates_exactly_every_exponential_off_its_dual_lattice(int n, int dims)
    {
        // The character property of rank-1 lattices (Sloan & Joe 1994, "Lattice Methods for
        // Multiple Integration", Lemma 2.7): (1/n) Σ_k exp(2πi h·x_k) is 1 when h·z ≡ 0 (mod n) — h in
        // the dual lattice — and 0 otherwise. So the rule integrates cos(2π h·x) and sin(2π h·x)
        // exactly (integral 0) for every h ≠ 0 off the dual, and errs by exactly 1 on it. A random
        // shift Δ multiplies the sum by exp(2πi h·Δ): its modulus is unchanged. Every h with
        // |h_j| ≤ 3 is tried; the dual vectors among them must show the error.
        int[] z = RankOneLattice.GeneratingVector(n, LatticeSampler.Dimensions)[..dims].ToArray();
        foreach (Randomization r in new[] { Randomization.None, Randomization.CranleyPatterson })
        {
            double[] x = Points(n, dims, r, seed: 3);
            int dualHits = 0;
            var h = new int[dims];
            int total = (int)Math.Pow(7, dims);
            for (int code = 1; code < total; code++)
            {
                int c = code;
                long dot = 0;
                for (int j = 0; j < dims; j++)
                {
                    h[j] = c % 7 - 3;
                    c /= 7;
                    dot += (long)h[j] * z[j];
                }

                if (h.All(v => v == 0))
                {
                    continue;
                }

                double re = 0, im = 0;
                for (int k = 0; k < n; k++)
                {
                    double phase = 0;
                    for (int j = 0; j < dims; j++)
                    {
                        phase += h[j] * x[k * dims + j];
                    }

                    re += Math.Cos(2 * Math.PI * phase);
                    im += Math.Sin(2 * Math.PI * phase);
                }

                double modulus = Math.Sqrt(re * re + im * im) / n;
                bool dual = ((dot % n) + n) % n == 0;
                dualHits += dual ? 1 : 0;
                // Rounding of n phases of size up to 3·dims: a few 1e-13 at most (common practice bound).
                Assert.True(Math.Abs(modulus - (dual ? 1 : 0)) < 1e-10, $"n={n}, h=({string.Join(",", h)}), {r}: |mean| {modulus}, dual {dual}");
            }

            if (n == 64)
            {
                // With only 64 points some small h lie on the dual lattice: the test sees them.
                Assert.True(dualHits > 0, "no dual vector among the small h: the check never saw an error");
            }
        }
    }

    [Fact]
    public void The_cbc_choice_minimises_the_criterion_over_every_unit()
    {
        // Component by component (Sloan & Reztsov 2002): with z₁ … z_{j−1} fixed, z_j is the unit with
        // the smallest P₂. Checked against a brute-force evaluation of the whole criterion.
        foreach (int n in new[] { 64, 101, 100 })
        {
            int[] z = RankOneLattice.GeneratingVector(n, 4).ToArray();
            for (int j = RankOneLattice.FibonacciPredecessor(n) > 0 ? 2 : 1; j < 4; j++)
            {
                double chosen = RankOneLattice.P2(n, z.AsSpan(0, j + 1));
                for (int u = 1; u < n; u++)
                {
                    if (System.Numerics.BigInteger.GreatestCommonDivisor(u, n) != 1)
                    {
                        continue;
                    }

                    int[] other = [.. z[..j], u];
                    Assert.True(RankOneLattice.P2(n, other) >= chosen - 1e-12 * chosen, $"n={n}, component {j}: {u} beats {z[j]}");
                }
            }
        }
    }

    [Fact]
    public void Rotation_moves_the_whole_lattice_and_other_scrambles_are_refused()
    {
        // Cranley & Patterson 1976: every point moves by the same shift mod 1, so the differences
        // between points of a dimension are those of the plain lattice.
        double[] plain = Points(233, 3), shifted = Points(233, 3, Randomization.CranleyPatterson, seed: 8, px: 4);
        for (int d = 0; d < 3; d++)
        {
            double shift = shifted[d] - plain[d];
            for (int k = 1; k < 233; k++)
            {
                double moved = shifted[3 * k + d] - plain[3 * k + d] - shift;
                Assert.True(Math.Abs(moved - Math.Round(moved)) < 1e-12, $"point {k}, dim {d}");
            }
        }

        Assert.NotEqual(plain[0], shifted[0]);
        var e = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Create(new SamplerSpec("lattice", Randomization.Owen, false, 16, 0), 2));
        Assert.Contains("group under addition", e.Message, StringComparison.Ordinal);
        Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Create(new SamplerSpec("lattice", Randomization.CranleyPatterson, false, LatticeSampler.MaxPoints + 1, 0), 2));
    }
}
