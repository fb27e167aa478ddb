using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.Integrators;

public sealed class DeterminismTests
{
    internal static Scene Box()
    {
        Material[] m = [Material.Diffuse("white", Rgb.Grey(0.7)), Material.Diffuse("lamp", Rgb.Black, Rgb.Grey(8)), Material.Conductor("metal", 0.3, new Rgb(0.9, 0.6, 0.3))];
        Primitive[] p =
        [
            Primitive.Quad(new(-1, 0, -1), new(0, 0, 2), new(2, 0, 0), 0),
            Primitive.Quad(new(-1, 2, -1), new(2, 0, 0), new(0, 0, 2), 0),
            Primitive.Quad(new(-1, 0, -1), new(2, 0, 0), new(0, 2, 0), 0),
            Primitive.Quad(new(-0.3, 1.99, -0.3), new(0.6, 0, 0), new(0, 0, 0.6), 1),
            Primitive.Sphere(new(0.3, 0.4, 0), 0.4, 2),
        ];
        return Scene.Build(p, m, [], new Camera(new(0, 1, 3), new(0, 1, 0), new(0, 1, 0), 45, 24, 20), Rgb.Grey(0.1));
    }

    internal static readonly PathTracerOptions Options = new(HemisphereStrategy.Cosine, LightStrategy.Mis, 6, true);

    /// <summary>
    /// The image bits of small renders through <see cref="Sampling.PortableMath"/> on the sample
    /// path (camera tangent, concentric disk and cosine hemisphere, GGX visible normals; Halton's
    /// digit tail), hashed with SHA-256 (FIPS 180-4) and recorded
    /// on x86-64 Linux. Shards from different machines merge exactly only if every machine
    /// computes these same bits; a change to the sample path must re-record them and say why. Halton's was
    /// recorded again when its digit permutations' construction changed (issue 12; see RadicalInverse.Permuted), and
    /// again when two digit draws came from one hash (issue 12, ninth round: the 32-bit halves, ⌊v·m / 2^32⌋), and again
    /// when that hash became a one-multiply mixer (issue 12, tenth round: RadicalInverse.DrawHash).
    /// </summary>
    [Theory]
    [InlineData("sobol", "owen", "a1ec730c229c956186dc45eeb8a20b2843f7917b5aaf1ed8fda84a16cd743604")]
    [InlineData("halton", "digit-permutation", "aca2284fc6093b18c7fd818f2ddfb2d39ba599bb05befe1ef27c214cf911e4b0")]
    public void Image_bits_are_the_recorded_ones(string generator, string randomize, string recorded)
    {
        float[] rgb = Render(Box(), generator, randomize, 4, 3, Options, threads: 2).ToRgb();
        byte[] bytes = new byte[rgb.Length * 4];
        Buffer.BlockCopy(rgb, 0, bytes, 0, bytes.Length);
        string actual = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(bytes));
        Assert.True(actual == recorded, $"{generator}: the image bits differ from the recorded ones: SHA-256 {actual}");
    }

    [Fact]
    public void Thread_count_does_not_change_a_single_bit()
    {
        float[] one = Render(Box(), "sobol", "owen", 8, 5, Options, threads: 1).ToRgb();
        float[] two = Render(Box(), "sobol", "owen", 8, 5, Options, threads: 2).ToRgb();
        Assert.Equal(one, two);
    }

    [Fact]
    public void Every_tile_is_rendered_once_for_any_number_of_workers()
    {
        // The workers take tiles from one counter: with 1, 2, 3 and 9 workers (more than the
        // 24×20 box's 4 tiles) every tile must be rendered once, so the same bits and the same rays.
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 4, 5), DimensionLayout.Total(Options.MaxDepth));
        RenderResult one = Renderer.Render(new RenderJob(Box(), sampler, Options, 0, 4, 1));
        foreach (int threads in new[] { 2, 3, 9 })
        {
            int tiles = 0;
            RenderResult r = Renderer.Render(new RenderJob(Box(), sampler, Options, 0, 4, threads), (done, total) => Interlocked.Increment(ref tiles));
            Assert.Equal(4, tiles);
            Assert.Equal(one.Rays, r.Rays);
            Assert.Equal(one.Film.ToRgb(), r.Film.ToRgb());
        }
    }

    [Fact]
    public void A_cancelled_render_stops_between_tiles_with_the_cancellation()
    {
        // One worker, cancelled when its first tile is done: no further tile starts, and the render
        // ends with OperationCanceledException (what the study runner waits for), not a partial result.
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 4, 5), DimensionLayout.Total(Options.MaxDepth));
        using var cancel = new CancellationTokenSource();
        int tiles = 0;
        Assert.ThrowsAny<OperationCanceledException>(() => Renderer.Render(new RenderJob(Box(), sampler, Options, 0, 4, 1), (done, total) =>
        {
            tiles = done;
            cancel.Cancel();
        }, cancel.Token));
        Assert.Equal(1, tiles);
        Assert.ThrowsAny<OperationCanceledException>(() => Renderer.Render(new RenderJob(Box(), sampler, Options, 0, 4, 2), null, cancel.Token));
    }

    [Fact]
    public void Same_seed_same_bits_and_different_seeds_differ()
    {
        float[] a = Render(Box(), "halton", "digit-permutation", 4, 9, Options).ToRgb();
        float[] b = Render(Box(), "halton", "digit-permutation", 4, 9, Options).ToRgb();
        float[] c = Render(Box(), "halton", "digit-permutation", 4, 10, Options).ToRgb();
        Assert.Equal(a, b);
        Assert.NotEqual(a, c);
    }

    [Fact]
    public void Split_sample_ranges_merge_exactly()
    {
        // Decision 1 of the design: any split of the sample range merges back bit-identically.
        Scene scene = Box();
        var sampler = PathBench.Sampling.Generators.SamplerCatalog.Create(
            new("sobol", PathBench.Sampling.Generators.Randomization.Owen, false, 16, 3), 64);
        Film whole = Renderer.Render(new RenderJob(scene, sampler, Options, 0, 16, 2)).Film;
        Film first = Renderer.Render(new RenderJob(scene, sampler, Options, 0, 5, 2)).Film;
        Film rest = Renderer.Render(new RenderJob(scene, sampler, Options, 5, 16, 1)).Film;
        first.Merge(rest);
        Assert.Equal(whole.ToRgb(), first.ToRgb());
        Assert.Equal(whole.Variance(3, 4, 1), first.Variance(3, 4, 1));
    }

    [Fact]
    public void Film_refuses_sizes_it_cannot_hold()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => new Film(100_000, 100_000));
        Assert.Throws<ArgumentOutOfRangeException>(() => new Film(0, 5));
    }
}
