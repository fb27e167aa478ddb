using System.Diagnostics;
using System.Globalization;
using System.Runtime.CompilerServices;
using PathBench.Io;
using PathBench.Rendering.Geometry;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Benchmarking;

/// <summary>Ray throughput of one kind of query, on one thread and on all of them.</summary>
/// <param name="Rays">Traversal queries per run (one ray = one closest-hit query).</param>
/// <param name="MraysPerCore">Millions of queries per second on one thread.</param>
/// <param name="MraysTotal">Millions of queries per second on <see cref="BenchReport.Threads"/> threads.</param>
public sealed record RayThroughput(long Rays, double MraysPerCore, double MraysTotal)
{
    /// <summary>Total over one thread.</summary>
    public double Scaling => MraysTotal / MraysPerCore;

    /// <summary>Where the all-threads run lost against perfect scaling.</summary>
    public ThreadUse Use { get; init; } = ThreadUse.Unmeasured;
}

/// <summary>
/// Why a run on <paramref name="Threads"/> threads is not <paramref name="Threads"/> times as fast as on
/// one, from the process's CPU time (<see cref="Environment.CpuUsage"/>, every thread of the process,
/// the runtime's own included) over the fastest run of each: scaling = threads × <see cref="Busy"/> ×
/// (<paramref name="CpuOne"/> / <paramref name="WallOne"/>) / <see cref="CpuRatio"/>. A
/// <see cref="CpuRatio"/> above 1 means the same work took more processor time when the threads ran
/// together (they slowed each other: shared caches, memory, the host of a virtual machine); a
/// <see cref="Busy"/> below 1 means processors sat idle (waiting, unbalanced work, serial parts).
/// </summary>
/// <param name="Threads">Threads of the all-threads run.</param>
/// <param name="WallOne">Wall seconds on one thread.</param>
/// <param name="CpuOne">CPU seconds of the process during that run.</param>
/// <param name="WallAll">Wall seconds on all threads.</param>
/// <param name="CpuAll">CPU seconds of the process during that run.</param>
public sealed record ThreadUse(int Threads, double WallOne, double CpuOne, double WallAll, double CpuAll)
{
    /// <summary>No measurement (every figure NaN).</summary>
    public static ThreadUse Unmeasured { get; } = new(1, double.NaN, double.NaN, double.NaN, double.NaN);

    /// <summary>CPU seconds on all threads over CPU seconds on one: 1 when the threads did not slow each other.</summary>
    public double CpuRatio => CpuAll / CpuOne;

    /// <summary>CPU seconds over threads × wall seconds of the all-threads run: 1 when no thread waited.</summary>
    public double Busy => CpuAll / (Threads * WallAll);
}

/// <summary>A full render's speed: samples (camera paths) and rays per second, one thread and all.</summary>
public sealed record RenderThroughput(long Samples, long Rays, double SamplesPerSecondOneThread, double SamplesPerSecond, double MraysPerCore, double MraysTotal)
{
    /// <summary>All threads over one thread.</summary>
    public double Scaling => SamplesPerSecond / SamplesPerSecondOneThread;

    /// <summary>Where the all-threads run lost against perfect scaling.</summary>
    public ThreadUse Use { get; init; } = ThreadUse.Unmeasured;
}

/// <summary>The share of a one-thread frame spent making sample points, for one generator × randomization.</summary>
/// <param name="Generator">Generator name.</param>
/// <param name="Randomize">Randomization name.</param>
/// <param name="Calls">Batches the renderer asked of the sampler (one dimension or pair, for the rest of a block of samples).</param>
/// <param name="Coordinates">Coordinates those batches made.</param>
/// <param name="FrameSeconds">Time of the one-thread frame.</param>
/// <param name="SamplerSeconds">Time of the same batches replayed against the sampler alone.</param>
public sealed record SamplerShare(string Generator, string Randomize, long Calls, long Coordinates, double FrameSeconds, double SamplerSeconds)
{
    /// <summary>Sampler time over frame time.</summary>
    public double Fraction => SamplerSeconds / FrameSeconds;

    /// <summary>Coordinates the frame's paths read from the cache (a pair counts two): <see cref="Coordinates"/> less this is what was made for samples whose paths ended first (and pair partners never read).</summary>
    public long CoordinatesRead { get; init; }
}

