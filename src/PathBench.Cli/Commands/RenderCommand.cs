using System.CommandLine;
using System.Globalization;
using System.Reflection;
using PathBench.Analysis;
using PathBench.Imaging;
using PathBench.Rendering;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;
using Spectre.Console;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench render</c>: path-trace a scene file and write the image with a JSON sidecar of
/// everything it depends on. <c>pathbench reference</c> is the same render made as a ground truth:
/// it refuses a deterministic sampler, writes the image as FLOAT OpenEXR and, beside it,
/// <c>NAME.variance.exr</c>, the variance of each pixel's mean from the film's exact sums, which a
/// study subtracts from its squared errors; the sidecar adds spp and the mean variance.
/// </summary>
internal static class RenderCommand
{
    public static Command Create(CliIo io) => Create(io, reference: false);

    public static Command CreateReference(CliIo io) => Create(io, reference: true);

    private static Command Create(CliIo io, bool reference)
    {
        var scenePath = new Argument<string>("scene") { Description = "Scene file (YAML; see scenes/README.md)" };
        var sampling = new SamplerOptions(defaultGenerator: "sobol");
        var spp = new Option<int?>("--spp") { Description = "Samples per pixel (default: the scene's render.spp)" };
        var hemisphere = new Option<string>("--hemisphere") { Description = "How diffuse bounces sample directions", DefaultValueFactory = _ => "cosine" };
        hemisphere.AcceptOnlyFromAmong("uniform", "cosine");
        var lights = new Option<string>("--lights") { Description = "bsdf (no light sampling), nee (light sampling only) or mis (both, power heuristic)", DefaultValueFactory = _ => "mis" };
        lights.AcceptOnlyFromAmong("bsdf", "nee", "mis");
        var threads = new Option<int>("--threads") { Description = "Worker threads (the image does not depend on it)", DefaultValueFactory = _ => Environment.ProcessorCount };
        var maxDepth = new Option<int?>("--max-depth") { Description = "Longest path in bounces (default: the scene's render.max_depth)" };
        var noRoulette = new Option<bool>("--no-roulette") { Description = "Switch Russian roulette off (paths run to --max-depth)" };
        var output = new Option<string?>("--out")
        {
            Description = reference
                ? "Output image, .exr (default: SCENE-NAME.exr here); NAME.variance.exr and a .json sidecar are written beside it"
                : "Output image: .exr, .pfm or .png (default: SCENE-NAME.exr here); a .json sidecar is written beside it",
        };

        var command = reference
            ? new Command("reference", "Render a ground truth with its per-pixel variance of the mean (NAME.variance.exr) for studies")
            : new Command("render", "Path-trace a scene with a chosen generator, randomization and strategy");
        command.Arguments.Add(scenePath);
        sampling.AddTo(command);
        foreach (Option o in new Option[] { spp, hemisphere, lights, threads, maxDepth, noRoulette, output })
        {
            command.Options.Add(o);
        }

        command.SetAction(parse =>
        {
            string path = parse.GetValue(scenePath)!;
            string outPath = parse.GetValue(output) ?? Path.GetFileNameWithoutExtension(path) + ".exr";
            ImageFormat format = ImageFile.FormatFromExtension(outPath); // an unknown extension fails before any work
            if (reference && format != ImageFormat.Exr)
            {
                throw new CliUsageException($"--out {outPath}: a reference is written as OpenEXR (FLOAT keeps every value); use a .exr name");
            }

            SceneDescription description = SceneLoader.Load(path);

            string sidecar = Path.ChangeExtension(outPath, ".json");
            // Check the outputs can be written before spending the render on them.
            RequireWritable(outPath);
            RequireWritable(sidecar);
            string variancePath = ReferenceImage.VariancePath(outPath);
            if (reference)
            {
                RequireWritable(variancePath);
            }

            int n = parse.GetValue(spp) ?? description.Render.Spp;
            int depth = parse.GetValue(maxDepth) ?? description.Render.MaxDepth;
            int t = parse.GetValue(threads);
            SamplerOptions.RequireAtLeast("--spp", n, 1);
            SamplerOptions.RequireAtMost("--spp", n, SceneLoader.MaxSpp, "samples per pixel");
            SamplerOptions.RequireAtLeast("--max-depth", depth, 1);
            SamplerOptions.RequireAtMost("--max-depth", depth, SceneLoader.MaxDepth, "bounces");
            SamplerOptions.RequireAtLeast("--threads", t, 1);

            SamplerSpec spec = sampling.Spec(parse, n);
            GeneratorInfo info = SamplerCatalog.Find(spec.Generator);
            // Generators with a dimension limit serve what they can; the path pads the rest (DimensionLayout).
            PointSampler sampler = SamplerCatalog.Create(spec, Math.Min(info.MaxDimensions, DimensionLayout.Total(depth)));
            bool unbiased = info.IsRandomized(spec.Randomize);
            if (reference && !unbiased)
            {
                throw new CliUsageException($"a reference must be an unbiased estimate: {spec.Generator} with --randomize {spec.RandomizeName} is deterministic; choose a randomization");
            }

            if (!unbiased)
            {
                io.Error.WriteLine($"pathbench: note: {spec.Generator} with --randomize none is a deterministic quadrature (the same points in every pixel), not an unbiased estimate; add a randomization for that");
            }

            var options = new PathTracerOptions(
                parse.GetValue(hemisphere) == "uniform" ? HemisphereStrategy.Uniform : HemisphereStrategy.Cosine,
                parse.GetValue(lights) switch { "bsdf" => LightStrategy.Bsdf, "nee" => LightStrategy.Nee, _ => LightStrategy.Mis },
                depth,
                !parse.GetValue(noRoulette));

            Scene scene = Scene.Build(description);

            RenderResult result = RenderWithProgress(io, new RenderJob(scene, sampler, options, 0, n, t));
            var image = new RgbImage(result.Film.Width, result.Film.Height, result.Film.ToRgb());
            double meanVariance = 0;
            if (reference)
            {
                var truth = ReferenceImage.FromFilm(result.Film, n);
                meanVariance = truth.MeanVariance;
                ImageIo.Guard(outPath, () => truth.Write(outPath));
            }
            else
            {
                ImageIo.Guard(outPath, () => ImageFile.Write(outPath, image));
            }

            ImageIo.Guard(sidecar, () => WriteSidecar(sidecar, w =>
                {
                    w.WriteStartObject();
                    w.WriteString("version", Version);
                    w.WriteString("scene", description.SourcePath);
                    w.WriteString("scene_sha256", description.Sha256);
                    w.WriteString("output", outPath);
                    w.WriteString("generator", spec.Generator);
                    w.WriteString("randomize", spec.RandomizeName);
                    w.WriteString("hemisphere", options.Hemisphere == HemisphereStrategy.Uniform ? "uniform" : "cosine");
                    w.WriteString("lights", parse.GetValue(lights));
                    w.WriteNumber("seed", spec.Seed);
                    w.WriteNumber("spp", n);
                    w.WriteNumber("max_depth", depth);
                    w.WriteBoolean("russian_roulette", options.RussianRoulette);
                    w.WriteNumber("width", result.Film.Width);
                    w.WriteNumber("height", result.Film.Height);
                    w.WriteNumber("threads", t);
                    w.Number("wall_seconds", result.WallSeconds);
                    w.WriteNumber("rays", result.Rays);
                    w.Number("mrays_per_second", result.Rays / 1e6 / Math.Max(result.WallSeconds, 1e-9));
                    w.WriteNumber("nonfinite_samples", result.Film.NonFiniteSamples);
                    w.WriteNumber("out_of_range_samples", result.Film.OutOfRangeSamples);
                    w.WriteNumber("dimensions_per_path", DimensionLayout.Total(depth));
                    w.WriteNumber("generator_dimensions", Math.Min(sampler.MaxDimensions, DimensionLayout.Total(depth)));
                    w.WriteBoolean("unbiased", unbiased);
                    if (reference)
                    {
                        w.WriteString("variance_file", variancePath);
                        w.Number("mean_variance", meanVariance);
                    }

                    w.WriteEndObject();
                }));

            io.Out.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{outPath}: {result.Film.Width}x{result.Film.Height}, {n} spp, {spec.Generator}/{spec.RandomizeName}, {result.WallSeconds:F2} s, {result.Rays / 1e6 / Math.Max(result.WallSeconds, 1e-9):F2} Mrays/s, {result.Film.NonFiniteSamples} non-finite samples"));
            return 0;
        });
        return command;
    }

