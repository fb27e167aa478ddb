using System.Runtime.Intrinsics.X86;
using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>The renderer's per-thread sample cache against the one-call-per-coordinate <see cref="SampleStream"/>.</summary>
public sealed class SampleCacheTests
{
    public static TheoryData<string, string> Catalog()
    {
        var data = new TheoryData<string, string>();
        foreach (GeneratorInfo g in SamplerCatalog.Generators)
        {
            foreach (Randomization r in g.Randomizations)
            {
                data.Add(g.Name, RandomizationNames.NameOf(r));
            }
        }

        return data;
    }

    private static PointSampler Create(string generator, string randomize, int count, int dims)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        return SamplerCatalog.Create(new SamplerSpec(generator, r, anti, count, 8), Math.Min(SamplerCatalog.Find(generator).MaxDimensions, dims));
    }

    [Theory]
    [MemberData(nameof(Catalog))]
    public void Cached_coordinates_are_the_streams_in_any_request_order(string generator, string randomize)
    {
        // Requests as a path tracer makes them: pairs and singles, samples stopping at different depths,
        // dimensions past the generator's limit (padding) and past the cache's planned size.
        const int count = 37, planned = 20;
        PointSampler s = Create(generator, randomize, count, planned);
        var cache = new SampleCache(s, planned);
        ulong key = s.PixelKey(3, 4);
        for (int first = 0; first < count; first += SampleCache.BlockSize)
        {
            int n = Math.Min(SampleCache.BlockSize, count - first);
            cache.BeginBlock(key, (uint)first, n);
            for (int j = 0; j < n; j++)
            {
                uint index = (uint)(first + j);
                var direct = new SampleStream(s, key, index);
                CachedSampleStream cached = cache.Stream(j);
                int depth = (int)(index * 7 % 11); // paths of 0 to 10 vertices
                Assert.Equal(direct.Get2D(0), cached.Get2D(0));
                for (int v = 0; v < depth; v++)
                {
                    int d = DimensionLayout.Vertex(v);
                    Assert.Equal(direct.Get2D(d + DimensionLayout.LightPosition), cached.Get2D(d + DimensionLayout.LightPosition));
                    Assert.Equal(direct.Get(d + DimensionLayout.LightChoice), cached.Get(d + DimensionLayout.LightChoice));
                    Assert.Equal(direct.Get2D(d + DimensionLayout.Direction), cached.Get2D(d + DimensionLayout.Direction));
                    Assert.Equal(direct.Get(d + DimensionLayout.Lobe), cached.Get(d + DimensionLayout.Lobe));
                    Assert.Equal(direct.Get(d + DimensionLayout.Roulette), cached.Get(d + DimensionLayout.Roulette));
                }
            }
        }
    }

    [Theory]
    [InlineData("multi-jittered", true)]
    [InlineData("jittered", true)]
    [InlineData("pmj02", true)]
    [InlineData("latin-hypercube", false)]
    [InlineData("random", false)]
    public void A_single_of_a_pair_sharing_generator_is_made_with_its_partner(string generator, bool shares)
    {
        // The light choice (odd) and then the lobe (even) of one vertex: a pair-sharing generator's cache asks once,
        // for the pair; any other asks for each single. Values as the stream gives them either way (test above).
        PointSampler s = Create(generator, "none", 16, 40);
        Assert.Equal(shares, s.PairsShareWork);
        var calls = new List<SampleBatchCall>();
        var cache = new SampleCache(s, 40) { Recorder = calls };
        ulong key = s.PixelKey(1, 2);
        cache.BeginBlock(key, 0, 16);
        int v = DimensionLayout.Vertex(1);
        var direct = new SampleStream(s, key, 0);
        Assert.Equal(direct.Get(v + DimensionLayout.LightChoice), cache.Stream(0).Get(v + DimensionLayout.LightChoice));
        Assert.Equal(direct.Get(v + DimensionLayout.Lobe), cache.Stream(0).Get(v + DimensionLayout.Lobe));
        SampleBatchCall[] expected = shares
            ? [new(key, 0, 16, v + DimensionLayout.Lobe, true)]
            : [new(key, 0, 16, v + DimensionLayout.LightChoice, false), new(key, 0, 16, v + DimensionLayout.Lobe, false)];
        Assert.Equal(expected, calls);
    }

    [Theory]
    [InlineData("halton", "digit-permutation", SampleCache.BlockSize)]
    [InlineData("halton", "none", -1)]
    [InlineData("lattice", "none", -1)]
    [InlineData("sobol", "owen", -3)]
    [InlineData("sobol", "digital-shift", -3)]
    [InlineData("pmj02", "owen", -4)]
    [InlineData("multi-jittered", "none", -2)]
    [InlineData("latin-hypercube", "none", -2)]
    [InlineData("jittered", "none", -2)]
    public void A_deep_dimension_is_made_in_runs_the_sampler_makes_at_little_more_cost(string generator, string randomize, int run)
    {
        // A vertex past the fourth asks in runs of DeepRun samples, unless the sampler says a batch costs about the same
        // whatever its length (Halton's digit permutations draw a position's map per run, the pmj family's Owen pairs are
        // latency-bound chains a second group overlaps, and the Kensler sets' lane forms walk sixteen indices at once or
        // overlap two groups: the rest of the block) or it makes more points at once (the Owen-scrambled gathers: eight,
        // on a machine with the lane forms). Run −1: eight in the 512-bit form, DeepRun in the 256-bit one (Halton's plain
        // radical inverses on 512-bit lanes; lattice's dimension 46 is past its limit of 12, where the padding hash runs on
        // 512-bit lanes). The other negative runs follow the machine too, so the rows hold in every form tools/test.sh runs
        // (without AVX2 the generators make one point at a time and the cache asks for DeepRun): −2 the rest of the block in
        // a lane form (SamplerLanes: narrow or wide), DeepRun in the scalar one (the Kensler sets); −3 eight with AVX2 (the
        // Owen-scrambled and shifted Sobol gathers); −4 the rest of the block with AVX2 (pmj02's Owen pairs).
        run = run switch
        {
            -1 => SamplerLanes.Uses512BitVectors ? 8 : SampleCache.DeepRun,
            -2 => SamplerLanes.Form != "scalar" ? SampleCache.BlockSize : SampleCache.DeepRun,
            -3 => Avx2.IsSupported ? 8 : SampleCache.DeepRun,
            -4 => Avx2.IsSupported ? SampleCache.BlockSize : SampleCache.DeepRun,
            _ => run,
        };
        PointSampler s = Create(generator, randomize, 16, 40);
        int roulette = DimensionLayout.Vertex(4) + DimensionLayout.Roulette;
        Assert.Equal(run == SampleCache.BlockSize, s.WholeRunsCostLittleMore);
        Assert.True(run == SampleCache.BlockSize || run == Math.Max(s.PointsAtOnce, SampleCache.DeepRun) || roulette >= s.MaxDimensions);
        var calls = new List<SampleBatchCall>();
        var cache = new SampleCache(s, 40) { Recorder = calls };
        ulong key = s.PixelKey(5, 6);
        cache.BeginBlock(key, 0, 16);
        for (int j = 2; j < 16; j++)
        {
            Assert.Equal(new SampleStream(s, key, (uint)j).Get(roulette), cache.Stream(j).Get(roulette));
        }

        // A pair-sharing generator makes the single with its partner (the test above), as one pair call.
        int asked = s.PairsShareWork ? roulette & ~1 : roulette;
        var expected = new List<SampleBatchCall>();
        for (int slot = 2; slot < 16; slot += run)
        {
            expected.Add(new(key, (uint)slot, Math.Min(run, 16 - slot), asked, s.PairsShareWork));
        }

        Assert.Equal(expected, calls);
    }

    [Theory]
    [MemberData(nameof(Catalog))]
    public void Path_tracing_through_the_cache_allocates_nothing_per_sample(string generator, string randomize)
    {
        // Issue 12: no allocation per sample or per ray. The renderer's per-sample work on this thread
        // (blocks, coordinates, camera ray, path) over six pixels, after a warm-up pass over the same
        // pixels that sizes the cache and builds the samplers' per-thread and lazily built tables (the pmj
        // family's sequences, once per process); GC.GetAllocatedBytesForCurrentThread counts exactly.
        Scene scene = DeterminismTests.Box();
        var tracer = new PathTracer(scene, DeterminismTests.Options);
        const int count = 32;
        PointSampler s = Create(generator, randomize, count, DimensionLayout.Total(DeterminismTests.Options.MaxDepth));
        var cache = new SampleCache(s, DimensionLayout.Total(DeterminismTests.Options.MaxDepth));
        long rays = 0;
        double sum = Pixels();
        long[] allocated = Allocations.OfThreePasses(() => sum += Pixels());

        Assert.True(allocated.Min() == 0, $"{generator}/{randomize}: {string.Join(", ", allocated)} bytes allocated in three passes of {6 * count} samples");
        Assert.True(rays > 0 && sum >= 0);

        double Pixels()
        {
            double total = 0;
            for (int p = 0; p < 6; p++)
            {
                total += Pixel(p * 3, 7 + p);
            }

            return total;
        }

        double Pixel(int x, int y)
        {
            ulong key = s.PixelKey(x, y);
            double total = 0;
            for (int first = 0; first < count; first += SampleCache.BlockSize)
            {
                cache.BeginBlock(key, (uint)first, SampleCache.BlockSize);
                for (int j = 0; j < SampleCache.BlockSize; j++)
                {
                    CachedSampleStream stream = cache.Stream(j);
                    (double fx, double fy) = stream.Get2D(DimensionLayout.Pixel);
                    Ray ray = scene.Camera.Generate(x + fx, y + fy, 0.5, 0.5);
                    total += tracer.Radiance(ray, stream, ref rays).Max;
                }
            }

            return total;
        }
    }
}
