using System.Diagnostics;
using PathBench.Rendering.Integrators;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering;

/// <summary>What to render: the sample range [<paramref name="FirstSample"/>, <paramref name="EndSample"/>) of every pixel.</summary>
/// <param name="Scene">The scene.</param>
/// <param name="Sampler">Generator + randomization, planned for the total spp and seeded with the global seed.</param>
/// <param name="Options">Path tracer options.</param>
/// <param name="FirstSample">First sample index (inclusive).</param>
/// <param name="EndSample">End sample index (exclusive).</param>
/// <param name="Threads">Worker threads; the image does not depend on it.</param>
public sealed record RenderJob(Scene Scene, PointSampler Sampler, PathTracerOptions Options, int FirstSample, int EndSample, int Threads);

/// <summary>The rendered film and how long it took.</summary>
public sealed record RenderResult(Film Film, long Rays, double WallSeconds);

/// <summary>Renders tiles in parallel. Each pixel's samples are a pure function of the job, so the film is bit-identical for any thread count.</summary>
public static class Renderer
{
    /// <summary>Tile edge in pixels.</summary>
    public const int TileSize = 16;

    /// <summary>Renders the job, reporting finished tiles to <paramref name="progress"/> (may be null).</summary>
    public static RenderResult Render(RenderJob job, Action<int, int>? progress = null, CancellationToken cancel = default)
    {
        ArgumentNullException.ThrowIfNull(job);
        return RenderInto(job, new Film(job.Scene.Camera.Width, job.Scene.Camera.Height), progress, cancel);
    }

    /// <summary>
    /// Renders the job and adds its samples to <paramref name="film"/> (exact, so a film built
    /// pass by pass equals one rendered at once). A cancelled render leaves the film with part of
    /// the range: callers that need whole ranges render into a scratch film.
    /// </summary>
    public static RenderResult RenderInto(RenderJob job, Film film, Action<int, int>? progress = null, CancellationToken cancel = default)
    {
        ArgumentNullException.ThrowIfNull(job);
        ArgumentNullException.ThrowIfNull(film);
        Camera camera = job.Scene.Camera;
        if (job.FirstSample < 0 || job.EndSample < job.FirstSample)
        {
            throw new ArgumentOutOfRangeException(nameof(job), $"sample range [{job.FirstSample}, {job.EndSample}) is empty or negative");
        }

        GeneratorInfo generator = SamplerCatalog.Find(job.Sampler.Spec.Generator);
        if (generator.NeedsCount && job.EndSample > job.Sampler.Count)
        {
            // A set is defined for its planned count only: indices past it repeat cells or leave [0, 1).
            throw new ArgumentOutOfRangeException(nameof(job), $"'{job.Sampler.Spec.Generator}' was planned for {job.Sampler.Count} points; samples up to {job.EndSample} were asked for");
        }

        if (job.EndSample > generator.MaxPoints)
        {
            // A progressive sequence kept in tables ends with them.
            throw new ArgumentOutOfRangeException(nameof(job), $"'{generator.Name}' defines at most {generator.MaxPoints} points per pixel; samples up to {job.EndSample} were asked for");
        }

        if (film.Width != camera.Width || film.Height != camera.Height)
        {
            throw new ArgumentException($"a {film.Width}×{film.Height} film cannot take a {camera.Width}×{camera.Height} render", nameof(film));
        }

        SampleCache PerThread() => new(job.Sampler, DimensionLayout.Total(job.Options.MaxDepth));
        return RenderTiles<CacheSource, CachedSampleStream>(job, film, () => new CacheSource(PerThread()), progress, cancel);
    }