    internal static string Version =>
        typeof(RenderCommand).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "unknown";

    private static void RequireWritable(string path)
    {
        string full = Path.GetFullPath(path);
        if (Directory.Exists(full))
        {
            throw new CliUsageException($"{path}: is a folder, not a file to write");
        }

        string? folder = Path.GetDirectoryName(full);
        if (folder is null || !Directory.Exists(folder))
        {
            throw new CliUsageException($"{path}: cannot write: the folder {folder} does not exist");
        }

        try
        {
            // Opening for append creates nothing new to lose and leaves an existing file as it is.
            bool existed = File.Exists(full);
            using (new FileStream(full, FileMode.Append, FileAccess.Write))
            {
            }

            if (!existed)
            {
                File.Delete(full);
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new CliUsageException($"{path}: cannot write: {e.Message}", e);
        }
    }

    private static void WriteSidecar(string path, Action<System.Text.Json.Utf8JsonWriter> body)
    {
        using var writer = new StreamWriter(path);
        JsonOutput.Write(writer, body);
    }

    /// <summary>
    /// Renders with a Spectre.Console progress bar on stderr when stderr is the process's own
    /// terminal; silently when it is redirected (logs, CI) or when a test supplies its own writers.
    /// </summary>
    private static RenderResult RenderWithProgress(CliIo io, RenderJob job)
    {
        if (Console.IsErrorRedirected || !ReferenceEquals(io.Error, Console.Error))
        {
            return Renderer.Render(job);
        }

        IAnsiConsole console = AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Error) });
        RenderResult? result = null;
        console.Progress()
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new RemainingTimeColumn())
            .Start(ctx =>
            {
                ProgressTask task = ctx.AddTask("rendering", maxValue: 1);
                object gate = new();
                // The display is not thread-safe: tiles finish on several threads, so updates take a lock.
                result = Renderer.Render(job, (done, total) =>
                {
                    lock (gate)
                    {
                        task.MaxValue = total;
                        task.Value = Math.Max(task.Value, done);
                    }
                });
            });
        return result!;
    }
}
