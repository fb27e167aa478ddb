using System.Globalization;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis;

/// <summary>One replicate render at one sample count: a row of <c>results.csv</c>.</summary>
/// <param name="Configuration">The configuration's name.</param>
/// <param name="Spp">Samples per pixel.</param>
/// <param name="Replicate">Replicate index, 0-based.</param>
/// <param name="Seed">The sampler seed of this replicate.</param>
/// <param name="Seconds">Wall time of the render up to this sample count (for a progressive render, the sum of its passes so far).</param>
/// <param name="Rays">Rays traced up to this sample count.</param>
/// <param name="NonFiniteSamples">Samples dropped as NaN or infinite (counted, never averaged in).</param>
/// <param name="Cached">Whether the render came from the study's cache (its time is that of the earlier run).</param>
/// <param name="Error">Error against the reference.</param>
public sealed record StudySample(string Configuration, int Spp, int Replicate, ulong Seed, double Seconds, long Rays, long NonFiniteSamples, bool Cached, ReplicateError Error);

/// <summary>What a finished study measured: every replicate, and per configuration and spp the per-pixel moments over replicates.</summary>
/// <param name="Study">The study.</param>
/// <param name="Reference">The reference every error is measured against.</param>
/// <param name="Samples">Every replicate render, in the order they ran.</param>
/// <param name="Moments">Per (configuration name, spp): the replicates' per-pixel sums.</param>
/// <param name="FinalImages">Per configuration name: each replicate's image at the largest spp, in replicate order.</param>
/// <param name="FirstReplicate">Per (configuration name, spp): the first replicate's image, for viewing.</param>
/// <param name="Threads">Worker threads of every render.</param>
public sealed record StudyResult(
    StudyDefinition Study,
    ReferenceImage Reference,
    IReadOnlyList<StudySample> Samples,
    IReadOnlyDictionary<(string Configuration, int Spp), PixelMoments> Moments,
    IReadOnlyDictionary<string, List<float[]>> FinalImages,
    IReadOnlyDictionary<(string Configuration, int Spp), float[]> FirstReplicate,
    int Threads);

/// <summary>Per-pixel, per-channel sums of the replicate images and of their squares.</summary>
public sealed class PixelMoments
{
    /// <summary>Creates empty sums for <paramref name="values"/> pixel-channel values.</summary>
    public PixelMoments(int values)
    {
        Sum = new double[values];
        SumSquares = new double[values];
    }

    /// <summary>Number of images added.</summary>
    public int Count { get; private set; }

    /// <summary>Σ x per value.</summary>
    public double[] Sum { get; }

    /// <summary>Σ x² per value.</summary>
    public double[] SumSquares { get; }

    /// <summary>Per value, the unbiased variance across the replicates added (0 with fewer than two).</summary>
    public float[] Variance()
    {
        var v = new float[Sum.Length];
        if (Count < 2)
        {
            return v;
        }

        for (int i = 0; i < v.Length; i++)
        {
            double mean = Sum[i] / Count;
            v[i] = (float)Math.Max(0, (SumSquares[i] - (Sum[i] * mean)) / (Count - 1));
        }

        return v;
    }

    /// <summary>Adds one replicate image.</summary>
    public void Add(ReadOnlySpan<float> image)
    {
        if (image.Length != Sum.Length)
        {
            throw new ArgumentException("image size differs from the moments'", nameof(image));
        }

        for (int i = 0; i < image.Length; i++)
        {
            Sum[i] += image[i];
            SumSquares[i] += (double)image[i] * image[i];
        }

        Count++;
    }
}

/// <summary>What a study's renders depend on beyond the study file: the built scene and where renders are kept.</summary>
/// <param name="Scene">The scene, built at the study's resolution.</param>
/// <param name="SceneSha256">SHA-256 of the scene file (and its meshes), part of every cache key.</param>
/// <param name="SceneMaxDepth">The scene's own path length, for configurations that do not set one.</param>
/// <param name="Threads">Worker threads per render (the image does not depend on it).</param>
/// <param name="Cache">Where finished renders are kept; null to keep none.</param>
public sealed record StudyEnvironment(Scene Scene, string SceneSha256, int SceneMaxDepth, int Threads, StudyCache? Cache);