/// <summary>Everything <c>pathbench bench</c> measured on one scene.</summary>
public sealed record BenchReport(
    string Scene,
    int Primitives,
    int Triangles,
    int Threads,
    double BvhBuildSeconds,
    long BvhNodeBytes,
    long PrimitiveBytes,
    RayThroughput Primary,
    RayThroughput Incoherent,
    RenderThroughput Render,
    IReadOnlyList<SamplerShare> SamplerShares)
{
    /// <summary>Bytes of the scene's light set (<see cref="LightSet"/>).</summary>
    public long LightSetBytes { get; init; }

    /// <summary>Slices of each tessellated sphere (<see cref="BenchSizes.SphereSlices"/>); null for a scene without them.</summary>
    public int? SphereSlices { get; init; }

    /// <summary>Primitives per second of BVH build.</summary>
    public double BvhTrianglesPerSecond => Primitives / BvhBuildSeconds;

    /// <summary>Node (and index) bytes per primitive: the hierarchy alone.</summary>
    public double BvhBytesPerTriangle => (double)BvhNodeBytes / Primitives;

    /// <summary>Hierarchy plus the primitive records the traversal reads (the primitives and the BVH's triangle hit records).</summary>
    public double TotalBytesPerTriangle => (double)(BvhNodeBytes + PrimitiveBytes) / Primitives;
}

/// <summary>Sizes of a benchmark run.</summary>
/// <param name="Width">Image width.</param>
/// <param name="Height">Image height.</param>
/// <param name="Spp">Samples per pixel of the full render and of the primary rays.</param>
/// <param name="ShareWidth">Image width of the sampler-share frames (height 3/4 of it).</param>
/// <param name="ShareSpp">Samples per pixel of the sampler-share frames.</param>
/// <param name="Repeats">Each timing is the fastest of this many runs (the least disturbed by other work on the machine).</param>
public sealed record BenchSizes(int Width, int Height, int Spp, int ShareWidth, int ShareSpp, int Repeats)
{
    /// <summary>What <c>pathbench bench</c> runs.</summary>
    public static BenchSizes Default { get; } = new(320, 240, 8, 96, 16, 3);

    /// <summary>Longitude slices of each of the tessellated room's spheres (<see cref="BenchScenes.Create"/>): the size ladder that separates a ray's own work from the memory it waits for.</summary>
    public int SphereSlices { get; init; } = BenchScenes.DefaultSphereSlices;
}

/// <summary>
/// The throughput benchmark. Rays are counted as traversal queries: one closest-hit or any-hit
/// query is one ray, whatever it hits. BVH build and scene generation are timed apart and not
/// in any ray rate; the incoherent rays are made before the clock starts. Each figure is the
/// fastest of a few runs.
/// </summary>
public static class ThroughputBench
{
    /// <summary>The options every render of the benchmark uses: the render command's defaults (cosine, MIS, roulette) and 8 bounces.</summary>
    public static PathTracerOptions Options { get; } = new(HemisphereStrategy.Cosine, LightStrategy.Mis, 8, true);

    /// <summary>Runs every measurement on <paramref name="sceneName"/> (the sampler shares only when <paramref name="samplerShares"/>); <paramref name="log"/> hears what is being measured.</summary>
    public static BenchReport Run(string sceneName, int threads, BenchSizes sizes, bool samplerShares, Action<string>? log = null) =>
        Run(sceneName, threads, sizes, samplerShares ? Combinations().ToList() : [], log);

