using System.Globalization;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>
/// The scene-scale range (scenes/README.md, <see cref="SceneLoader.MinRelativeLength"/>): lengths at
/// its edges load and render to the closed-form values; lengths beyond it are refused by the loader
/// (the refusals are rows of <see cref="MalformedSceneTests"/>).
/// </summary>
public sealed class SceneScaleTests
{
    /// <summary>
    /// The white furnace of scenes/validation/white-furnace.yaml (albedo 0.5, emission 1: L = Le / (1 − a)
    /// = 2, common practice; follows from the rendering equation) with the sphere at the edges of the
    /// range: radius 1e-6 at the origin (the smallest length allowed there), 1e100 (the largest number),
    /// and radius 1.000001 = 1e-6 · (1 + 1e6) centred 1e6 from the origin (the relative edge). Within
    /// 4.5 standard errors of 8 replicates plus 1e-4 (the truncation at depth 48 is 2^-48), as
    /// ValidationSceneTests allows: false failures about 1e-4 per scene for a t-distributed mean.
    /// </summary>
    [Theory]
    [InlineData("[0, 0, 0]", "1e-6", "[0, 0, 0]")]
    [InlineData("[0, 0, 0]", "1e100", "[0, 0, 0]")]
    [InlineData("[1e6, 0, 0]", "1.000001", "[1e6, 0.1, 0]")]
    public void A_furnace_at_the_edges_of_the_range_renders_its_closed_form_radiance(string center, string radius, string camera)
    {
        string text = string.Create(CultureInfo.InvariantCulture, $$"""
            camera: { position: {{camera}}, look_at: [2e6, 1, 0.3], up: [0, 0, 1], fov: 90, resolution: [4, 4] }
            render: { spp: 16, max_depth: 48 }
            materials:
              wall: { type: diffuse, albedo: [0.5, 0.5, 0.5], emission: [1, 1, 1], two_sided: true }
            shapes:
              - { type: sphere, center: {{center}}, radius: {{radius}}, material: wall }
            """);
        SceneDescription description = SceneLoader.Parse(text, "edge.yaml", ".");
        Scene scene = Scene.Build(description);
        var options = new PathTracerOptions(HemisphereStrategy.Cosine, LightStrategy.Mis, 48, RussianRoulette: true);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 16, seed, options), 8);
        AssertWithin(estimate, 2.0, 4.5, 1e-4 * 2.0, $"furnace r = {radius} at {center}");
    }

    /// <summary>
    /// scenes/validation/disk-view-factor.yaml scaled whole: a Lambertian floor (albedo 0.8) under a
    /// coaxial disk of radius R = 1 at height h = 1 emitting L = 5 shows ρ·L·R²/(R² + h²) = 2 (Howell's
    /// catalog, differential element to a parallel coaxial disk). Scaled by 2e-6 (the disk's radius two
    /// floors of the range) and by 1e58 (the floor quad's edges at 1e60, the largest flat length). The
    /// ray offsets (1e-9 · (1 + coordinates)) move the floor point up by at most 1/2000 of h at the small
    /// scale, changing F by less than 1e-3 relative: that is the slack, with 4.5 standard errors.
    /// </summary>
    [Theory]
    [InlineData(2e-6)]
    [InlineData(1e58)]
    public void The_disk_view_factor_holds_at_both_ends_of_the_scale(double s)
    {
        string F(double v) => (v * s).ToString("R", CultureInfo.InvariantCulture);
        string text = $$"""
            camera: { position: [0, 0, {{F(0.5)}}], look_at: [0, 0, 0], fov: 0.5, resolution: [2, 2] }
            render: { spp: 256, max_depth: 1 }
            materials:
              floor: { type: diffuse, albedo: [0.8, 0.8, 0.8] }
              lamp:  { type: diffuse, albedo: [0, 0, 0], emission: [5, 5, 5] }
            shapes:
              - { type: quad, corner: [{{F(-50)}}, {{F(-50)}}, 0], edge_u: [{{F(100)}}, 0, 0], edge_v: [0, {{F(100)}}, 0], material: floor }
              - { type: disk, center: [0, 0, {{F(1)}}], normal: [0, 0, -1], radius: {{F(1)}}, material: lamp }
            """;
        Scene scene = Scene.Build(SceneLoader.Parse(text, "disk.yaml", "."));
        var options = new PathTracerOptions(HemisphereStrategy.Cosine, LightStrategy.Mis, 1, RussianRoulette: true);
        var estimate = Replicated(seed => Render(scene, "sobol", "owen", 256, seed, options), 8);
        AssertWithin(estimate, 2.0, 4.5, 2e-3, $"disk view factor at scale {s}");
    }
}
