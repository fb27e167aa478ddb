using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>
/// Renders checked against closed forms. Each check compares the mean of K = 8 independent
/// replicates with the exact value at z = 4.5 (two-sided false-failure probability about
/// 7e-6 per check for a normal mean; with K = 8 the t distribution's heavier tail makes it
/// about 3e-3 per check, under 0.5 % per test theory row; from Student's t with 7 dof).
/// </summary>
public sealed class AnalyticValidationTests
{
    private const int K = 8;

    // The white furnace's estimates are skewed (Russian roulette's rare long paths), which makes a
    // t-test on 8 replicates fail correct generators more often than Student's t says: bluenoise/owen
    // came out at t = -4.7 on seeds 1-8 while 300 further replicates gave +1.4 standard errors from
    // the exact value. 32 replicates: P(|t| > 4.5) ≈ 9e-5 per check with 31 dof, and the skew's
    // effect on the t statistic shrinks as 1/√K (Student's t with 31 dof; the skew effect from memory).
    private const int FurnaceReplicates = 32;
    private const double Z = 4.5;

    // Every randomized combination the catalog knows, and Owen-scrambled Sobol with antithetic pairing.
    public static TheoryData<string, string> RandomizedGenerators
    {
        get
        {
            var data = new TheoryData<string, string>();
            foreach ((string generator, string randomize) in SamplerCatalog.RandomizedCombinations(withAntithetic: false).Append(("sobol", "owen+antithetic")))
            {
                data.Add(generator, randomize);
            }

            return data;
        }
    }

    [Theory]
    [InlineData("halton", "digit-permutation")]
    [InlineData("hammersley", "cranley-patterson")]
    [InlineData("lattice", "cranley-patterson")]
    public void Paths_longer_than_a_generators_dimensions_stay_unbiased(string generator, string randomize)
    {
        // The white furnace (common practice, as above) with albedo 0.99, no roulette and 150
        // bounces: a path uses 4 + 8·151 = 1212 dimensions, past Halton's 1024, Hammersley's
        // 1025 and the lattice's 12, so its later vertices draw from the padding. (Inside a sphere this estimator is
        // nearly deterministic, so this checks long padded paths run and sum right; the padding's
        // uniformity is checked in SampleStreamTests.)
        const double a = 0.99;
        const int depth = 150;
        var wall = Material.Diffuse("wall", Rgb.Grey(a), Rgb.Grey(1), twoSided: true);
        var scene = Scene.Build([Primitive.Sphere(new(0, 0, 0), 1, 0)], [wall], [], new Camera(new(0.1, 0.2, 0), new(1, 0, 0.3), new(0, 0, 1), 90, 4, 4), Rgb.Black);
        double expected = (1 - Math.Pow(a, depth + 1)) / (1 - a);
        foreach (LightStrategy l in new[] { LightStrategy.Nee, LightStrategy.Mis })
        {
            var options = new PathTracerOptions(HemisphereStrategy.Cosine, l, depth, RussianRoulette: false);
            var estimate = Replicated(seed => Render(scene, generator, randomize, 16, seed, options), K);
            // Inside a sphere, area sampling of the sphere has exactly the cosine pdf, so each
            // path's value is nearly deterministic; the slack covers rounding over 150 bounces.
            AssertWithin(estimate, expected, Z, 1e-7 * expected, $"{generator}/{randomize} {l}, {depth} bounces");
        }
    }

    [Theory]
    [MemberData(nameof(RandomizedGenerators))]
    public void White_furnace_radiance_is_emission_over_one_minus_albedo(string generator, string randomize)
    {
        // Inside a closed two-sided diffuse sphere with albedo a and emission Le every path
        // vertex sees Le and reflects a fraction a: L = Le·Σ_{k=0}^{D} a^k, → Le/(1−a) (common
        // practice; follows from the rendering equation). D = 40 leaves a^41 ≈ 5e-13.
        const double a = 0.5, le = 1.0;
        const int depth = 40;
        var wall = Material.Diffuse("wall", Rgb.Grey(a), Rgb.Grey(le), twoSided: true);
        var scene = Scene.Build([Primitive.Sphere(new(0, 0, 0), 1, 0)], [wall], [], new Camera(new(0.1, 0.2, 0), new(1, 0, 0.3), new(0, 0, 1), 90, 4, 4), Rgb.Black);
        double expected = le * (1 - Math.Pow(a, depth + 1)) / (1 - a);
        foreach (HemisphereStrategy h in new[] { HemisphereStrategy.Uniform, HemisphereStrategy.Cosine })
        {
            foreach (LightStrategy l in new[] { LightStrategy.Bsdf, LightStrategy.Nee, LightStrategy.Mis })
            {
                var options = new PathTracerOptions(h, l, depth, RussianRoulette: true);
                var estimate = Replicated(seed => Render(scene, generator, randomize, 16, seed, options), FurnaceReplicates);
                AssertWithin(estimate, expected, Z, 1e-9, $"{generator}/{randomize} {h} {l}");
            }
        }
    }

