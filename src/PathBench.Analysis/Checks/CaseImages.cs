using System.Diagnostics;
using System.Globalization;
using PathBench.Imaging;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Rendering.Scenes;

namespace PathBench.Analysis.Checks;

/// <summary>What a case's replicates measured, per spp: their errors and per-pixel sums; the images at the largest spp.</summary>
/// <param name="Reference">The reference they were measured against.</param>
/// <param name="Errors">Per spp, each replicate's error.</param>
/// <param name="Moments">Per spp, the replicates' per-pixel sums.</param>
/// <param name="Final">Each replicate's image at the largest spp.</param>
/// <param name="NonFinite">Non-finite samples (our renders) or pixel values (images) over every replicate.</param>
public sealed record CaseMeasurements(
    ReferenceImage Reference,
    IReadOnlyDictionary<int, IReadOnlyList<ReplicateError>> Errors,
    IReadOnlyDictionary<int, PixelMoments> Moments,
    IReadOnlyList<float[]> Final,
    long NonFinite);

/// <summary>A case that could not produce its images: the command failed, an output is missing, a file is unreadable.</summary>
public sealed class CaseFailedException : Exception
{
    /// <summary>Creates the exception.</summary>
    public CaseFailedException(string message) : base(message) { }

    /// <summary>Creates the exception with its cause.</summary>
    public CaseFailedException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates the exception.</summary>
    public CaseFailedException() { }
}

/// <summary>Produces a case's replicate images (rendering, reading or running the user's renderer) and measures them.</summary>
public static class CaseImages
{
    /// <summary>Measures one case; <paramref name="workDirectory"/> holds its command outputs and logs.</summary>
    /// <exception cref="CaseFailedException">The case's images could not be produced or read (a failure of the case, reported as such).</exception>
    /// <exception cref="SceneException">The case's scene or reference does not fit (bad input).</exception>
    public static CaseMeasurements Measure(CheckCase c, string workDirectory, int threads, Action<string>? log = null)
    {
        ArgumentNullException.ThrowIfNull(c);
        return c.Source switch
        {
            RenderSource r => Render(c, r, workDirectory, threads),
            ImagesSource i => FromFiles(c, ReadReference(c, i.Location, i.Files.Values.Max(f => f.Count)), spp => i.Files[spp]),
            CommandSource cmd => Run(c, cmd, workDirectory, log),
            _ => throw new InvalidOperationException("unknown case source"),
        };
    }

    /// <summary>
    /// Refuses, before any case runs, a render case whose replicates would need more than the memory
    /// budget (its scene's resolution is declared); a case of files or of a command is checked when its
    /// reference's header is read, before any replicate is read or run.
    /// </summary>
    /// <exception cref="SceneException">The case's scene does not load or its estimate is above the budget.</exception>
    public static void RequireMemory(CheckCase c)
    {
        ArgumentNullException.ThrowIfNull(c);
        if (c.Source is RenderSource r)
        {
            StudyPipeline.LoadScene(AsStudy(c, r, 1), $"case '{c.Name}'");
        }
    }

    private static StudyDefinition AsStudy(CheckCase c, RenderSource r, int threads) =>
        new(c.Location, r.ScenePath, c.Reference, c.Spp, c.Seeds.Count, 0, [r.Configuration with { Name = c.Name }])
        {
            Resolution = r.Resolution,
            Threads = threads,
            Seeds = c.Seeds,
        };

    private static CaseMeasurements Render(CheckCase c, RenderSource r, string workDirectory, int threads)
    {
        StudyDefinition study = AsStudy(c, r, threads);
        SceneDescription description = StudyPipeline.LoadScene(study, $"case '{c.Name}'");
        var cache = new StudyCache(Path.Combine(workDirectory, "cache"));
        var runner = new StudyRunner(study, new StudyEnvironment(Scene.Build(description), description.Sha256, description.Render.MaxDepth, threads, cache));
        ReferenceImage reference = c.Reference.Path is { } path
            ? StudyPipeline.ReadReference(study, description, path)
            : runner.RenderReference(c.Reference.Spp!.Value, c.Reference.Generator, c.Reference.Randomize);
        StudyResult result = runner.Run(reference);
        var errors = c.Spp.ToDictionary(n => n, n => (IReadOnlyList<ReplicateError>)[.. result.Samples.Where(s => s.Spp == n).Select(s => s.Error)]);
        var moments = c.Spp.ToDictionary(n => n, n => result.Moments[(c.Name, n)]);
        long nonFinite = result.Samples.Where(s => s.Spp == c.Spp[^1]).Sum(s => s.NonFiniteSamples);
        return new CaseMeasurements(reference, errors, moments, result.FinalImages[c.Name], nonFinite);
    }

    /// <summary>
    /// Reads the case's reference, its header checked against the budget with what measuring
    /// <paramref name="replicates"/> images of that size at each spp holds: per spp the replicates'
    /// per-pixel sums (<see cref="PixelMoments"/>, two doubles per value), each replicate's image at the
    /// largest spp and the one being read (three floats a pixel each).
    /// </summary>
    private static ReferenceImage ReadReference(CheckCase c, string location, int replicates)
    {
        string path = c.Reference.Path!;
        if (!File.Exists(path))
        {
            throw new SceneException($"{location}: the reference {path} does not exist");
        }

        long perPixel = (c.Spp.Count * 3L * 2 * sizeof(double)) + ((replicates + 1L) * ImageLimits.DecodedBytesPerPixel);
        return ReferenceImage.Read(path, c.Reference.Spp, perPixel, $"and measuring case '{c.Name}' ({c.Spp.Count} sample counts, {replicates} replicates)");
    }