/// <summary>
/// Runs a study's renders.
/// <para>
/// Timing: replicates are interleaved across configurations (replicate 0 of every configuration,
/// then replicate 1, …), so a slow spell of the machine falls on all of them alike; each render's
/// wall time is measured around the render alone (scene building, image measurement and file
/// writing excluded), and the summary reports the median over replicates with the fastest and the
/// slowest.
/// </para>
/// <para>
/// A progressive configuration (a sequence: its points do not depend on the planned count) renders
/// each replicate once, in passes that end at each spp of the ladder, and measures the image after
/// each pass; the time of an spp is the sum of the passes up to it. A count-dependent set renders
/// every spp afresh. A deterministic configuration (no randomization) renders once.
/// </para>
/// </summary>
public sealed class StudyRunner
{
    private readonly StudyDefinition _study;
    private readonly StudyEnvironment _env;

    /// <summary>Prepares the runner.</summary>
    public StudyRunner(StudyDefinition study, StudyEnvironment environment)
    {
        ArgumentNullException.ThrowIfNull(study);
        ArgumentNullException.ThrowIfNull(environment);
        ArgumentOutOfRangeException.ThrowIfLessThan(environment.Threads, 1);
        _study = study;
        _env = environment;
    }

    private int Width => _env.Scene.Camera.Width;

    private int Height => _env.Scene.Camera.Height;

    /// <summary>
    /// Renders a reference of <paramref name="spp"/> samples with the default strategies (cosine
    /// hemisphere, MIS, roulette) at a seed no replicate uses, from the cache when it is there.
    /// </summary>
    public ReferenceImage RenderReference(int spp, string generator, string randomize, CancellationToken cancel = default)
    {
        (Randomization kind, bool anti) = SamplerCatalog.ParseRandomization(randomize);
        var c = new StudyConfiguration("reference", generator, kind, anti, HemisphereStrategy.Cosine, LightStrategy.Mis, null, RussianRoulette: true);
        // Replicates use seeds Seed + 1 … Seed + K; the reference takes one far from those.
        ulong seed = unchecked(_study.Seed + 0x5EED_0000_0000UL);
        int depth = _env.SceneMaxDepth;
        string? path = _env.Cache is { } cache
            ? Path.Combine(cache.Folder, "reference-" + StudyCache.Key(RenderCodeIdentity.Value, _env.SceneSha256, Width, Height, c, depth, seed, spp) + ".exr")
            : null;
        if (path is not null && File.Exists(path) && File.Exists(ReferenceImage.VariancePath(path)))
        {
            ReferenceImage read = ReferenceImage.Read(path, spp);
            if (read.Width == Width && read.Height == Height)
            {
                return read;
            }
        }

        PointSampler sampler = CreateSampler(new SamplerSpec(generator, kind, anti, spp, seed), depth);
        Film film = Renderer.Render(new RenderJob(_env.Scene, sampler, Options(c), 0, spp, _env.Threads), cancel: cancel).Film;
        ReferenceImage reference = ReferenceImage.FromFilm(film, spp);
        if (path is not null)
        {
            Directory.CreateDirectory(Path.GetDirectoryName(path)!);
            reference.Write(path);
        }

        return reference;
    }

