using PathBench.Rendering.Materials;
using PathBench.Sampling.Analysis;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Materials;

/// <summary>
/// χ² tests of BSDF sampling against the BSDF's own pdf (Pearson 1900), the whole family at
/// α = 0.01 with the Šidák per-test level, fixed seed: a correct sampler fails with
/// probability 0.01 for a random seed.
/// </summary>
public sealed class BsdfTests
{
    public static TheoryData<string, double, double> Cases => new()
    {
        // name, roughness, cos θ of the outgoing direction
        { "diffuse-uniform", -1, 0.7 },
        { "diffuse-cosine", -2, 0.3 },
        { "ggx-0.2-normal", 0.2, 0.95 },
        { "ggx-0.5-oblique", 0.5, 0.3 },
        { "ggx-0.9-grazing", 0.9, 0.1 },
        { "ggx-0.3-oblique", 0.3, 0.5 },
    };

    private static readonly double Level = ChiSquareWarpTest.SidakLevel(0.01, 6);

    [Theory]
    [MemberData(nameof(Cases))]
    public void Sampling_matches_its_pdf(string name, double roughness, double cosOut)
    {
        HemisphereStrategy h = roughness == -1 ? HemisphereStrategy.Uniform : HemisphereStrategy.Cosine;
        Material m = roughness < 0 ? Material.Diffuse("d", Rgb.Grey(0.5)) : Material.Conductor("c", roughness, Rgb.Grey(0.9));
        var wo = new Vec3d(Math.Sqrt(1 - cosOut * cosOut), 0, cosOut);
        var warp = new WarpCase(name,
            (u, v) =>
            {
                BsdfSample s = Bsdf.Sample(m, Rgb.Grey(0.5), wo, u, v, 0.5, h);
                return s.Weight.IsBlack ? (double.NaN, double.NaN) : ChiSquareWarpTest.HemisphereBin(s.Direction);
            },
            (a, b) => Bsdf.Evaluate(m, Rgb.Grey(0.5), wo, ChiSquareWarpTest.HemisphereDir(a, b), h).Pdf,
            2 * Math.PI);
        ChiSquareResult r = ChiSquareWarpTest.Run(warp, 200_000, 20, 40, seed: 7);
        Assert.True(r.PValue > Level, $"{name}: χ² = {r.Statistic:F1} on {r.DegreesOfFreedom} dof, p = {r.PValue:E3}");
    }

    [Fact]
    public void A_wrong_pdf_is_caught()
    {
        // Sampling GGX at roughness 0.3 but claiming the pdf of roughness 0.4 must fail.
        Material sampled = Material.Conductor("c", 0.3, Rgb.Grey(0.9)), claimed = Material.Conductor("c", 0.4, Rgb.Grey(0.9));
        var wo = new Vec3d(0.6, 0, 0.8);
        var warp = new WarpCase("wrong",
            (u, v) =>
            {
                BsdfSample s = Bsdf.Sample(sampled, Rgb.Black, wo, u, v, 0.5, HemisphereStrategy.Cosine);
                return s.Weight.IsBlack ? (double.NaN, double.NaN) : ChiSquareWarpTest.HemisphereBin(s.Direction);
            },
            (a, b) => Bsdf.Evaluate(claimed, Rgb.Black, wo, ChiSquareWarpTest.HemisphereDir(a, b), HemisphereStrategy.Cosine).Pdf,
            2 * Math.PI);
        Assert.True(ChiSquareWarpTest.Run(warp, 200_000, 20, 40, seed: 7).PValue < 1e-6);
    }

    [Fact]
    public void Sampled_weight_equals_f_cos_over_pdf()
    {
        // The weight a sample returns must be the estimator f·cos/pdf that Evaluate implies (internal consistency).
        Material m = Material.Conductor("c", 0.4, new Rgb(0.9, 0.6, 0.3));
        var wo = new Vec3d(0.3, 0.4, Math.Sqrt(1 - 0.25));
        for (int i = 0; i < 200; i++)
        {
            double u = (i + 0.5) / 200, v = (i * 0.754877666) % 1;
            BsdfSample s = Bsdf.Sample(m, Rgb.Black, wo, u, v, 0.5, HemisphereStrategy.Cosine);
            if (s.Weight.IsBlack)
            {
                continue;
            }

            (Rgb f, double pdf) = Bsdf.Evaluate(m, Rgb.Black, wo, s.Direction, HemisphereStrategy.Cosine);
            Assert.Equal(pdf, s.Pdf, 9);
            Assert.Equal(f.G * s.Direction.Z / pdf, s.Weight.G, 9);
        }
    }

    [Theory]
    [InlineData(1.0, 1.5, 0.04)]   // normal incidence: ((n−1)/(n+1))² = 0.04 (Born & Wolf §1.5)
    [InlineData(1.0, 1.333, 0.0204)] // water, ((0.333)/(2.333))² = 0.02037
    public void Fresnel_at_normal_incidence(double etaI, double etaT, double expected)
    {
        Assert.Equal(expected, Bsdf.FresnelDielectric(1, 1, etaI, etaT), 4);
    }

    [Fact]
    public void Brewster_angle_has_no_p_reflection()
    {
        // At Brewster's angle tan θ_B = n (Born & Wolf §1.5.3) rp = 0, so R = rs²/2; checked
        // against the direct formula for rs at that angle.
        double n = 1.5, thetaB = Math.Atan(n);
        double cosI = Math.Cos(thetaB), sinT = Math.Sin(thetaB) / n, cosT = Math.Sqrt(1 - sinT * sinT);
        double rs = (cosI - n * cosT) / (cosI + n * cosT);
        Assert.Equal(0.5 * rs * rs, Bsdf.FresnelDielectric(cosI, cosT, 1, n), 12);
    }
}
