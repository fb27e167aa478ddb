using System.Globalization;
using System.Text.Json;
using PathBench.Imaging;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Rendering.Scenes;

namespace PathBench.Analysis;

/// <summary>How a study runs: where its outputs go and what the machine gives it.</summary>
/// <param name="OutputDirectory">DIR: results, plots, images and the render cache (<c>DIR/cache</c>).</param>
/// <param name="Threads">Worker threads per render; null for the study file's setting, else every core.</param>
/// <param name="Version">PathBench version, recorded in the outputs (the cache keys use <see cref="RenderCodeIdentity"/>).</param>
public sealed record StudyRunOptions(string OutputDirectory, int? Threads, string Version);

/// <summary>What a finished study produced.</summary>
/// <param name="Summary">The statistics.</param>
/// <param name="Files">Every file written into the output directory, in the order written.</param>
/// <param name="CachedRenders">Renders taken from the cache instead of rendered.</param>
/// <param name="ReferencePath">The reference image used (read, or rendered and written into the output directory).</param>
public sealed record StudyOutcome(StudySummary Summary, IReadOnlyList<string> Files, int CachedRenders, string ReferencePath);

/// <summary>Reports a study's progress: phases, and each finished render.</summary>
public interface IStudyProgress
{
    /// <summary>A phase begins (loading, reference, renders, analysis, writing).</summary>
    void Phase(string what);

    /// <summary>A render finished: <paramref name="done"/> of <paramref name="total"/>.</summary>
    void Render(int done, int total, string what, bool cached);
}

/// <summary>
/// Runs a study from its definition to its files: loads and builds the scene (at the study's
/// resolution), obtains the reference (rendered, or read with its variance file and checked
/// against the scene), renders or takes from the cache every replicate, summarises, and writes
/// <c>results.csv</c>, <c>summary.json</c>, the plots, the win map and the error heat maps.
/// </summary>
public static class StudyPipeline
{
    /// <summary>Runs the study.</summary>
    /// <exception cref="SceneException">The scene, or the reference's fit to it, is wrong (one line with the position).</exception>
    /// <exception cref="ImageFileException">The reference file cannot be read.</exception>
    public static StudyOutcome Run(StudyDefinition study, StudyRunOptions options, IStudyProgress? progress = null, CancellationToken cancel = default)
    {
        ArgumentNullException.ThrowIfNull(study);
        ArgumentNullException.ThrowIfNull(options);
        progress?.Phase("loading the scene");
        SceneDescription description = LoadScene(study);
        int threads = options.Threads ?? study.Threads ?? Environment.ProcessorCount;
        var cache = new StudyCache(Path.Combine(options.OutputDirectory, "cache"));
        Scene scene = Scene.Build(description);
        var env = new StudyEnvironment(scene, description.Sha256, description.Render.MaxDepth, threads, cache);
        var runner = new StudyRunner(study, env);

        var files = new List<string>();
        ReferenceImage reference;
        string referencePath;
        if (study.Reference.Path is { } path)
        {
            // Read and checked before anything is written.
            progress?.Phase("reading the reference " + path);
            reference = ReadReference(study, description, path);
            referencePath = path;
            Directory.CreateDirectory(options.OutputDirectory);
        }
        else
        {
            Directory.CreateDirectory(options.OutputDirectory);
            int spp = study.Reference.Spp!.Value;
            progress?.Phase(string.Create(CultureInfo.InvariantCulture, $"rendering the reference ({spp} spp, {study.Reference.Generator}/{study.Reference.Randomize})"));
            reference = runner.RenderReference(spp, study.Reference.Generator, study.Reference.Randomize, cancel);
            // Written with the viewer's images: images/reference.exr and images/reference.variance.exr.
            referencePath = Path.Combine(options.OutputDirectory, "images", "reference.exr");
        }

        progress?.Phase("rendering the replicates");
        StudyResult result = runner.Run(reference, progress is null ? null : progress.Render, cancel);
        progress?.Phase("measuring");
        StudySummary summary = StudySummary.Of(result);
        progress?.Phase("writing results");
        string label = Path.GetRelativePath(Path.GetDirectoryName(Path.GetFullPath(study.SourcePath)) ?? ".", study.ScenePath);
        IReadOnlyList<StudyImage> images = WriteViewerImages(options.OutputDirectory, summary);
        files.AddRange(images.Select(i => Path.Combine(options.OutputDirectory, i.File)));
        var metadata = new StudyMetadata(study.SourcePath, options.Version, DateTimeOffset.UtcNow, images);
        StudyOutput.Write(options.OutputDirectory, summary, label, referencePath, metadata);
        files.Add(Path.Combine(options.OutputDirectory, "results.csv"));
        files.Add(Path.Combine(options.OutputDirectory, "summary.json"));
        files.AddRange(StudyPlots.Write(options.OutputDirectory, summary));
        files.AddRange(WriteImages(options.OutputDirectory, summary));
        files.Add(Report.StudyReport.Write(options.OutputDirectory));
        return new StudyOutcome(summary, files, cache.Hits, referencePath);
    }