    public static TheoryData<LightStrategy, HemisphereStrategy> Strategies => new()
    {
        { LightStrategy.Bsdf, HemisphereStrategy.Cosine },
        { LightStrategy.Bsdf, HemisphereStrategy.Uniform },
        { LightStrategy.Nee, HemisphereStrategy.Cosine },
        { LightStrategy.Mis, HemisphereStrategy.Cosine },
        { LightStrategy.Mis, HemisphereStrategy.Uniform },
    };

    public static TheoryData<LightStrategy, double> FarFromTheOrigin => new()
    {
        { LightStrategy.Nee, 1e3 }, { LightStrategy.Mis, 1e3 }, { LightStrategy.Nee, 1e5 }, { LightStrategy.Mis, 1e5 },
    };

    [Theory]
    [MemberData(nameof(FarFromTheOrigin))]
    public void Light_sampling_works_far_from_the_origin(LightStrategy lights, double offset)
    {
        // The same disk configuration factor (Howell's catalog, F = R²/(R² + h²)), moved far from
        // the origin and made small: a light must not shadow itself at any scale.
        const double rho = 0.8, emission = 5, r = 0.05, h = 0.1;
        double expected = rho * emission * r * r / (r * r + h * h);
        var o = new PathBench.Sampling.Warps.Vec3d(offset, -offset / 2, offset / 3);
        var scene = Scene.Build(
            [Primitive.Disk(o + new PathBench.Sampling.Warps.Vec3d(0, 0, h), new(0, 0, -1), r, 1), Primitive.Quad(o + new PathBench.Sampling.Warps.Vec3d(-1, -1, 0), new(2, 0, 0), new(0, 2, 0), 0)],
            [Material.Diffuse("floor", Rgb.Grey(rho)), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(emission))],
            [], new Camera(o + new PathBench.Sampling.Warps.Vec3d(0, 0, 0.05), o, new(0, 1, 0), 0.5, 2, 2), Rgb.Black);
        var options = new PathTracerOptions(HemisphereStrategy.Cosine, lights, 1, RussianRoulette: false);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 256, seed, options), K);
        AssertWithin(estimate, expected, Z, 1e-3 * expected, $"disk at {offset:E0} {lights}");
    }

    [Theory]
    [MemberData(nameof(Strategies))]
    public void Point_on_the_axis_of_a_parallel_disk_sees_rho_L_F(LightStrategy lights, HemisphereStrategy hemisphere)
    {
        // Howell, "A Catalog of Radiation Heat Transfer Configuration Factors", differential
        // element to a parallel coaxial disk: F = R² / (R² + h²). Receiver radiance ρ·L·F.
        const double rho = 0.8, emission = 5, r = 1, h = 1;
        double expected = rho * emission * r * r / (r * r + h * h);
        var scene = Scene.Build(
            WithFloor(Primitive.Disk(new(0, 0, h), new(0, 0, -1), r, 1), 0),
            [Material.Diffuse("floor", Rgb.Grey(rho)), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(emission))],
            [], LookingDown(0.5), Rgb.Black);
        var options = new PathTracerOptions(hemisphere, lights, 1, RussianRoulette: false);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 256, seed, options), K);
        // The pixels see a patch of radius ~0.002 around the axis; F changes there by < 1e-5.
        AssertWithin(estimate, expected, Z, 1e-4, $"disk {lights} {hemisphere}");
    }

    [Theory]
    [MemberData(nameof(Strategies))]
    public void Point_under_the_corner_of_a_parallel_rectangle_sees_rho_L_F(LightStrategy lights, HemisphereStrategy hemisphere)
    {
        // Howell's catalog, differential element to a parallel rectangle, the element under
        // one corner (formula from memory of the catalog entry; A = X/h, B = Y/h):
        // F = 1/(2π) [A/√(1+A²) · atan(B/√(1+A²)) + B/√(1+B²) · atan(A/√(1+B²))].
        const double rho = 0.7, emission = 4, x = 2, y = 1, h = 1;
        double A = x / h, B = y / h;
        double f = (A / Math.Sqrt(1 + A * A) * Math.Atan(B / Math.Sqrt(1 + A * A)) + B / Math.Sqrt(1 + B * B) * Math.Atan(A / Math.Sqrt(1 + B * B))) / (2 * Math.PI);
        double expected = rho * emission * f;
        // edge_u × edge_v = (0, y, 0) × (x, 0, 0) points down, towards the receiver.
        var scene = Scene.Build(
            WithFloor(Primitive.Quad(new(0, 0, h), new(0, y, 0), new(x, 0, 0), 1), 0),
            [Material.Diffuse("floor", Rgb.Grey(rho)), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(emission))],
            [], LookingDown(0.5), Rgb.Black);
        var options = new PathTracerOptions(hemisphere, lights, 1, RussianRoulette: false);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 256, seed, options), K);
        // F is linear in position near the corner, so the symmetric pixel footprint averages to F at the corner
        // up to second order (< 1e-5 here).
        AssertWithin(estimate, expected, Z, 1e-4, $"rectangle {lights} {hemisphere}");
    }

    [Fact]
    public void A_one_sided_emitter_facing_away_lights_nothing()
    {
        // The emission rule: emitted on the side the normal points to only.
        var scene = Scene.Build(
            WithFloor(Primitive.Disk(new(0, 0, 1), new(0, 0, 1), 1, 1), 0),
            [Material.Diffuse("floor", Rgb.Grey(0.8)), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(5))],
            [], LookingDown(0.5), Rgb.Black);
        foreach (LightStrategy l in new[] { LightStrategy.Bsdf, LightStrategy.Nee, LightStrategy.Mis })
        {
            Assert.Equal(0.0, ImageMean(Render(scene, "sobol", "owen", 64, 1, new PathTracerOptions(HemisphereStrategy.Cosine, l, 4, false))));
        }
    }

    [Fact]
    public void White_conductor_under_white_sky_never_gains_energy()
    {
        // A GGX conductor with F0 = 1 under a uniform sky of radiance 1: single-scattering
        // microfacet models lose energy, never create it (Heitz, Hanika, d'Eon & Dachsbacher
        // 2016, "Multiple-scattering microfacet BSDFs with the Smith model", §1). With BSDF
        // sampling each sample's weight F·G2/G1 is at most 1, so every pixel is; light
        // sampling and MIS must agree with it in expectation.
        foreach (double roughness in new[] { 0.1, 0.5, 1.0 })
        {
            var scene = Scene.Build([Primitive.Sphere(new(0, 0, 0), 1, 0)], [Material.Conductor("metal", roughness, Rgb.Grey(1))], [],
                new Camera(new(0, 0, 5), new(0, 0, 0), new(0, 1, 0), 20, 8, 8), Rgb.Grey(1));
            double reference = double.NaN;
            foreach (LightStrategy l in new[] { LightStrategy.Bsdf, LightStrategy.Nee, LightStrategy.Mis })
            {
                var options = new PathTracerOptions(HemisphereStrategy.Cosine, l, 8, false);
                if (l == LightStrategy.Bsdf)
                {
                    Film film = Render(scene, "sobol", "owen", 64, 3, options);
                    for (int y = 0; y < film.Height; y++)
                    {
                        for (int x = 0; x < film.Width; x++)
                        {
                            Assert.True(film.Mean(x, y, 0) <= 1 + 1e-9, $"roughness {roughness}: pixel {x},{y} = {film.Mean(x, y, 0)}");
                        }
                    }
                }

                var estimate = Replicated(seed => Render(scene, "sobol", "owen", 64, seed, options), K);
                if (l == LightStrategy.Bsdf)
                {
                    // Single-scattering GGX keeps well over a third of the energy even at roughness 1
                    // (measured 0.43 here; Heitz et al. 2016, fig. 1, shows losses up to about 60 %).
                    Assert.InRange(estimate.Mean, 0.35, 1.0);
                    reference = estimate.Mean;
                }
                else
                {
                    // Unbiased estimators of one integral agree within their noise (plus the
                    // BSDF-only reference's own, under 1e-3 here). Light sampling alone is very
                    // noisy on a sharp lobe (stderr 0.4 at roughness 0.1): that is its nature, not bias.
                    AssertWithin(estimate, reference, Z, 2e-3, $"roughness {roughness} {l} vs bsdf");
                }
            }
        }
    }
}
