namespace PathBench.Cli.Tests;

/// <summary>Small scenes the command tests share (invented: a floor, a lamp and a ball under a pale sky).</summary>
internal static class TestScenes
{
    /// <summary>A 24×16 scene with a small emitter, so noise, bias and light sampling all show.</summary>
    public const string LampAndBall = """
        camera: { position: [0, 1, 3], look_at: [0, 0.5, 0], fov: 40, resolution: [24, 16] }
        render: { spp: 4, max_depth: 3 }
        environment: { radiance: [0.5, 0.6, 0.7] }
        materials:
          white: { type: diffuse, albedo: [0.7, 0.7, 0.7] }
          lamp: { type: diffuse, albedo: [0, 0, 0], emission: [20, 20, 20] }
        shapes:
          - { type: quad, corner: [-5, 0, 5], edge_u: [10, 0, 0], edge_v: [0, 0, -10], material: white }
          - { type: sphere, center: [0.5, 1.5, 0], radius: 0.2, material: lamp }
          - { type: sphere, center: [-0.3, 0.3, 0], radius: 0.3, material: white }
        """;
}