    /// <summary>As above, with the sampler shares of <paramref name="shareOf"/> only (generator, randomization pairs; empty: none).</summary>
    public static BenchReport Run(string sceneName, int threads, BenchSizes sizes, IReadOnlyList<(string Generator, string Randomize)> shareOf, Action<string>? log = null)
    {
        ArgumentNullException.ThrowIfNull(shareOf);
        ArgumentNullException.ThrowIfNull(sizes);
        threads = Math.Max(1, threads);
        var inv = CultureInfo.InvariantCulture;
        MemoryBudget.Current.Require(BenchScenes.EstimatedBytes(sceneName, sizes.SphereSlices), sceneName == BenchScenes.TessellatedRoom
            ? string.Create(inv, $"the {sceneName} benchmark with {sizes.SphereSlices} slices a sphere ({BenchScenes.TessellatedTriangles(sizes.SphereSlices)} triangles, about {BenchScenes.BytesPerTriangle} bytes each at its peak, and {BenchScenes.BaseBytes >> 20} MiB of rays and films)")
            : string.Create(inv, $"the {sceneName} benchmark ({BenchScenes.BaseBytes >> 20} MiB of rays and films)"));
        log?.Invoke($"{sceneName}: generating the scene");
        Scene scene = BenchScenes.Create(sceneName, sizes.Width, sizes.Height, sizes.SphereSlices);
        Primitive[] prims = scene.Bvh.Primitives.ToArray();
        int triangles = prims.Count(p => p.Kind == PrimitiveKind.Triangle);

        log?.Invoke($"{sceneName}: BVH build ({prims.Length} primitives)");
        double build = Best(sizes.Repeats, () => GC.KeepAlive(new Bvh(prims)));
        Bvh bvh = scene.Bvh;

        log?.Invoke($"{sceneName}: primary and incoherent rays");
        Ray[] primary = PrimaryRays(scene.Camera, sizes.Spp);
        Ray[] bounces = BounceRays(bvh, primary);
        RayThroughput p = Rays(bvh, primary, threads, sizes.Repeats);
        RayThroughput b = Rays(bvh, bounces, threads, sizes.Repeats);

        log?.Invoke($"{sceneName}: full renders, 1 and {threads} threads");
        PointSampler sampler = CreateSampler("sobol", "owen", sizes.Spp);
        long rays = 0;
        Timing one = Timed(sizes.Repeats, () => rays = Renderer.Render(new RenderJob(scene, sampler, Options, 0, sizes.Spp, 1)).Rays);
        Timing all = Timed(sizes.Repeats, () => Renderer.Render(new RenderJob(scene, sampler, Options, 0, sizes.Spp, threads)));
        long samples = (long)sizes.Width * sizes.Height * sizes.Spp;
        var render = new RenderThroughput(samples, rays, samples / one.Wall, samples / all.Wall, rays / one.Wall / 1e6, rays / all.Wall / 1e6)
        {
            Use = new ThreadUse(threads, one.Wall, one.Cpu, all.Wall, all.Cpu),
        };

        var shares = new List<SamplerShare>();
        Scene small = BenchScenes.Create(sceneName, sizes.ShareWidth, sizes.ShareWidth * 3 / 4, sizes.SphereSlices);
        foreach ((string g, string r) in shareOf)
        {
            log?.Invoke($"{sceneName}: sampler share of {g}/{r}");
            shares.Add(Share(small, g, r, sizes.ShareSpp, sizes.Repeats));
        }

        return new BenchReport(sceneName, prims.Length, triangles, threads, build, bvh.NodeBytes, ((long)prims.Length * Unsafe.SizeOf<Primitive>()) + bvh.HitRecordBytes, p, b, render, shares)
        {
            LightSetBytes = scene.Lights.Bytes,
            SphereSlices = sceneName == BenchScenes.TessellatedRoom ? sizes.SphereSlices : null,
        };
    }

    /// <summary>Every generator with each randomization it takes (including none), as <c>pathbench samplers</c> lists them.</summary>
    public static IEnumerable<(string Generator, string Randomize)> Combinations()
    {
        foreach (GeneratorInfo g in SamplerCatalog.Generators)
        {
            foreach (Randomization r in g.Randomizations)
            {
                yield return (g.Name, RandomizationNames.NameOf(r));
            }
        }
    }

    private static PointSampler CreateSampler(string generator, string randomize, int spp)
    {
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        int dims = Math.Min(SamplerCatalog.Find(generator).MaxDimensions, DimensionLayout.Total(Options.MaxDepth));
        return SamplerCatalog.Create(new SamplerSpec(generator, r, anti, spp, 1), dims);
    }

    /// <summary>Camera rays through pixel positions from a fixed hash (seed 11), <paramref name="spp"/> per pixel.</summary>
    private static Ray[] PrimaryRays(Camera camera, int spp)
    {
        var rays = new Ray[(long)camera.Width * camera.Height * spp];
        int k = 0;
        for (int y = 0; y < camera.Height; y++)
        {
            for (int x = 0; x < camera.Width; x++)
            {
                for (int s = 0; s < spp; s++, k++)
                {
                    rays[k] = camera.Generate(x + SampleHash.Uniform(11, (uint)k, 0), y + SampleHash.Uniform(11, (uint)k, 1), 0.5, 0.5);
                }
            }
        }

        return rays;
    }

