using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>
/// The tuned <see cref="PathTracer"/> against the plain <see cref="ReferencePathTracer"/> it was made
/// from (issue 12): the same arithmetic, so every sample's radiance must have the same bits and every
/// path the same ray count, for every light strategy and hemisphere strategy, on scenes that reach each
/// branch: the demo scenes (quad, sphere and environment lights, checker albedo, GGX, the smooth
/// dielectric, mesh shading normals), the box of <see cref="DeterminismTests"/>, the box with a
/// second lamp (a light choice among several area lights), and the box with its lamp a disk or a
/// triangle and no environment (a single light of those shapes).
/// </summary>
public sealed class PathTracerReferenceTests
{
    public static TheoryData<string> Scenes
    {
        get
        {
            var data = new TheoryData<string> { "box", "two-lamp box", "disk-lamp box", "triangle-lamp box" };
            foreach (string file in Directory.GetFiles(RepositoryPaths.Scenes, "*.yaml").Where(f => !f.Contains(".study.", StringComparison.Ordinal) && !f.Contains(".batch.", StringComparison.Ordinal)).Order(StringComparer.Ordinal))
            {
                data.Add(Path.GetFileName(file));
            }

            return data;
        }
    }

    private static Scene Load(string name)
    {
        if (name == "box")
        {
            return DeterminismTests.Box();
        }

        if (name == "two-lamp box")
        {
            Scene box = DeterminismTests.Box();
            Primitive[] prims = [.. box.Bvh.Primitives.ToArray(), Primitive.Sphere(new(-0.5, 1.2, -0.4), 0.1, 1)];
            return Scene.Build(prims, box.Materials.ToArray(), [], box.Camera, box.Environment);
        }

        if (name is "disk-lamp box" or "triangle-lamp box")
        {
            // The box's lamp as a downward disk or triangle, and no environment: one light of each
            // shape the demo scenes lack, sampled without the light choice (LightSet.SampleOnlyLight).
            Scene box = DeterminismTests.Box();
            Primitive[] prims = box.Bvh.Primitives.ToArray();
            int lamp = Array.FindIndex(prims, p => p.Material == 1);
            prims[lamp] = name == "disk-lamp box"
                ? Primitive.Disk(new(0, 1.99, 0), new(0, -1, 0), 0.3, 1)
                : Primitive.Triangle(new(-0.3, 1.99, -0.3), new(0.3, 1.99, -0.3), new(0, 1.99, 0.3), 1, -1);
            return Scene.Build(prims, box.Materials.ToArray(), [], box.Camera, Rgb.Black);
        }

        return Scene.Build(SceneLoader.Load(Path.Combine(RepositoryPaths.Scenes, name)));
    }

    [Theory]
    [MemberData(nameof(Scenes))]
    public void Every_sample_has_the_reference_bits(string name)
    {
        Scene scene = Load(name);
        Camera camera = scene.Camera;
        const int spp = 6, depth = 8;
        int dims = DimensionLayout.Total(depth);
        int compared = 0;
        foreach (LightStrategy lights in new[] { LightStrategy.Bsdf, LightStrategy.Nee, LightStrategy.Mis })
        {
            foreach (HemisphereStrategy hemisphere in new[] { HemisphereStrategy.Cosine, HemisphereStrategy.Uniform })
            {
                var options = new PathTracerOptions(hemisphere, lights, depth, RussianRoulette: true);
                var tuned = new PathTracer(scene, options);
                var reference = new ReferencePathTracer(scene, options);
                PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, spp, 17), dims);
                // A 10 × 8 grid of pixels over the whole image.
                for (int gy = 0; gy < 8; gy++)
                {
                    for (int gx = 0; gx < 10; gx++)
                    {
                        int x = (2 * gx + 1) * camera.Width / 20, y = (2 * gy + 1) * camera.Height / 16;
                        for (uint s = 0; s < spp; s++)
                        {
                            var stream = new SampleStream(sampler, sampler.PixelKey(x, y), s);
                            (double fx, double fy) = stream.Get2D(DimensionLayout.Pixel);
                            (double lu, double lv) = stream.Get2D(DimensionLayout.Lens);
                            Ray ray = camera.Generate(x + fx, y + fy, lu, lv);
                            long tunedRays = 0, referenceRays = 0;
                            Rgb a = tuned.Radiance(ray, stream, ref tunedRays);
                            Rgb b = reference.Radiance(ray, stream, ref referenceRays);
                            Assert.True(Bits(a) == Bits(b) && tunedRays == referenceRays,
                                $"{name} {lights}/{hemisphere} pixel ({x}, {y}) sample {s}: {a} in {tunedRays} rays, the reference {b} in {referenceRays}");
                            compared += a.IsBlack ? 0 : 1;
                        }
                    }
                }
            }
        }

        // The comparison saw light, not only black samples (a scene that sent every path into the dark would prove little).
        Assert.True(compared > 100, $"{name}: only {compared} non-black samples compared");
    }

    private static (long, long, long) Bits(Rgb c) =>
        (BitConverter.DoubleToInt64Bits(c.R), BitConverter.DoubleToInt64Bits(c.G), BitConverter.DoubleToInt64Bits(c.B));
}
