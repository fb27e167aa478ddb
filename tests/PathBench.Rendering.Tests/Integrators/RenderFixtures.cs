using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>Renders small scenes made in code and summarises them over independent replicates.</summary>
internal static class RenderFixtures
{
    public static Film Render(Scene scene, string generator, string randomize, int spp, ulong seed, PathTracerOptions options, int threads = 2)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        // Generators with a dimension limit serve what they can and the path pads the rest, as the render command does.
        int dims = Math.Min(Math.Min(64, SamplerCatalog.Find(generator).MaxDimensions), DimensionLayout.Total(options.MaxDepth));
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec(generator, r, anti, spp, seed), dims);
        return Renderer.Render(new RenderJob(scene, sampler, options, 0, spp, threads)).Film;
    }

    /// <summary>Mean over all pixels and channels.</summary>
    public static double ImageMean(Film film)
    {
        double sum = 0;
        for (int y = 0; y < film.Height; y++)
        {
            for (int x = 0; x < film.Width; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    sum += film.Mean(x, y, c);
                }
            }
        }

        return sum / (3.0 * film.Width * film.Height);
    }

    /// <summary>
    /// Mean and standard error over <paramref name="replicates"/> renders with seeds 1, 2, …:
    /// each replicate's image mean is one independent estimate (decision 5 of the design: noise
    /// from independent randomizations, not from within-pixel variance).
    /// </summary>
    public static (double Mean, double StdErr) Replicated(Func<ulong, Film> render, int replicates)
    {
        var values = new double[replicates];
        for (int k = 0; k < replicates; k++)
        {
            values[k] = ImageMean(render((ulong)k + 1));
        }

        double mean = values.Average();
        double var = values.Sum(v => (v - mean) * (v - mean)) / (replicates - 1);
        return (mean, Math.Sqrt(var / replicates));
    }

    /// <summary>Asserts |mean − expected| ≤ z·stderr + absolute slack.</summary>
    public static void AssertWithin((double Mean, double StdErr) estimate, double expected, double z, double slack, string what)
    {
        double bound = z * estimate.StdErr + slack;
        Assert.True(Math.Abs(estimate.Mean - expected) <= bound,
            $"{what}: mean {estimate.Mean:G8} ± {estimate.StdErr:G3} (stderr), expected {expected:G8}, allowed {bound:G3}");
    }

    public static Camera LookingDown(double height, int size = 2) =>
        new(new(0, 0, height), new(0, 0, 0), new(0, 1, 0), 0.5, size, size);

    public static Primitive[] WithFloor(Primitive emitter, int floorMaterial) =>
    [
        emitter,
        Primitive.Quad(new(-50, -50, 0), new(100, 0, 0), new(0, 100, 0), floorMaterial),
    ];
}