    /// <summary>Renders (or takes from the cache) every configuration's replicates and measures them against <paramref name="reference"/>.</summary>
    /// <param name="reference">Ground truth of the scene's size.</param>
    /// <param name="progress">Called after each render with (finished renders, total renders, what finished, whether it came from the cache).</param>
    /// <param name="cancel">Stops between passes.</param>
    public StudyResult Run(ReferenceImage reference, Action<int, int, string, bool>? progress = null, CancellationToken cancel = default)
    {
        ArgumentNullException.ThrowIfNull(reference);
        if (reference.Width != Width || reference.Height != Height)
        {
            throw new ArgumentException(FormattableString.Invariant($"the reference is {reference.Width}x{reference.Height}, the scene renders {Width}x{Height}"), nameof(reference));
        }

        var samples = new List<StudySample>();
        var moments = new Dictionary<(string, int), PixelMoments>();
        var finals = new Dictionary<string, List<float[]>>(StringComparer.Ordinal);
        var first = new Dictionary<(string, int), float[]>();
        foreach (StudyConfiguration c in _study.Configurations)
        {
            finals[c.Name] = [];
            foreach (int spp in _study.Spp)
            {
                moments[(c.Name, spp)] = new PixelMoments(reference.Value.Length);
            }
        }

        int total = _study.Configurations.Sum(c => Replicates(c) * (c.IsProgressive ? 1 : _study.Spp.Count));
        int done = 0;
        for (int k = 0; k < _study.Replicates; k++)
        {
            foreach (StudyConfiguration c in _study.Configurations)
            {
                if (k >= Replicates(c))
                {
                    continue;
                }

                ulong seed = _study.SeedOf(k);
                foreach ((int spp, CachedRender r, bool cached) in Render(c, seed, cancel))
                {
                    samples.Add(new StudySample(c.Name, spp, k, seed, r.Seconds, r.Rays, r.NonFiniteSamples, cached, ReplicateError.Measure(r.Image, reference)));
                    moments[(c.Name, spp)].Add(r.Image);
                    if (k == 0)
                    {
                        first[(c.Name, spp)] = r.Image;
                    }

                    if (spp == _study.Spp[^1])
                    {
                        finals[c.Name].Add(r.Image);
                    }

                    if (!c.IsProgressive || spp == _study.Spp[^1])
                    {
                        string what = c.IsProgressive
                            ? FormattableString.Invariant($"{c.Name} replicate {k + 1}/{Replicates(c)}")
                            : FormattableString.Invariant($"{c.Name} replicate {k + 1}/{Replicates(c)} at {spp} spp");
                        progress?.Invoke(++done, total, what, cached);
                    }
                }
            }
        }

        return new StudyResult(_study, reference, samples, moments, finals, first, _env.Threads);
    }

    /// <summary>
    /// Memory a study holds, estimated from its declared sizes before anything is rendered: per
    /// configuration and spp the per-pixel sums over replicates (two doubles per value) and the first
    /// replicate's image (one float per value); per configuration each replicate's image at the largest
    /// spp (one float per value); two films in flight (<see cref="Film.BytesPerPixel"/> each); the
    /// reference (value and variance in double, 48 bytes a pixel) and an image being written (72 bytes
    /// a pixel, the figure measured for a render's output in FilmOutput).
    /// </summary>
    public static Int128 EstimateBytes(StudyDefinition study, int width, int height)
    {
        ArgumentNullException.ThrowIfNull(study);
        Int128 pixels = (Int128)width * height;
        Int128 values = 3 * pixels;
        long configs = study.Configurations.Count;
        return (values * 20 * configs * study.Spp.Count) + (values * 4 * configs * study.Replicates) + (pixels * ((2 * Film.BytesPerPixel) + 48 + 72));
    }

    /// <summary>
    /// Refuses a study (or a check case, which runs as one) whose <see cref="EstimateBytes"/> is above
    /// the memory budget, with the file's name, what it asked for and how to raise the budget.
    /// </summary>
    /// <exception cref="SceneException">Above the budget.</exception>
    public static void RequireMemory(StudyDefinition study, int width, int height, string what)
    {
        ArgumentNullException.ThrowIfNull(study);
        try
        {
            MemoryBudget.Current.Require(EstimateBytes(study, width, height), string.Create(CultureInfo.InvariantCulture,
                $"{what} of {width}x{height} pixels, {study.Configurations.Count} configurations, {study.Spp.Count} sample counts and {study.Replicates} replicates"));
        }
        catch (MemoryBudgetException e)
        {
            throw new SceneException($"{study.SourcePath}: {e.Message}", e);
        }
    }

