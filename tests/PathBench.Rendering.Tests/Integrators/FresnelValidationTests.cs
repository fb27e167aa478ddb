using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>
/// A perfect mirror and a smooth glass slab rendered in a uniform environment, against the
/// Fresnel equations (Born &amp; Wolf, "Principles of Optics", 7th ed., §1.5.2, eqs. 21 and 25;
/// the same in Hecht, "Optics", 4th ed., §4.6.2). The slab is a non-absorbing plate between
/// parallel faces whose internal reflections add incoherently: with single-surface
/// reflectance R and T = 1 − R, R_total = R + T²R(1 + R² + R⁴ + …) = 2R/(1 + R) and
/// T_total = T²(1 + R² + …) = (1 − R)/(1 + R) (the geometric series summed; the plate formula
/// itself from memory). The path tracer tracks no polarisation: each
/// interface reflects the unpolarised mean (R_s + R_p)/2, so off normal incidence the expected
/// value is the series over that mean (at 45° on n = 1.5 it is 0.0956, while a plate in
/// unpolarised light that keeps the polarisations apart would give 0.0927).
/// Statistical checks: K = 8 replicates at z = 4.5, as <see cref="AnalyticValidationTests"/>
/// (about 3e-3 false failures per check from Student's t with 7 degrees of freedom).
/// </summary>
public sealed class FresnelValidationTests
{
    private const int K = 8;
    private const double Z = 4.5;
    private const double Ior = 1.5;

    // Long paths without roulette: the truncated series term R^(2·30) is below 1e-80.
    private static readonly PathTracerOptions Options = new(HemisphereStrategy.Cosine, LightStrategy.Mis, 64, false);

    private static Material Glass() => Material.From(new DielectricMaterial("glass", Rgb.Black, false, Ior));

    /// <summary>A camera <paramref name="degrees"/> off the z axis, looking at the origin with a 0.5° field of view.</summary>
    private static Camera Tilted(double degrees, int size)
    {
        double a = degrees * Math.PI / 180;
        return new Camera(new(0, -6 * Math.Sin(a), 6 * Math.Cos(a)), new(0, 0, 0), new(0, 1, 0), 0.5, size, size);
    }

    // A 100 × 100 plate between z = −0.5 (normal −z) and z = 0 (normal +z).
    private static Primitive[] Slab(int material) =>
    [
        Primitive.Quad(new(-50, -50, 0), new(100, 0, 0), new(0, 100, 0), material),
        Primitive.Quad(new(-50, -50, -0.5), new(0, 100, 0), new(100, 0, 0), material),
    ];

    /// <summary>Unpolarised single-interface reflectance at incidence angle θ from air onto index n (Born &amp; Wolf §1.5.2).</summary>
    private static double Reflectance(double degrees, double n)
    {
        double cosI = Math.Cos(degrees * Math.PI / 180);
        double sinT = Math.Sqrt(1 - cosI * cosI) / n;
        double cosT = Math.Sqrt(1 - sinT * sinT);
        double rs = (cosI - n * cosT) / (cosI + n * cosT);
        double rp = (n * cosI - cosT) / (n * cosI + cosT);
        return 0.5 * (rs * rs + rp * rp);
    }

    [Fact]
    public void Normal_incidence_reflectance_is_the_handbook_value()
    {
        // Worked example: glass of n = 1.5 reflects ((n − 1)/(n + 1))² = 0.04 at normal incidence (Hecht §4.6.2).
        Assert.Equal(0.04, Reflectance(0, 1.5), 12);
        Assert.Equal(0.04, Bsdf.FresnelDielectric(1, 1, 1, 1.5), 12);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(45.0)]
    public void Glass_slab_reflects_2R_over_1_plus_R(double degrees)
    {
        // Black environment behind nothing: the environment (radiance 1) is seen only by light the
        // slab sends back up; a black diffuse plane below the slab absorbs everything transmitted.
        Material[] m = [Glass(), Material.Diffuse("black", Rgb.Black)];
        Primitive[] p = [.. Slab(0), Primitive.Quad(new(-500, -500, -5), new(1000, 0, 0), new(0, 1000, 0), 1)];
        Scene scene = Scene.Build(p, m, [], Tilted(degrees, 8), Rgb.Grey(1));
        double r = Reflectance(degrees, Ior);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 256, seed, Options), K);
        AssertWithin(estimate, 2 * r / (1 + r), Z, 1e-9, $"slab reflectance at {degrees}°");
    }

    [Fact]
    public void Glass_slab_transmits_1_minus_R_over_1_plus_R()
    {
        // Black environment; an emitter of radiance 1 below the slab facing it: what the camera
        // sees is the transmitted fraction.
        Material[] m = [Glass(), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(1))];
        Primitive[] p = [.. Slab(0), Primitive.Quad(new(-500, -500, -5), new(1000, 0, 0), new(0, 1000, 0), 1)];
        Scene scene = Scene.Build(p, m, [], Tilted(0, 8), Rgb.Black);
        double r = Reflectance(0, Ior);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 256, seed, Options), K);
        AssertWithin(estimate, (1 - r) / (1 + r), Z, 1e-9, "slab transmittance at normal incidence");
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(60.0)]
    public void Perfect_mirror_reflects_the_whole_environment(double degrees)
    {
        // A perfect conductor reflects everything at every angle (Born & Wolf §14.2, the limit of
        // infinite conductivity); the renderer's mirror with F0 = 1 must give the environment's
        // radiance exactly, with no noise (a delta bounce and one escaping ray per sample).
        Material[] m = [Material.Conductor("mirror", 0, Rgb.Grey(1))];
        Primitive[] p = [Primitive.Quad(new(-50, -50, 0), new(100, 0, 0), new(0, 100, 0), 0)];
        Scene scene = Scene.Build(p, m, [], Tilted(degrees, 4), Rgb.Grey(0.75));
        Film film = Render(scene, "sobol", "owen", 16, 1, Options);
        for (int y = 0; y < 4; y++)
        {
            for (int x = 0; x < 4; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    Assert.Equal(0.75, film.Mean(x, y, c), 9);
                }
            }
        }
    }

    [Fact]
    public void Mirror_at_normal_incidence_reflects_its_F0()
    {
        // F0 is by definition the normal-incidence reflectance (Born & Wolf §14.2: R = |(ñ − 1)/(ñ + 1)|²);
        // Schlick's (1994) approximation is exact there. Camera rays are within 0.25° of the normal,
        // where (1 − cos θ)⁵ < 1e-22.
        var f0 = new Rgb(0.9, 0.6, 0.3);
        Material[] m = [Material.Conductor("metal", 0, f0)];
        Primitive[] p = [Primitive.Quad(new(-50, -50, 0), new(100, 0, 0), new(0, 100, 0), 0)];
        Scene scene = Scene.Build(p, m, [], Tilted(0, 4), Rgb.Grey(1));
        Film film = Render(scene, "sobol", "owen", 16, 1, Options);
        Assert.Equal(0.9, film.Mean(1, 2, 0), 9);
        Assert.Equal(0.6, film.Mean(1, 2, 1), 9);
        Assert.Equal(0.3, film.Mean(1, 2, 2), 9);
    }
}
