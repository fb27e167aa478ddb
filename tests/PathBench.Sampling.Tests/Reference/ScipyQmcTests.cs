using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Reference;

/// <summary>
/// Our unscrambled Sobol and Halton points and L2-star discrepancies against
/// scipy.stats.qmc from Debian's python3-scipy, run live. scipy's unscrambled Sobol is
/// in Gray-code order: its point k is our point k ^ (k >> 1).
/// </summary>
public sealed class ScipyQmcTests
{
    private static double[] Ours(string generator, int n, int dims, int firstDim = 0)
    {
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.None, false, n, 0), firstDim + dims);
        var points = new double[n * dims];
        for (int i = 0; i < n; i++)
        {
            for (int d = 0; d < dims; d++)
            {
                points[i * dims + d] = s.Sample(0, (uint)i, firstDim + d);
            }
        }

        return points;
    }

    [Theory]
    [InlineData(1024, 16, 0)]
    [InlineData(256, 24, 1000)] // the dimensions around 1024 that renders with long paths reach
    [InlineData(64, 8, 21193)] // the last dimensions of the table
    public void Sobol_points_equal_scipy_in_gray_code_order(int n, int dims, int firstDim)
    {
        string script = $$"""
            import sys
            from scipy.stats import qmc
            x = qmc.Sobol({{firstDim + dims}}, scramble=False).random({{n}})[:, {{firstDim}}:]
            print(" ".join(repr(float(v)) for v in x.ravel()))
            """;
        double[] scipy = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(script));
        double[] ours = Ours("sobol", n, dims, firstDim);
        Assert.Equal(n * dims, scipy.Length);
        for (int k = 0; k < n; k++)
        {
            int natural = k ^ (k >> 1);
            for (int d = 0; d < dims; d++)
            {
                Assert.True(scipy[k * dims + d] == ours[natural * dims + d],
                    $"point {k} (ours {natural}), dim {firstDim + d}: scipy {scipy[k * dims + d]}, ours {ours[natural * dims + d]}");
            }
        }
    }

    [Theory]
    [InlineData(1000, 12)]
    [InlineData(300, 64)]
    public void Halton_points_equal_scipy(int n, int dims)
    {
        string script = $$"""
            from scipy.stats import qmc
            x = qmc.Halton({{dims}}, scramble=False).random({{n}})
            print(" ".join(repr(float(v)) for v in x.ravel()))
            """;
        double[] scipy = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(script));
        double[] ours = Ours("halton", n, dims);
        Assert.Equal(ours.Length, scipy.Length);
        for (int i = 0; i < ours.Length; i++)
        {
            // scipy sums digit terms in floating point; we round the exact rational once.
            // They agree to a few units in the last place (common practice tolerance).
            Assert.True(Math.Abs(scipy[i] - ours[i]) <= 4e-16, $"value {i}: scipy {scipy[i]}, ours {ours[i]}");
        }
    }

    public static TheoryData<string, int, int> DiscrepancyCases => new()
    {
        { "sobol", 64, 2 },
        { "sobol", 256, 5 },
        { "halton", 100, 3 },
        { "halton", 500, 8 },
        { "hammersley", 128, 2 },
    };

    [Theory]
    [MemberData(nameof(DiscrepancyCases))]
    public void L2_star_discrepancy_equals_scipy_on_the_same_points(string generator, int n, int dims)
    {
        double[] points = Ours(generator, n, dims);
        string script = $$"""
            import sys, numpy as np
            from scipy.stats import qmc
            x = np.array([float(t) for t in sys.stdin.read().split()]).reshape({{n}}, {{dims}})
            print(repr(float(qmc.discrepancy(x, method="L2-star"))))
            """;
        double scipy = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(script, ReferenceTools.FormatNumbers(points)))[0];
        double ours = Discrepancy.L2Star(points, dims);
        Assert.True(Math.Abs(scipy - ours) <= 1e-12 * Math.Abs(scipy) + 1e-15, $"scipy {scipy}, ours {ours}");
    }

    [Fact]
    public void L2_star_discrepancy_equals_scipy_on_arbitrary_points()
    {
        // Points from our hash, fed to both: checks Warnock's formula on unstructured input.
        const int n = 333, dims = 4;
        var points = new double[n * dims];
        SamplerCatalog.Create(new SamplerSpec("random", Randomization.None, false, n, 7), dims).Fill(0, dims, points);
        string script = $$"""
            import sys, numpy as np
            from scipy.stats import qmc
            x = np.array([float(t) for t in sys.stdin.read().split()]).reshape({{n}}, {{dims}})
            print(repr(float(qmc.discrepancy(x, method="L2-star"))))
            """;
        double scipy = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(script, ReferenceTools.FormatNumbers(points)))[0];
        Assert.Equal(scipy, Discrepancy.L2Star(points, dims), 12);
    }
}