    /// <summary>
    /// One diffuse bounce from every primary hit: a cosine-distributed direction about the
    /// normal on the side the camera ray came from (fixed hash, seed 12), as a path tracer's
    /// second ray. In the closed room every one hits something.
    /// </summary>
    private static Ray[] BounceRays(Bvh bvh, Ray[] primary)
    {
        var rays = new List<Ray>(primary.Length);
        for (int i = 0; i < primary.Length; i++)
        {
            if (!bvh.Intersect(primary[i], out SurfaceHit hit))
            {
                continue;
            }

            Vec3d n = Vec3d.Dot(hit.GeometricNormal, primary[i].Direction) < 0 ? hit.GeometricNormal : -hit.GeometricNormal;
            var frame = new ShadingFrame(n);
            Vec3d wi = frame.ToWorld(Warp.CosineHemisphere(SampleHash.Uniform(12, (uint)i, 0), SampleHash.Uniform(12, (uint)i, 1)));
            rays.Add(new Ray(RayOffset.Offset(hit.Point, n, wi), wi, double.PositiveInfinity));
        }

        return rays.ToArray();
    }

    private static RayThroughput Rays(Bvh bvh, Ray[] rays, int threads, int repeats)
    {
        Timing one = Timed(repeats, () => Trace(bvh, rays, 1));
        Timing all = Timed(repeats, () => Trace(bvh, rays, threads));
        return new RayThroughput(rays.Length, rays.Length / one.Wall / 1e6, rays.Length / all.Wall / 1e6)
        {
            Use = new ThreadUse(threads, one.Wall, one.Cpu, all.Wall, all.Cpu),
        };
    }

    /// <summary>Closest-hit queries for every ray, split into contiguous chunks per thread; the hit count is returned so no query is optimised away.</summary>
    private static long Trace(Bvh bvh, Ray[] rays, int threads)
    {
        const int Chunk = 4096;
        int chunks = (rays.Length + Chunk - 1) / Chunk;
        long hits = 0;
        Parallel.For(0, chunks, new ParallelOptions { MaxDegreeOfParallelism = threads }, () => 0L, (c, state, local) =>
        {
            int end = Math.Min(rays.Length, (c + 1) * Chunk);
            for (int i = c * Chunk; i < end; i++)
            {
                local += bvh.Intersect(rays[i], out _) ? 1 : 0;
            }

            return local;
        }, local => Interlocked.Add(ref hits, local));
        return hits;
    }

    /// <summary>
    /// The share of a one-thread frame spent making sample points, timed directly: the frame is rendered
    /// once with its thread's <see cref="SampleCache"/> noting every batch it asks of the sampler (the
    /// sampler's only work in a render); exactly those batches are then replayed against the sampler,
    /// into a buffer, and timed. The frame itself is timed without the recorder. The coordinates' reads
    /// from the cache (a compare and a load each, inline in the path tracer) count as the tracer's time.
    /// </summary>
    /// <remarks>
    /// What the replay counts: every batch the cache asked for, with its whole cost (the virtual call, the
    /// dimension's seeds, tables and any per-thread caches, which see the same keys in
    /// the same order as in the frame, and the padding hash past a generator's dimension limit), including
    /// the coordinates made for samples whose paths ended before using them and the second coordinate of a
    /// pair the cache made whole for a pair-sharing generator (<see cref="PointSampler.PairsShareWork"/>):
    /// all of it is work the frame did. What it does not count: the cache's own bookkeeping (stamps, run
    /// ends) and its reads. One bias, not measured: the replay runs the batches back to back, so the
    /// sampler's tables and code stay in the processor's caches, where in the frame they share them with the
    /// tracer's data; on the small furnished room that data is small.
    /// </remarks>
    private static SamplerShare Share(Scene scene, string generator, string randomize, int spp, int repeats)
    {
        PointSampler sampler = CreateSampler(generator, randomize, spp);
        var job = new RenderJob(scene, sampler, Options, 0, spp, 1);
        var calls = new List<SampleBatchCall>(1 << 18);
        var cache = new SampleCache(sampler, DimensionLayout.Total(Options.MaxDepth)) { Recorder = calls };
        var reads = new ReadCounter();
        Renderer.RenderTiles<CountingSource, CountingStream>(job, new Film(scene.Camera.Width, scene.Camera.Height), () => new CountingSource(cache, reads), null, default);
        cache.Recorder = null;
        SampleBatchCall[] batches = calls.ToArray();
        // Frame and replay take turns, and the replay (under a tenth of a frame) runs ReplaysPerFrame times a turn, so the
        // fastest of each is taken over the same stretch of the run. The machine has slow spells of tens of milliseconds
        // to a second (every timing 1.5-2 times longer; seen in both builds, with address randomisation off too); three
        // replays back to back last about 40 ms and often fell inside one, which made single processes look bimodal.
        double frame = double.PositiveInfinity, replay = double.PositiveInfinity;
        for (int i = 0; i < Math.Max(1, repeats); i++)
        {
            frame = Math.Min(frame, Best(1, () => Renderer.Render(job)));
            replay = Math.Min(replay, Best(ReplaysPerFrame, () => Replay(sampler, batches)));
        }

        return new SamplerShare(generator, randomize, batches.Length, batches.Sum(c => (long)c.Count * (c.Pair ? 2 : 1)), frame, replay)
        {
            CoordinatesRead = reads.Reads,
        };
    }

