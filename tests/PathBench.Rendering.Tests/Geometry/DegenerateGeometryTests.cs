using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Warps;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.Geometry;

/// <summary>
/// Geometry that is valid but extreme in double precision: a ground sphere so large that |f|² and
/// r² agree in every stored bit, and camera vectors so short that their squares underflow.
/// </summary>
public sealed class DegenerateGeometryTests
{
    public static TheoryData<double> Radii => new() { 1e6, 1e20, 1e100 };

    /// <summary>
    /// A ray from height h above the top of a sphere of radius R (centre R below the origin) going
    /// down at angle θ from the vertical: for R ≫ h the surface near the top is the plane y = 0 to
    /// within x²/(2R) (the sagitta of a circle, from memory), so t = h / cos θ to within
    /// h²·sin²θ/(2R cos³θ), doubled here for the higher-order terms. Rays leaving 1e-9 above
    /// the surface upwards must miss, downwards hit at 1e-9 / cos θ.
    /// </summary>
    [Theory]
    [MemberData(nameof(Radii))]
    public void A_ray_near_the_top_of_a_sphere_meets_it_where_the_tangent_plane_says(double radius)
    {
        Primitive sphere = Primitive.Sphere(new(0, -radius, 0), radius, 0);
        foreach (double h in new[] { 1.0, 1e-9 })
        {
            foreach (Vec3d d in new Vec3d[] { new(0, -1, 0), new Vec3d(0.3, -1, 0.2).Normalized(), new Vec3d(-0.7, -0.7, 0.1).Normalized() })
            {
                double cos = -d.Y;
                double sagitta = h * h * (1 - (cos * cos)) / (2 * radius * cos * cos * cos);
                double t = sphere.Intersect(new Ray(new(0, h, 0), d, double.PositiveInfinity), double.PositiveInfinity);
                Assert.True(Math.Abs(t - (h / cos)) <= (2 * sagitta) + (1e-12 * h), FormattableString.Invariant($"R {radius}, h {h}, d {d}: t = {t:R}, expected {h / cos:R}"));
                Vec3d up = new(-d.X, -d.Y, -d.Z);
                Assert.Equal(double.PositiveInfinity, sphere.Intersect(new Ray(new(0, h, 0), up, double.PositiveInfinity), double.PositiveInfinity));
            }
        }
    }

    /// <summary>
    /// A Lambertian ground of albedo ρ under a uniform sky of radiance L, seen from above with
    /// nothing else in the scene, has radiance ρ·L everywhere: its irradiance is π·L and it reflects
    /// ρ/π of it (common practice; the rendering equation with one bounce). A disk of radius 10^6 and
    /// spheres of radius 10^20 and 10^100 centred that far below are the same ground to within 10^-6,
    /// so each image mean must be ρ·L = 0.5 within 4 standard errors over 8 replicates (false
    /// failure ≈ 6e-5 per check for a normal mean), plus 10^-6 for the disk's finite horizon.
    /// </summary>
    [Theory]
    [InlineData("disk", 1e6)]
    [InlineData("sphere", 1e20)]
    [InlineData("sphere", 1e100)]
    public void A_huge_ground_sphere_renders_like_the_ground_plane(string kind, double size)
    {
        Primitive ground = kind == "disk"
            ? Primitive.Disk(new(0, 0, 0), new(0, 1, 0), size, 0)
            : Primitive.Sphere(new(0, -size, 0), size, 0);
        Scene scene = Scene.Build([ground], [Material.Diffuse("ground", Rgb.Grey(0.5))], [],
            new Camera(new(0, 1, 0), new(0, 0, -1), new(0, 1, 0), 60, 8, 6), Rgb.Grey(1));
        var options = new PathTracerOptions(HemisphereStrategy.Cosine, LightStrategy.Mis, 3, false);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 4, seed, options), 8);
        AssertWithin(estimate, 0.5, z: 4, slack: 1e-6, $"{kind} of size {size:G3}");
    }

    /// <summary>
    /// A view direction or an 'up' of length 10^-200 is valid input: its plain square underflows to
    /// 0 (IEEE 754 binary64's smallest subnormal is about 4.9e-324), but the camera must aim exactly
    /// as with the same vectors at length 1.
    /// </summary>
    [Theory]
    [InlineData(1e-200, 1.0)]
    [InlineData(1.0, 1e-200)]
    [InlineData(1e-200, 1e-200)]
    [InlineData(1e100, 1e100)]
    public void Tiny_and_huge_camera_vectors_aim_as_unit_ones(double view, double up)
    {
        var position = new Vec3d(0, 0, 0); // at the origin, so position + a tiny view vector is not rounded back to position
        var direction = new Vec3d(0.2, -0.5, -1);
        var reference = new Camera(position, position + direction, new(0, 1, 0), 50, 16, 12);
        var scaled = new Camera(position, position + (direction * view), new(0, up, 0), 50, 16, 12);
        foreach ((double x, double y) in new[] { (0.5, 0.5), (8.0, 6.0), (15.5, 11.5), (3.25, 9.75) })
        {
            Vec3d a = reference.Generate(x, y, 0.5, 0.5).Direction, b = scaled.Generate(x, y, 0.5, 0.5).Direction;
            Assert.True((a - b).Length < 1e-15, FormattableString.Invariant($"pixel ({x}, {y}): {b} against {a}"));
        }
    }

    [Fact]
    public void A_scene_with_tiny_camera_vectors_loads_with_its_focus_distance()
    {
        const string text = "camera: { position: [0, 1, 0], look_at: [0, 1, -1e-200], up: [0, 1e-200, 0], fov: 60, resolution: [8, 6] }\n" +
            "materials: { ground: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n" +
            "shapes: [ { type: sphere, center: [0, -1e20, 0], radius: 1e20, material: ground } ]\n";
        SceneDescription scene = SceneLoader.Parse(text, "tiny.yaml", ".");
        Assert.Equal(1e-200, scene.Camera.FocusDistance);
        Assert.All(Enumerable.Range(0, 6), y => Assert.True(Camera.From(scene.Camera).Generate(4, y, 0.5, 0.5).Direction.IsFinite));
    }
}