    /// <summary>The study's scene, at the study's resolution when it sets one (its memory checked against the budget first; <paramref name="what"/> names it in the refusal).</summary>
    public static SceneDescription LoadScene(StudyDefinition study, string what = "a study")
    {
        ArgumentNullException.ThrowIfNull(study);
        SceneDescription description = SceneLoader.Load(study.ScenePath);
        if (study.Resolution is { } r)
        {
            description = description with { Camera = description.Camera with { Width = r.Width, Height = r.Height } };
        }

        int width = description.Camera.Width, height = description.Camera.Height;
        StudyRunner.RequireMemory(study, width, height, what);
        return description;
    }

    /// <summary>
    /// Reads a reference file with its variance file (when present) and checks it belongs to the
    /// study: the same size as the study renders, and, when a render sidecar (<c>ref.json</c>)
    /// sits beside it, the same scene file (by SHA-256).
    /// </summary>
    public static ReferenceImage ReadReference(StudyDefinition study, SceneDescription scene, string path)
    {
        ArgumentNullException.ThrowIfNull(study);
        ArgumentNullException.ThrowIfNull(scene);
        string where = study.Reference.Location ?? study.SourcePath;
        if (!File.Exists(path))
        {
            throw new SceneException($"{where}: the reference {path} does not exist; render one with 'pathbench reference' or give 'reference: {{ spp: N }}'");
        }

        string sidecar = Path.ChangeExtension(path, ".json");
        (string? sha, int? spp) = File.Exists(sidecar) ? ReadSidecar(sidecar) : (null, null);
        ReferenceImage reference = ReferenceImage.Read(path, spp);
        if (reference.Width != scene.Camera.Width || reference.Height != scene.Camera.Height)
        {
            throw new SceneException(string.Create(CultureInfo.InvariantCulture,
                $"{where}: the reference {path} is {reference.Width}x{reference.Height}, the study renders {scene.Camera.Width}x{scene.Camera.Height}"));
        }

        if (sha is not null && !string.Equals(sha, scene.Sha256, StringComparison.OrdinalIgnoreCase))
        {
            throw new SceneException($"{where}: the reference {path} was rendered from another scene (its sidecar {sidecar} gives scene_sha256 {sha}, {scene.SourcePath} has {scene.Sha256})");
        }

        return reference;
    }

    private static (string? Sha256, int? Spp) ReadSidecar(string sidecar)
    {
        try
        {
            using JsonDocument doc = JsonDocument.Parse(InputFile.ReadAllBytes(sidecar, reason => new SceneException($"{sidecar}: the reference's sidecar: {reason}")));
            JsonElement root = doc.RootElement;
            string? sha = root.TryGetProperty("scene_sha256", out JsonElement s) && s.ValueKind == JsonValueKind.String ? s.GetString() : null;
            int? spp = root.TryGetProperty("spp", out JsonElement n) && n.ValueKind == JsonValueKind.Number && n.TryGetInt32(out int v) ? v : null;
            return (sha, spp);
        }
        catch (JsonException e)
        {
            throw new SceneException($"{sidecar}: the reference's sidecar is not valid JSON: {e.Message}", e);
        }
    }