    /// <summary>Counts the coordinates the recorded frame's paths read (one thread).</summary>
    private sealed class ReadCounter
    {
        public long Reads;
    }

    /// <summary>The recorded frame's source: the cache, with every read counted.</summary>
    private readonly struct CountingSource(SampleCache cache, ReadCounter reads) : IStreamSource<CountingStream>
    {
        public void BeginBlock(ulong pixel, uint first, int count) => cache.BeginBlock(pixel, first, count);

        public CountingStream Stream(int slot) => new(cache.Stream(slot), reads);
    }

    private readonly struct CountingStream(CachedSampleStream inner, ReadCounter reads) : ISampleStream
    {
        public double Get(int dimension)
        {
            reads.Reads++;
            return inner.Get(dimension);
        }

        public (double X, double Y) Get2D(int dimension)
        {
            reads.Reads += 2;
            return inner.Get2D(dimension);
        }
    }

    /// <summary>Replays timed per timed frame in <see cref="Share"/> (the replay is about a tenth of a frame).</summary>
    private const int ReplaysPerFrame = 3;

    private static double Replay(PointSampler sampler, SampleBatchCall[] batches)
    {
        Span<double> xs = stackalloc double[SampleCache.BlockSize];
        Span<double> ys = stackalloc double[SampleCache.BlockSize];
        int limit = sampler.MaxDimensions;
        // The thread's memo, as the cache keeps one (a new one each replay: the frame's cache started with a new one too).
        BatchScratch? scratch = sampler.NewBatchScratch();
        double sum = 0;
        foreach (SampleBatchCall c in batches)
        {
            Span<double> x = xs[..c.Count], y = ys[..c.Count];
            if (c.Dimension >= limit)
            {
                SampleStream.Padding(c.Pixel, c.First, c.Dimension, x);
            }
            else if (c.Pair)
            {
                ScratchBatches.Sample2D(sampler, scratch, c.Pixel, c.First, c.Dimension, x, y);
                sum += y[0];
            }
            else
            {
                ScratchBatches.Sample(sampler, scratch, c.Pixel, c.First, c.Dimension, x);
            }

            sum += x[0];
        }

        return sum;
    }

    private static double Best(int repeats, Action run) => Timed(repeats, run).Wall;

    private static double Best<T>(int repeats, Func<T> run) => Best(repeats, () => { GC.KeepAlive(run()); });

    /// <summary>The fastest of <paramref name="repeats"/> runs: its wall seconds and the process's CPU seconds during it.</summary>
    private static Timing Timed(int repeats, Action run)
    {
        var best = new Timing(double.PositiveInfinity, double.NaN);
        for (int i = 0; i < Math.Max(1, repeats); i++)
        {
            TimeSpan cpu = Environment.CpuUsage.TotalTime;
            long start = Stopwatch.GetTimestamp();
            run();
            double wall = Stopwatch.GetElapsedTime(start).TotalSeconds;
            if (wall < best.Wall)
            {
                best = new Timing(wall, (Environment.CpuUsage.TotalTime - cpu).TotalSeconds);
            }
        }

        return best;
    }

    private static Timing Timed<T>(int repeats, Func<T> run) => Timed(repeats, () => { GC.KeepAlive(run()); });

    private readonly record struct Timing(double Wall, double Cpu);
}
