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

        int tilesX = (camera.Width + TileSize - 1) / TileSize;
        int tilesY = (camera.Height + TileSize - 1) / TileSize;
        int tiles = tilesX * tilesY;
        var tracer = new PathTracer(job.Scene, job.Options);
        long rays = 0, nonFinite = 0;
        int done = 0;
        var clock = Stopwatch.StartNew();
        var parallel = new ParallelOptions { MaxDegreeOfParallelism = Math.Max(1, job.Threads), CancellationToken = cancel };
        try
        {
            RenderTiles(job, film, camera, tilesX, tiles, tracer, parallel, progress, ref rays, ref nonFinite, ref done);
        }
        catch (AggregateException e) when (e.InnerExceptions.OfType<PathBench.Io.MemoryBudgetException>().FirstOrDefault() is { } budget)
        {
            // The film's wide sums outgrew the budget in a worker: that one line, not the aggregate.
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(budget).Throw();
        }

        film.AddDropped(nonFinite);
        return new RenderResult(film, rays, clock.Elapsed.TotalSeconds);
    }

    private static void RenderTiles(RenderJob job, Film film, Camera camera, int tilesX, int tiles, PathTracer tracer, ParallelOptions parallel, Action<int, int>? progress, ref long raysTotal, ref long nonFiniteTotal, ref int doneTotal)
    {
        long rays = 0, nonFinite = 0;
        int done = 0;
        Parallel.For(0, tiles, parallel, tile =>
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
                    for (int s = job.FirstSample; s < job.EndSample; s++)
                    {
                        var stream = new SampleStream(job.Sampler, key, (uint)s);
                        (double fx, double fy) = stream.Get2D(DimensionLayout.Pixel);
                        (double lu, double lv) = stream.Get2D(DimensionLayout.Lens);
                        var ray = camera.Generate(x + fx, y + fy, lu, lv);
                        acc.Add(tracer.Radiance(ray, stream, ref tileRays));
                    }

                    // Each pixel belongs to one tile and so to one thread: no locking.
                    film.Store(x, y, acc);
                    tileNonFinite += acc.NonFinite;
                }
            }

            Interlocked.Add(ref rays, tileRays);
            Interlocked.Add(ref nonFinite, tileNonFinite);
            progress?.Invoke(Interlocked.Increment(ref done), tiles);
        });

        raysTotal = rays;
        nonFiniteTotal = nonFinite;
        doneTotal = done;
    }
}