    /// <summary>
    /// The tile loop, generic over where a thread's sample streams come from (the JIT specialises it
    /// per struct type, so the path tracer's coordinate calls inline): each pixel's samples run in
    /// blocks of <see cref="SampleCache.BlockSize"/>, so a source can make a dimension for a whole block at once.
    /// </summary>
    internal static RenderResult RenderTiles<TSource, TStream>(RenderJob job, Film film, Func<TSource> perThread, Action<int, int>? progress, CancellationToken cancel)
        where TSource : struct, IStreamSource<TStream>
        where TStream : struct, ISampleStream
    {
        Camera camera = job.Scene.Camera;
        int tilesX = (camera.Width + TileSize - 1) / TileSize;
        int tilesY = (camera.Height + TileSize - 1) / TileSize;
        int tiles = tilesX * tilesY;
        var tracer = new PathTracer(job.Scene, job.Options);
        // A pinhole camera ignores the lens pair: it is not drawn. The layout keeps dimensions 2–3
        // for the lens all the same, so every later dimension, and every image, is unchanged.
        bool lens = camera.HasLens;
        long rays = 0, nonFinite = 0;
        int done = 0;
        var clock = Stopwatch.StartNew();
        // One worker per thread, each taking the next tile from a shared counter, one tile at a time,
        // so the threads finish within a tile of each other. Parallel.For over the tiles handed them
        // out in chunks of up to 16 (its replicas also moved between pool threads): in traces of
        // 2-thread demo renders one thread sat idle at the ends of the passes for 40–140 ms of a
        // 2.6–3.7 s render, 15–35 ms with the counter. The counter is touched once per tile.
        int workers = Math.Max(1, job.Threads);
        int next = 0;
        var parallel = new ParallelOptions { MaxDegreeOfParallelism = workers, CancellationToken = cancel };
        try
        {
            Parallel.For(0, workers, parallel, _ => Work(perThread()));
        }
        catch (AggregateException e) when (e.InnerExceptions.OfType<PathBench.Io.MemoryBudgetException>().FirstOrDefault() is { } budget)
        {
            // The film's wide sums outgrew the budget in a worker: that one line, not the aggregate.
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(budget).Throw();
        }

        cancel.ThrowIfCancellationRequested();
        film.AddDropped(nonFinite);
        return new RenderResult(film, rays, clock.Elapsed.TotalSeconds);

        void Work(TSource source)
        {
            // A thread's own source, kept for all its tiles (a struct: passed on by reference).
            for (int tile = Interlocked.Increment(ref next) - 1; tile < tiles && !cancel.IsCancellationRequested; tile = Interlocked.Increment(ref next) - 1)
            {
                RenderTile(tile, ref source);
            }
        }

        void RenderTile(int tile, ref TSource source)
        {
            int x0 = tile % tilesX * TileSize, y0 = tile / tilesX * TileSize;
            int x1 = Math.Min(x0 + TileSize, camera.Width), y1 = Math.Min(y0 + TileSize, camera.Height);
            long tileRays = 0, tileNonFinite = 0;
            for (int y = y0; y < y1; y++)
            {
                for (int x = x0; x < x1; x++)
                {
                    PixelAccumulator acc = film.AccumulatorFor(x, y);
                    ulong key = job.Sampler.PixelKey(x, y);
                    for (int s = job.FirstSample; s < job.EndSample;)
                    {
                        int n = Math.Min(SampleCache.BlockSize, job.EndSample - s);
                        source.BeginBlock(key, (uint)s, n);
                        for (int j = 0; j < n; j++)
                        {
                            TStream stream = source.Stream(j);
                            (double fx, double fy) = stream.Get2D(DimensionLayout.Pixel);
                            (double lu, double lv) = lens ? stream.Get2D(DimensionLayout.Lens) : (0.5, 0.5);
                            var ray = camera.Generate(x + fx, y + fy, lu, lv);
                            acc.Add(tracer.Radiance(ray, stream, ref tileRays));
                        }

                        s += n;
                    }

                    // Each pixel belongs to one tile and so to one thread: no locking.
                    film.Store(x, y, acc);
                    tileNonFinite += acc.NonFinite;
                }
            }

            Interlocked.Add(ref rays, tileRays);
            Interlocked.Add(ref nonFinite, tileNonFinite);
            progress?.Invoke(Interlocked.Increment(ref done), tiles);
        }
    }
}

/// <summary>Where one thread's sample streams come from: blocks of consecutive samples of one pixel.</summary>
internal interface IStreamSource<TStream>
    where TStream : struct, ISampleStream
{
    /// <summary>Starts samples [<paramref name="first"/>, <paramref name="first"/> + <paramref name="count"/>) of the pixel with key <paramref name="pixel"/>.</summary>
    void BeginBlock(ulong pixel, uint first, int count);

    /// <summary>The stream of sample <c>first + slot</c>.</summary>
    TStream Stream(int slot);
}

/// <summary>The renderer's source: a thread's <see cref="SampleCache"/> (a struct wrapper, so the tile loop specialises on it).</summary>
internal readonly struct CacheSource(SampleCache cache) : IStreamSource<CachedSampleStream>
{
    public void BeginBlock(ulong pixel, uint first, int count) => cache.BeginBlock(pixel, first, count);

    public CachedSampleStream Stream(int slot) => cache.Stream(slot);
}
