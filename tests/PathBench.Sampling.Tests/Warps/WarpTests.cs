using PathBench.Sampling.Analysis;
using PathBench.Sampling.Warps;

namespace PathBench.Sampling.Tests.Warps;

/// <summary>
/// χ² goodness of fit of each warp against its own density (Pearson 1900). The family of
/// six tests runs at α = 0.01 with the Šidák (1967) per-test level, so a correct set of
/// warps fails this test with probability 0.01 for a random seed; the seed is fixed.
/// </summary>
public sealed class WarpTests
{
    private const int Samples = 200_000;
    private static readonly double Level = ChiSquareWarpTest.SidakLevel(0.01, ChiSquareWarpTest.StandardCases().Count);

    public static TheoryData<string> Cases => new(ChiSquareWarpTest.StandardCases().Select(c => c.Name));

    [Theory]
    [MemberData(nameof(Cases))]
    public void Warp_matches_its_density(string name)
    {
        WarpCase warp = ChiSquareWarpTest.StandardCases().Single(c => c.Name == name);
        ChiSquareResult result = ChiSquareWarpTest.Run(warp, Samples, 16, 32, seed: 42);
        Assert.True(result.PValue > Level, $"{name}: χ² = {result.Statistic:F1} on {result.DegreesOfFreedom} dof, p = {result.PValue:E3} <= {Level:E3}");
    }

    [Fact]
    public void Cosine_warp_fails_against_the_uniform_density()
    {
        var wrong = new WarpCase("cosine-vs-uniform", (u, v) => ChiSquareWarpTest.HemisphereBin(Warp.CosineHemisphere(u, v)),
            (a, b) => Warp.UniformHemispherePdf(ChiSquareWarpTest.HemisphereDir(a, b)), 2 * Math.PI);
        Assert.True(ChiSquareWarpTest.Run(wrong, Samples, 16, 32, seed: 42).PValue < 1e-9);
    }

    [Fact]
    public void A_slightly_wrong_density_is_caught()
    {
        // A 5 % error in the cone's solid angle: the test must have the power to see it.
        const double c = 0.8;
        var wrong = new WarpCase("cone-with-wrong-angle", (u, v) => ChiSquareWarpTest.ConeBin(Warp.UniformCone(u, v, c), c),
            (a, b) => Warp.UniformConePdf(new Vec3d(0, 0, 1 - a * (1 - c)), c) * (a < 0.5 ? 1.05 : 0.95), 2 * Math.PI * (1 - c));
        Assert.True(ChiSquareWarpTest.Run(wrong, Samples, 16, 32, seed: 42).PValue < 1e-6);
    }

    [Fact]
    public void Warps_land_in_their_domains()
    {
        for (int i = 0; i < 1000; i++)
        {
            double u = (i + 0.5) / 1000, v = (i * 0.618034) % 1;
            Vec3d h = Warp.CosineHemisphere(u, v);
            Assert.InRange(h.Z, 0, 1);
            Assert.Equal(1.0, h.X * h.X + h.Y * h.Y + h.Z * h.Z, 12);
            (double dx, double dy) = Warp.ConcentricDisk(u, v);
            Assert.True(dx * dx + dy * dy <= 1 + 1e-12);
            (double b1, double b2) = Warp.UniformTriangle(u, v);
            Assert.True(b1 >= 0 && b2 >= 0 && b1 + b2 <= 1 + 1e-12);
        }
    }

    /// <summary>
    /// The concentric map (Shirley &amp; Chiu 1997, eq. for the four wedges: r = a, φ = (π/4)(b/a) when
    /// |a| &gt; |b|, else r = b, φ = π/2 − (π/4)(a/b)) gives the bits of that formula evaluated with
    /// the general <see cref="PortableMath.SinCos"/>, which is what it computed before its range
    /// shortcuts: 200 000 seeded points, the diagonals |a| = |b| and the centre lines.
    /// </summary>
    [Fact]
    public void Concentric_map_keeps_the_general_sine_bits()
    {
        var random = new Random(23);
        var points = new List<(double U, double V)> { (0.5, 0.5), (0.5, 0.0), (0.0, 0.5), (0.0, 0.0), (0.25, 0.75), (0.75, 0.75), (0.1, 0.9) };
        for (int i = 0; i < 200_000; i++)
        {
            double u = random.NextDouble();
            points.Add((u, random.NextDouble()));
            points.Add((u, i % 2 == 0 ? u : 1 - u));
        }

        foreach ((double u, double v) in points)
        {
            double a = (2.0 * u) - 1.0, b = (2.0 * v) - 1.0;
            (double X, double Y) expected = (0.0, 0.0);
            if (a != 0.0 || b != 0.0)
            {
                bool first = Math.Abs(a) > Math.Abs(b);
                double r = first ? a : b;
                (double s, double c) = PortableMath.SinCos(first ? Math.PI / 4 * (b / a) : Math.PI / 2 - (Math.PI / 4 * (a / b)));
                expected = (r * c, r * s);
            }

            (double x, double y) = Warp.ConcentricDisk(u, v);
            Assert.True(BitConverter.DoubleToInt64Bits(x) == BitConverter.DoubleToInt64Bits(expected.X)
                && BitConverter.DoubleToInt64Bits(y) == BitConverter.DoubleToInt64Bits(expected.Y), $"({u:R}, {v:R})");
        }
    }

    [Fact]
    public void Pooling_follows_the_rule_and_an_empty_expectation_with_hits_fails()
    {
        // Two bins expecting 2 and 3 are pooled into one expecting 5; hits where nothing is
        // expected make the statistic infinite and p = 0.
        ChiSquareResult pooled = ChiSquareWarpTest.Evaluate("pool", [2, 3, 10, 10], [2, 3, 10, 10]);
        Assert.Equal(2, pooled.PooledBins);
        Assert.Equal(0.0, pooled.Statistic);
        Assert.Equal(2, pooled.DegreesOfFreedom);
        Assert.Equal(0.0, ChiSquareWarpTest.Evaluate("empty", [1, 10], [0, 11]).PValue);
    }

    [Fact]
    public void Sidak_level_matches_its_formula()
    {
        // Šidák (1967): 1 − (1 − 0.05)^(1/10) = 0.0051162… (computed by hand).
        Assert.Equal(0.0051162, ChiSquareWarpTest.SidakLevel(0.05, 10), 7);
    }
}