    /// <summary>
    /// The float images a viewer needs, as FLOAT OpenEXR in <c>DIR/images</c>: the reference (and
    /// its variance when known), each configuration's first replicate at every spp, and each
    /// configuration's variance across replicates at the largest spp.
    /// </summary>
    private static List<StudyImage> WriteViewerImages(string directory, StudySummary summary)
    {
        StudyResult result = summary.Result;
        ReferenceImage reference = result.Reference;
        int width = reference.Width, height = reference.Height;
        string folder = Path.Combine(directory, "images");
        Directory.CreateDirectory(folder);
        var exact = new ExrWriteOptions(ExrCompression.Zip, ExrPixelType.Float);
        var images = new List<StudyImage>();
        void Write(StudyImage image, float[] data)
        {
            ImageFile.Write(Path.Combine(directory, image.File), new RgbImage(width, height, data), exact);
            images.Add(image);
        }

        Write(new StudyImage("reference", null, reference.Spp, "images/reference.exr"), reference.ToValueImage().Data);
        if (reference.HasVariance)
        {
            Write(new StudyImage("reference-variance", null, reference.Spp, "images/reference.variance.exr"), [.. reference.VarianceOfMean.Select(v => (float)v)]);
        }

        int largest = result.Study.Spp[^1];
        foreach (StudyConfiguration c in result.Study.Configurations)
        {
            foreach (int spp in result.Study.Spp)
            {
                Write(new StudyImage("render", c.Name, spp, string.Create(CultureInfo.InvariantCulture, $"images/{c.Name}-{spp}spp.exr")), result.FirstReplicate[(c.Name, spp)]);
            }

            PixelMoments moments = result.Moments[(c.Name, largest)];
            if (moments.Count >= 2)
            {
                Write(new StudyImage("variance", c.Name, largest, string.Create(CultureInfo.InvariantCulture, $"images/{c.Name}-{largest}spp.variance.exr")), moments.Variance());
            }
        }

        return images;
    }

    /// <summary>The win map and, per configuration, the relative-error heat map of its first replicate at the largest spp.</summary>
    private static IEnumerable<string> WriteImages(string directory, StudySummary summary)
    {
        ReferenceImage reference = summary.Result.Reference;
        string[] names = [.. summary.Configurations.Select(c => c.Configuration.Name)];
        string title = string.Create(CultureInfo.InvariantCulture, $"lower error at equal time ({summary.EqualTime.Seconds:G3} s), {WinMap.TileSize}x{WinMap.TileSize} tiles");
        string png = Path.Combine(directory, "win-map.png");
        string svg = Path.Combine(directory, "win-map.svg");
        WinMapImage.WritePng(png, summary.WinMap, reference, names, title);
        WinMapImage.WriteSvg(svg, summary.WinMap, names, title);
        yield return png;
        yield return svg;

        RgbImage referenceImage = reference.ToValueImage();
        var region = new PixelRect(0, 0, reference.Width, reference.Height);
        int largest = summary.Result.Study.Spp[^1];
        var maps = summary.Configurations
            .Select(c => (c.Configuration.Name, Map: ErrorMap.Compute(referenceImage, new RgbImage(reference.Width, reference.Height, summary.Result.FinalImages[c.Configuration.Name][0]), region, ErrorMapKind.Relative, ReplicateError.Epsilon)))
            .ToList();

        // One scale for every map, so their colours compare.
        double top = maps.Max(m => ErrorMap.ScaleTop(m.Map));
        foreach ((string name, float[] map) in maps)
        {
            string path = Path.Combine(directory, "error-" + name + ".png");
            ErrorMap.WriteHeatmap(path, map, reference.Width, reference.Height, top, string.Create(CultureInfo.InvariantCulture, $"{name}, {largest} spp: relative error"));
            yield return path;
        }
    }
}