    /// <summary>How many replicates a configuration renders: one for a deterministic quadrature, all otherwise.</summary>
    public int Replicates(StudyConfiguration configuration)
    {
        ArgumentNullException.ThrowIfNull(configuration);
        return configuration.IsRandomized ? _study.Replicates : 1;
    }

    private int Depth(StudyConfiguration c) => c.MaxDepth ?? _env.SceneMaxDepth;

    private PathTracerOptions Options(StudyConfiguration c) => new(c.Hemisphere, c.Lights, Depth(c), c.RussianRoulette);

    private string Key(StudyConfiguration c, ulong seed, int spp) =>
        StudyCache.Key(RenderCodeIdentity.Value, _env.SceneSha256, Width, Height, c, Depth(c), seed, spp);

    private IEnumerable<(int Spp, CachedRender Render, bool Cached)> Render(StudyConfiguration c, ulong seed, CancellationToken cancel)
    {
        int depth = Depth(c);
        PathTracerOptions options = Options(c);
        if (c.IsProgressive)
        {
            // All rungs from the cache, or the whole replicate again: its passes build on each other.
            CachedRender?[] cached = [.. _study.Spp.Select(spp => _env.Cache?.TryGet(Key(c, seed, spp), Width, Height))];
            if (cached.All(r => r is not null))
            {
                for (int i = 0; i < cached.Length; i++)
                {
                    yield return (_study.Spp[i], cached[i]!, true);
                }

                yield break;
            }

            // One sampler planned for the largest count: a sequence's points do not depend on it.
            PointSampler sampler = CreateSampler(new SamplerSpec(c.Generator, c.Randomization, c.Antithetic, _study.Spp[^1], seed), depth);
            Film? film = null;
            double seconds = 0;
            long rays = 0;
            int first = 0;
            foreach (int spp in _study.Spp)
            {
                cancel.ThrowIfCancellationRequested();
                RenderResult pass = Renderer.Render(new RenderJob(_env.Scene, sampler, options, first, spp, _env.Threads), cancel: cancel);
                if (film is null)
                {
                    film = pass.Film;
                }
                else
                {
                    film.Merge(pass.Film);
                }

                seconds += pass.WallSeconds;
                rays += pass.Rays;
                first = spp;
                var render = new CachedRender(film.ToRgb(), seconds, rays, film.NonFiniteSamples);
                _env.Cache?.Put(Key(c, seed, spp), Width, Height, render);
                yield return (spp, render, false);
            }
        }
        else
        {
            foreach (int spp in _study.Spp)
            {
                cancel.ThrowIfCancellationRequested();
                string key = Key(c, seed, spp);
                if (_env.Cache?.TryGet(key, Width, Height) is { } hit)
                {
                    yield return (spp, hit, true);
                    continue;
                }

                PointSampler sampler = CreateSampler(new SamplerSpec(c.Generator, c.Randomization, c.Antithetic, spp, seed), depth);
                RenderResult r = Renderer.Render(new RenderJob(_env.Scene, sampler, options, 0, spp, _env.Threads), cancel: cancel);
                var render = new CachedRender(r.Film.ToRgb(), r.WallSeconds, r.Rays, r.Film.NonFiniteSamples);
                _env.Cache?.Put(key, Width, Height, render);
                yield return (spp, render, false);
            }
        }
    }

    private static PointSampler CreateSampler(SamplerSpec spec, int depth)
    {
        GeneratorInfo info = SamplerCatalog.Find(spec.Generator);
        // Generators with a dimension limit serve what they can; the path pads the rest (DimensionLayout).
        return SamplerCatalog.Create(spec, Math.Min(info.MaxDimensions, DimensionLayout.Total(depth)));
    }
}