    /// <summary>Reads every replicate file, checks its size against the reference, and measures it.</summary>
    private static CaseMeasurements FromFiles(CheckCase c, ReferenceImage reference, Func<int, IReadOnlyList<string>> files)
    {
        var errors = new Dictionary<int, IReadOnlyList<ReplicateError>>();
        var moments = new Dictionary<int, PixelMoments>();
        var final = new List<float[]>();
        long nonFinite = 0;
        foreach (int spp in c.Spp)
        {
            var list = new List<ReplicateError>();
            var m = new PixelMoments(reference.Value.Length);
            foreach (string file in files(spp))
            {
                RgbImage image;
                try
                {
                    image = ImageFile.Read(file).Image;
                }
                catch (ImageFileException e)
                {
                    throw new CaseFailedException(e.Message, e);
                }

                if (image.Width != reference.Width || image.Height != reference.Height)
                {
                    throw new CaseFailedException(FormattableString.Invariant($"{file}: is {image.Width}x{image.Height}, the reference {reference.Width}x{reference.Height}"));
                }

                // A non-finite value is counted, never averaged in: it makes the case's numbers NaN,
                // so every numeric assertion fails, and nonfinite_at_most reports how many there were.
                long bad = image.Data.LongCount(v => !float.IsFinite(v));
                nonFinite += bad;
                list.Add(ReplicateError.Measure(image.Data, reference));
                m.Add(image.Data);
                if (spp == c.Spp[^1])
                {
                    final.Add(image.Data);
                }
            }

            errors[spp] = list;
            moments[spp] = m;
        }

        return new CaseMeasurements(reference, errors, moments, final, nonFinite);
    }

    private static CaseMeasurements Run(CheckCase c, CommandSource cmd, string workDirectory, Action<string>? log)
    {
        // Read first: a reference that is missing or too large for the budget stops the case before the user's renderer runs.
        ReferenceImage reference = ReadReference(c, c.Location, c.Seeds.Count);
        string folder = Path.Combine(workDirectory, c.Name);
        Directory.CreateDirectory(folder);
        var outputs = new Dictionary<int, IReadOnlyList<string>>();
        foreach (int spp in c.Spp)
        {
            var files = new List<string>();
            for (int k = 0; k < c.Seeds.Count; k++)
            {
                string stem = string.Create(CultureInfo.InvariantCulture, $"spp{spp}-seed{c.Seeds[k]}");
                string output = Path.Combine(folder, stem + "." + cmd.OutputFormat);
                File.Delete(output); // a stale file from an earlier run must not pass for this one
                var values = new Dictionary<string, string>
                {
                    ["{seed}"] = c.Seeds[k].ToString(CultureInfo.InvariantCulture),
                    ["{spp}"] = spp.ToString(CultureInfo.InvariantCulture),
                    ["{out}"] = output,
                    ["{replicate}"] = (k + 1).ToString(CultureInfo.InvariantCulture),
                };
                RunOnce(cmd, values, Path.Combine(folder, stem + ".log"), c.Name);
                if (!File.Exists(output))
                {
                    throw new CaseFailedException($"case '{c.Name}': the command finished but wrote no {output} (log: {Path.Combine(folder, stem + ".log")})");
                }

                log?.Invoke(string.Create(CultureInfo.InvariantCulture, $"{c.Name}: seed {c.Seeds[k]}, {spp} spp"));
                files.Add(output);
            }

            outputs[spp] = files;
        }

        return FromFiles(c, reference, spp => outputs[spp]);
    }

    private static void RunOnce(CommandSource cmd, Dictionary<string, string> values, string logPath, string caseName)
    {
        var start = new ProcessStartInfo
        {
            WorkingDirectory = cmd.WorkingDirectory,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        string shown;
        if (cmd.Shell)
        {
            start.FileName = "/bin/sh";
            start.ArgumentList.Add("-c");
            shown = CommandLine.ForShell(cmd.Template, values);
            start.ArgumentList.Add(shown);
        }
        else
        {
            List<string> words = CommandLine.Expand(cmd.Template, values);
            start.FileName = words[0];
            foreach (string w in words.Skip(1))
            {
                start.ArgumentList.Add(w);
            }

            shown = string.Join(' ', words);
        }

        using var process = new Process { StartInfo = start };
        try
        {
            process.Start();
        }
        catch (Exception e) when (e is System.ComponentModel.Win32Exception or InvalidOperationException)
        {
            throw new CaseFailedException($"case '{caseName}': cannot start '{start.FileName}': {e.Message}", e);
        }

        Task<string> stdout = process.StandardOutput.ReadToEndAsync();
        Task<string> stderr = process.StandardError.ReadToEndAsync();
        bool finished = process.WaitForExit(TimeSpan.FromSeconds(cmd.TimeoutSeconds));
        if (!finished)
        {
            process.Kill(entireProcessTree: true);
            process.WaitForExit();
        }

        AtomicFile.WriteText(logPath, $"$ {shown}\n--- stdout\n{stdout.Result}\n--- stderr\n{stderr.Result}\n--- exit {(finished ? process.ExitCode.ToString(CultureInfo.InvariantCulture) : "killed after the timeout")}\n");
        if (!finished)
        {
            throw new CaseFailedException(FormattableString.Invariant($"case '{caseName}': the command ran past its timeout of {cmd.TimeoutSeconds} s and was stopped (log: {logPath})"));
        }

        if (process.ExitCode != 0)
        {
            throw new CaseFailedException(FormattableString.Invariant($"case '{caseName}': the command exited with status {process.ExitCode} (log: {logPath})"));
        }
    }
}
