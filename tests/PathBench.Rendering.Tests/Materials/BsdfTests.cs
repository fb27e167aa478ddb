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

    [Fact]
    public void Cosine_sampled_diffuse_weight_has_the_bits_of_the_general_formula()
    {
        // Issue 12 returns the albedo itself for cosine sampling instead of albedo · (cos/π / pdf):
        // with pdf = cos/π the factor is x / x, exactly 1 in IEEE 754 (IEEE 754-2019 §4.3: a correctly
        // rounded quotient of equal finite nonzero values). Checked against the formula over a 257 × 257
        // grid of the square, edges included, and albedos down to the smallest subnormal.
        Rgb[] albedos = [new(0.75, 0.73, 0.68), new(double.Epsilon, 1e-300, 1), new(0.1, 0, 3)];
        foreach (Rgb albedo in albedos)
        {
            Material m = Material.Diffuse("d", albedo);
            foreach (Vec3d wo in new[] { new Vec3d(0.3, 0.4, Math.Sqrt(0.75)), new Vec3d(0.6, 0, -0.8) })
            {
                for (int i = 0; i <= 256; i++)
                {
                    for (int j = 0; j <= 256; j++)
                    {
                        double u = Math.Min(i / 256.0, 1 - Math.Pow(2, -53)), v = Math.Min(j / 256.0, 1 - Math.Pow(2, -53));
                        BsdfSample s = Bsdf.Sample(m, albedo, wo, u, v, 0.5, HemisphereStrategy.Cosine);
                        if (s.Pdf == 0)
                        {
                            Assert.True(s.Weight.IsBlack);
                            continue;
                        }

                        double cos = Math.Abs(s.Direction.Z);
                        Rgb formula = albedo * (cos / Math.PI / s.Pdf);
                        Assert.Equal(BitConverter.DoubleToInt64Bits(formula.R), BitConverter.DoubleToInt64Bits(s.Weight.R));
                        Assert.Equal(BitConverter.DoubleToInt64Bits(formula.G), BitConverter.DoubleToInt64Bits(s.Weight.G));
                        Assert.Equal(BitConverter.DoubleToInt64Bits(formula.B), BitConverter.DoubleToInt64Bits(s.Weight.B));
                    }
                }
            }
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
    public void Brewster_angle_reflects_only_the_s_polarisation()
    {
        // At Brewster's angle tan θ_B = n the p-polarised reflectance vanishes (Born & Wolf
        // §1.5.3); for n = 1.5 the s-polarised reflectance there is about 0.148 (the familiar
        // handbook figure for glass; from memory), so the unpolarised R is about 0.074.
        double n = 1.5, thetaB = Math.Atan(n);
        double cosI = Math.Cos(thetaB), sinT = Math.Sin(thetaB) / n, cosT = Math.Sqrt(1 - sinT * sinT);
        Assert.Equal(0.074, Bsdf.FresnelDielectric(cosI, cosT, 1, n), 3);
    }

    [Theory]
    [InlineData(0.1)]
    [InlineData(0.4)]
    [InlineData(1.0)]
    public void Ggx_distribution_projects_to_unit_area(double alpha)
    {
        // Normalisation of a microfacet distribution, ∫ D(h) cos θ_h dω_h = 1 (Walter, Marschner,
        // Li & Torrance 2007, eq. 4), by midpoint integration in (cos θ, φ) — D is isotropic, so φ drops out.
        const int steps = 200_000;
        double sum = 0;
        for (int i = 0; i < steps; i++)
        {
            double c = (i + 0.5) / steps;
            sum += Ggx.D(new Vec3d(Math.Sqrt(1 - c * c), 0, c), alpha) * c;
        }

        Assert.Equal(1.0, sum / steps * 2 * Math.PI, 3);
    }

    [Theory]
    [InlineData(0.3, 0.9)]
    [InlineData(0.6, 0.4)]
    [InlineData(1.0, 0.15)]
    public void Visible_normals_integrate_to_one(double alpha, double cosOut)
    {
        // The masking function's defining constraint (Heitz 2014, "Understanding the
        // Masking-Shadowing Function", eq. 2): ∫ G1(wo) max(0, wo·h) D(h) dω_h = cos θ_o,
        // which checks Λ against D. Midpoint rule over the hemisphere of normals in (cos θ, φ).
        var wo = new Vec3d(Math.Sqrt(1 - cosOut * cosOut), 0, cosOut);
        double g1 = 1 / (1 + Ggx.Lambda(wo, alpha));
        const int nc = 2000, nphi = 400;
        double sum = 0;
        for (int i = 0; i < nc; i++)
        {
            double c = (i + 0.5) / nc, s = Math.Sqrt(1 - c * c);
            for (int j = 0; j < nphi; j++)
            {
                double phi = 2 * Math.PI * (j + 0.5) / nphi;
                var h = new Vec3d(s * Math.Cos(phi), s * Math.Sin(phi), c);
                sum += Math.Max(0, Vec3d.Dot(wo, h)) * Ggx.D(h, alpha);
            }
        }

        double integral = g1 * sum * (1.0 / nc) * (2 * Math.PI / nphi);
        Assert.Equal(cosOut, integral, 3);
    }
}
