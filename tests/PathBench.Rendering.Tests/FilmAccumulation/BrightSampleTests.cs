using PathBench.Rendering.Accumulation;
using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.FilmAccumulation;

/// <summary>
/// Samples too bright for the film's fixed-point planes (channel values of 2^32 or more) are kept
/// exactly in its wide sums: the image is right however bright the scene, and still bit-identical
/// for any thread count, shard split and merge order.
/// </summary>
public sealed class BrightSampleTests
{
    private static readonly PathTracerOptions BsdfOnly = new(HemisphereStrategy.Cosine, LightStrategy.Bsdf, 4, false);
    private static readonly PathTracerOptions Mis = new(HemisphereStrategy.Cosine, LightStrategy.Mis, 4, false);

    /// <summary>A camera at the centre of a closed two-sided sphere of radius 1 (a furnace).</summary>
    private static Scene Furnace(double emission, double albedo) => Scene.Build(
        [Primitive.Sphere(new(0, 0, 0), 1, 0)],
        [Material.Diffuse("shell", Rgb.Grey(albedo), Rgb.Grey(emission), twoSided: true)],
        [],
        new Camera(new(0, 0, 0), new(0, 0, -1), new(0, 1, 0), 60, 8, 6),
        Rgb.Black);

    private static void AssertEveryPixel(Film film, double expected)
    {
        Assert.Equal(0, film.NonFiniteSamples);
        for (int y = 0; y < film.Height; y++)
        {
            for (int x = 0; x < film.Width; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    double mean = film.Mean(x, y, c);
                    Assert.True(Math.Abs(mean - expected) <= 1e-15 * expected, FormattableString.Invariant($"pixel ({x}, {y}) channel {c}: {mean:R}, expected {expected:R}"));
                }
            }
        }
    }

    public static TheoryData<double> Emissions => new() { 1, 4e9, 4.3e9, 1e30, 1e300 };

    /// <summary>
    /// An emitter of radiance Le and albedo 0 all around the camera: every camera ray sees Le
    /// (the rendering equation with nothing reflected, L = Le; common practice), so every pixel's mean
    /// is Le. 4e9 lies below 2^32 ≈ 4.29e9 and 4.3e9 above: both must come out as themselves.
    /// </summary>
    [Theory]
    [MemberData(nameof(Emissions))]
    public void An_emitter_filling_the_view_renders_as_its_radiance(double emission)
    {
        Film film = Render(Furnace(emission, 0), "sobol", "owen", 8, 3, BsdfOnly);
        AssertEveryPixel(film, emission);
        Assert.Equal(emission >= Film.MaxValue ? film.Width * film.Height : 0, film.WidePixels);
    }

    /// <summary>
    /// The same furnace with albedo a = 0.5 under BSDF sampling (cosine-weighted on a diffuse
    /// surface, so each bounce weighs exactly a) and at most D = 4 bounces: every sample is the
    /// truncated Neumann series Le · (1 − a^(D+1)) / (1 − a) = 1.9375 Le, the white-furnace
    /// radiance Le/(1 − a) of the design's references cut after D bounces.
    /// </summary>
    [Theory]
    [MemberData(nameof(Emissions))]
    public void A_bright_white_furnace_gives_its_truncated_series(double emission)
    {
        Film film = Render(Furnace(emission, 0.5), "sobol", "owen", 8, 3, BsdfOnly);
        AssertEveryPixel(film, emission * 1.9375);
    }

    /// <summary>
    /// A camera looking away from the only shape sees the environment in every pixel: the mean is
    /// the sky's radiance (1e38 sits just below float's largest value, 3.4e38; IEEE 754 binary32).
    /// </summary>
    [Theory]
    [InlineData(1e38)]
    [InlineData(1e200)]
    public void A_bright_sky_renders_as_its_radiance(double sky)
    {
        Scene scene = Scene.Build(
            [Primitive.Sphere(new(0, 0, 5), 1, 0)],
            [Material.Diffuse("ball", Rgb.Grey(0.5))],
            [],
            new Camera(new(0, 0, 0), new(0, 0, -1), new(0, 1, 0), 60, 8, 6),
            Rgb.Grey(sky));
        Film film = Render(scene, "sobol", "owen", 4, 3, Mis);
        AssertEveryPixel(film, sky);
        if (sky <= float.MaxValue)
        {
            Assert.All(film.ToRgb(), v => Assert.Equal((float)sky, v));
        }
    }

    /// <summary>
    /// Multiplying by a power of two is exact in IEEE 754 binary64 (away from overflow and
    /// underflow), and the path tracer is linear in the emission, so with Le = 2^100 every sample is
    /// exactly 2^60 times the sample with Le = 2^40, MIS noise and all. Both lie wholly in the wide
    /// sums, which round nothing: each pixel mean and variance must scale by 2^60 and 2^120 to within
    /// the last bits of the final division. Against Le = 1, held in the planes, the means differ by at
    /// most the planes' rounding, 2^-33 per sample.
    /// </summary>
    [Fact]
    public void Scaling_the_emission_by_a_power_of_two_scales_means_and_variances_exactly()
    {
        Film one = Render(Furnace(1, 0.5), "sobol", "owen", 16, 5, Mis);
        Film wide = Render(Furnace(Math.ScaleB(1, 40), 0.5), "sobol", "owen", 16, 5, Mis);
        Film bright = Render(Furnace(Math.ScaleB(1, 100), 0.5), "sobol", "owen", 16, 5, Mis);
        Assert.Equal(one.Width * one.Height, bright.WidePixels);
        for (int y = 0; y < one.Height; y++)
        {
            for (int x = 0; x < one.Width; x++)
            {
                double mean = wide.Mean(x, y, 0), variance = wide.Variance(x, y, 0);
                Assert.True(variance > 0, "MIS in the furnace must be noisy, or the variance check tests nothing");
                Assert.Equal(Math.ScaleB(mean, 60), bright.Mean(x, y, 0), Math.ScaleB(mean, 60) * 1e-15);
                Assert.Equal(Math.ScaleB(variance, 120), bright.Variance(x, y, 0), Math.ScaleB(variance, 120) * 1e-14);
                Assert.Equal(Math.ScaleB(one.Mean(x, y, 0), 100), bright.Mean(x, y, 0), Math.ScaleB(1, 100 - 33) + (bright.Mean(x, y, 0) * 1e-15));
            }
        }
    }

    /// <summary>
    /// Le = 1.5 · 2^31 in the furnace puts sample values on both sides of 2^32 (about 1 to 2 times
    /// Le), so pixels mix the planes and the wide sums; thread count, shard split, merge order and a trip
    /// through the accumulation file must all give the same sums bit for bit.
    /// </summary>
    [Fact]
    public void Bright_renders_are_bit_identical_across_threads_shards_merge_order_and_files()
    {
        Scene scene = Furnace(Math.ScaleB(3, 30), 0.5);
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 8, 11), DimensionLayout.Total(Mis.MaxDepth));
        Film Part(int first, int end, int threads) => Renderer.Render(new RenderJob(scene, sampler, Mis, first, end, threads)).Film;

        Film whole = Part(0, 8, 1);
        Assert.InRange(whole.WidePixels, 1, whole.Width * whole.Height);
        Assert.True(Part(0, 8, 2).SameSums(whole));

        Film forward = Part(0, 3, 2);
        forward.Merge(Part(3, 5, 1));
        forward.Merge(Part(5, 8, 2));
        Film backward = Part(5, 8, 1);
        backward.Merge(Part(0, 3, 1));
        backward.Merge(Part(3, 5, 2));
        Assert.True(forward.SameSums(whole));
        Assert.True(backward.SameSums(whole));
        Assert.False(Part(0, 7, 2).SameSums(whole), "a film of fewer samples must differ, or the comparison tests nothing");

        using var dir = new TempFolder();
        var identity = new RenderIdentity("test-version", new string('b', 64), [new("seed", "11")], whole.Width, whole.Height);
        AccumulationFile.Write(dir.File("bright.accum"), new Rendering.Accumulation.Accumulation(identity, [new SampleRange(0, 8)], whole));
        Film back = AccumulationFile.Read(dir.File("bright.accum")).Film;
        Assert.True(back.SameSums(whole));
        Assert.Equal(whole.ToRgb(), back.ToRgb());
    }
}
