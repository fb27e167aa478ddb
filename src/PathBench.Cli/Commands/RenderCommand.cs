using System.CommandLine;
using System.Globalization;
using System.Reflection;
using PathBench.Analysis;
using PathBench.Imaging;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Accumulation;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;

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
        var shard = new Option<string?>("--shard") { Description = "Render the I-th of N disjoint sample ranges (0 ≤ I < N) and write its accumulation file (--checkpoint FILE, or IMAGE.accum) for 'pathbench merge'" };
        var checkpoint = new Option<string?>("--checkpoint") { Description = "Accumulation file written atomically every --checkpoint-every and at the end; --resume continues from it" };
        var checkpointEvery = new Option<string>("--checkpoint-every") { Description = "Wall time between checkpoints, e.g. 10m, 90s, 1h30m", DefaultValueFactory = _ => "10m" };
        var resume = new Option<bool>("--resume") { Description = "Continue from the --checkpoint file (refused if it is of another scene, configuration or PathBench version)" };
        var budget = new Option<string?>("--time-budget") { Description = "Render whole passes until this wall time is spent (8h, 45m, 90s); with --spp, whichever comes first" };
        var quiet = new Option<bool>("--quiet") { Description = "No progress lines on stderr" };

        var command = reference
            ? new Command("reference", "Render a ground truth with its per-pixel variance of the mean (NAME.variance.exr) for studies")
            : new Command("render", "Path-trace a scene with a chosen generator, randomization and strategy");
        command.Arguments.Add(scenePath);
        sampling.AddTo(command);
        foreach (Option o in new Option[] { spp, hemisphere, lights, threads, maxDepth, noRoulette, output, shard, checkpoint, checkpointEvery, resume, budget, quiet })
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

            TimeSpan? timeBudget = parse.GetValue(budget) is { } b ? Durations.Parse("--time-budget", b) : null;
            TimeSpan every = Durations.Parse("--checkpoint-every", parse.GetValue(checkpointEvery)!);
            (int Index, int Count)? shardSpec = parse.GetValue(shard) is { } sh ? ParseShard(sh) : null;
            string? accumulationPath = parse.GetValue(checkpoint) ?? (shardSpec is null ? null : Path.ChangeExtension(outPath, ".accum"));
            bool resuming = parse.GetValue(resume);
            if (resuming && accumulationPath is null)
            {
                throw new CliUsageException("--resume needs --checkpoint FILE (or --shard, whose file is IMAGE.accum)");
            }

            SceneDescription description = SceneLoader.Load(path);
            FilmOutput.RequireMemory(description.Camera.Width, description.Camera.Height, 1, reference, reference ? "a reference render" : "a render");

            string sidecar = Path.ChangeExtension(outPath, ".json");
            string variancePath = ReferenceImage.VariancePath(outPath);
            // The checkpoint being resumed is read, then rewritten: it is the one output that may be an input.
            // The scene's meshes are inputs too, as the loader resolved them.
            var paths = new OutputPaths().Input(path);
            foreach (string mesh in description.MeshFiles)
            {
                paths.Input(mesh);
            }

            paths
                .Output(outPath, "the image")
                .Output(sidecar, "the sidecar (JSON)", ".json")
                .Output(reference ? variancePath : null, "the variance image", ".exr")
                .Output(accumulationPath, "the accumulation file");
            // Check the outputs can be written before spending the render on them.
            RequireWritable(outPath);
            RequireWritable(sidecar);
            if (reference)
            {
                RequireWritable(variancePath);
            }

            if (accumulationPath is not null)
            {
                RequireWritable(accumulationPath);
            }

            int? sppGiven = parse.GetValue(spp);
            int depth = parse.GetValue(maxDepth) ?? description.Render.MaxDepth;
            int t = parse.GetValue(threads);
            SamplerOptions.RequireAtLeast("--max-depth", depth, 1);
            SamplerOptions.RequireAtMost("--max-depth", depth, SceneLoader.MaxDepth, "bounces");
            SamplerOptions.RequireAtLeast("--threads", t, 1);
            GeneratorInfo info = SamplerCatalog.Find(parse.GetValue(sampling.Generator)!);
            if (timeBudget is not null && sppGiven is null && info.NeedsCount)
            {
                throw new CliUsageException($"--time-budget without --spp: '{info.Name}' is a point set planned for its count; give --spp too (the render stops at whichever comes first)");
            }

            // A budget alone renders a sequence until the time is spent, up to the largest spp or
            // the sequence's own length (pmj02's tables, a lattice), whichever is smaller.
            int n = sppGiven ?? (timeBudget is null ? description.Render.Spp : Math.Min(SceneLoader.MaxSpp, info.MaxPoints));
            SamplerOptions.RequireAtLeast("--spp", n, 1);
            SamplerOptions.RequireAtMost("--spp", n, SceneLoader.MaxSpp, "samples per pixel");
            if (shardSpec is { } s && s.Count > n)
            {
                throw new CliUsageException($"--shard {s.Index}/{s.Count}: more shards than the {n} samples per pixel to share");
            }

            SamplerSpec spec = sampling.Spec(parse, n);
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

            var identity = new RenderIdentity(Version, SceneDigest.Compute(description), Configuration(spec, options, parse.GetValue(lights)!), description.Camera.Width, description.Camera.Height);
            SampleRange target = shardSpec is { } sp ? SampleRange.Shard(sp.Index, sp.Count, n) : new SampleRange(0, n);
            Accumulation? resumed = resuming ? LoadCheckpoint(accumulationPath!, identity, target) : null;

            Scene scene = Scene.Build(description);
            var plan = new SessionPlan(target, timeBudget, accumulationPath, every, parse.GetValue(quiet));
            SessionOutcome result = RenderSession.Run(io, new RenderJob(scene, sampler, options, target.First, target.End, t), identity, plan, resumed);
            SampleRange[] ranges = result.Done.Count > 0 ? [result.Done] : [];
            double meanVariance = FilmOutput.WriteImage(outPath, result.Film, result.Done.Count, reference);
            string stoppedBy = result.Interrupted ? "signal" : result.Done.End < target.End ? "time_budget" : "complete";
            FilmOutput.WriteSidecar(sidecar, identity, description, outPath, ranges, result.Film, w =>
            {
                w.WriteNumber("threads", t);
                w.Number("wall_seconds", result.WallSeconds);
                w.WriteNumber("rays", result.Rays);
                w.Number("mrays_per_second", result.Rays / 1e6 / Math.Max(result.WallSeconds, 1e-9));
                w.WriteNumber("dimensions_per_path", DimensionLayout.Total(depth));
                w.WriteNumber("generator_dimensions", Math.Min(sampler.MaxDimensions, DimensionLayout.Total(depth)));
                w.WriteBoolean("unbiased", unbiased);
                w.WriteString("stopped_by", stoppedBy);
                if (shardSpec is { } sd)
                {
                    w.WriteNumber("shard_index", sd.Index);
                    w.WriteNumber("shard_count", sd.Count);
                }

                if (accumulationPath is not null)
                {
                    w.WriteString("accumulation_file", accumulationPath);
                    w.WriteNumber("checkpoints_written", result.Checkpoints);
                    w.Number("checkpoint_seconds", result.CheckpointSeconds);
                }

                if (resumed is not null)
                {
                    w.WriteNumber("resumed_from_spp", resumed.SamplesPerPixel);
                }

                if (reference)
                {
                    w.WriteString("variance_file", variancePath);
                    w.Number("mean_variance", meanVariance);
                }
            });

            if (result.Interrupted)
            {
                io.Error.WriteLine(InterruptedLine(result, target, outPath, sidecar, reference ? variancePath : null, accumulationPath));
            }

            io.Out.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{outPath}: {result.Film.Width}x{result.Film.Height}, {result.Done.Count} spp {result.Done}, {spec.Generator}/{spec.RandomizeName}, {result.WallSeconds:F2} s, {result.Rays / 1e6 / Math.Max(result.WallSeconds, 1e-9):F2} Mrays/s, {result.Film.NonFiniteSamples} non-finite samples{(stoppedBy == "complete" ? "" : ", stopped by " + stoppedBy.Replace('_', ' '))}"));
            if (timeBudget is not null && sppGiven is null && n == info.MaxPoints && stoppedBy == "complete")
            {
                // Not an error: the budget plans a finite sequence for its own length, and the render ends there.
                io.Out.WriteLine(string.Create(CultureInfo.InvariantCulture,
                    $"pathbench: note: {info.Name} defines {info.MaxPoints} points per pixel; the render stopped at them with {FormatRemaining(timeBudget.Value, result.WallSeconds)} of the time budget left (a generator without that limit renders on)"));
            }

            FilmOutput.WarnDropped(io.Out, outPath, result.Film);
            return result.Interrupted ? RenderSession.InterruptedExitCode : 0;
        });
        return command;
    }

    private static string FormatRemaining(TimeSpan budget, double wallSeconds) =>
        string.Create(CultureInfo.InvariantCulture, $"{Math.Max(0, budget.TotalSeconds - wallSeconds):F0} s");

    /// <summary>Every setting the samples depend on, in the order the accumulation file and the sidecar record them.</summary>
    internal static List<KeyValuePair<string, string>> Configuration(SamplerSpec spec, PathTracerOptions options, string lights) =>
    [
        new("generator", spec.Generator),
        new("randomize", spec.RandomizeName),
        new("seed", spec.Seed.ToString(CultureInfo.InvariantCulture)),
        new("planned_spp", spec.Count.ToString(CultureInfo.InvariantCulture)),
        new("hemisphere", options.Hemisphere == HemisphereStrategy.Uniform ? "uniform" : "cosine"),
        new("lights", lights),
        new("max_depth", options.MaxDepth.ToString(CultureInfo.InvariantCulture)),
        new("russian_roulette", options.RussianRoulette ? "true" : "false"),
        // A plug-in's or a point file's points can change under the same name: their identity goes in too.
        .. SamplerCatalog.Find(spec.Generator).Provenance is { } provenance ? [new KeyValuePair<string, string>("generator_provenance", provenance)] : Array.Empty<KeyValuePair<string, string>>(),
    ];

    /// <summary>The one line after SIGINT or SIGTERM: what the stopped render wrote, and what it did not.</summary>
    internal static string InterruptedLine(SessionOutcome result, SampleRange target, string outPath, string sidecar, string? variancePath, string? accumulationPath)
    {
        string wrote = string.Join(", ", new[] { outPath, variancePath, sidecar }.OfType<string>());
        string kept = accumulationPath is null
            ? "no checkpoint was written, so they cannot be resumed (render with --checkpoint FILE for that)"
            : $"the checkpoint {accumulationPath} holds the {result.Done.Count} done; --resume continues from it";
        return string.Create(CultureInfo.InvariantCulture,
            $"pathbench: stopped by {result.Signal ?? "a signal"} after {result.Done.Count} of {target.Count} spp: wrote {wrote} with the {result.Done.Count} spp done; the other {target.Count - result.Done.Count} spp were not rendered and {kept}");
    }

    private static (int Index, int Count) ParseShard(string text)
    {
        string[] parts = text.Split('/');
        if (parts.Length == 2
            && int.TryParse(parts[0], NumberStyles.None, CultureInfo.InvariantCulture, out int i)
            && int.TryParse(parts[1], NumberStyles.None, CultureInfo.InvariantCulture, out int n)
            && n >= 1 && i < n)
        {
            return (i, n);
        }

        throw new CliUsageException($"--shard expects I/N with 0 ≤ I < N, got '{text}'");
    }

    private static Accumulation LoadCheckpoint(string path, RenderIdentity identity, SampleRange target)
    {
        if (!File.Exists(path))
        {
            throw new CliUsageException($"{path}: cannot resume: no such checkpoint");
        }

        Accumulation a = AccumulationFile.Read(path);
        if (identity.FirstDifference(a.Identity) is { } difference)
        {
            throw new CliUsageException($"{path}: cannot resume: the checkpoint is of another render ({difference.Replace(" vs ", " here, ")} in the checkpoint)");
        }

        if (a.Ranges.Count != 1 || a.Ranges[0].First != target.First || a.Ranges[0].End > target.End)
        {
            throw new CliUsageException($"{path}: cannot resume: it holds {string.Join(" ", a.Ranges)}, not a start of this render's range {target}");
        }

        return a;
    }

    internal static string Version =>
        typeof(RenderCommand).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion ?? "unknown";

    private static void RequireWritable(string path)
    {
        string full = Path.GetFullPath(path);
        FileKind kind = FileStatus.Of(full).Kind;
        if (kind is not (FileKind.Regular or FileKind.Missing))
        {
            // Opening a FIFO to test it would wait for a reader; a folder or device cannot be replaced by a file.
            throw new CliUsageException($"{path}: is {FileStatus.Describe(kind)}, not a file to write");
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
}
