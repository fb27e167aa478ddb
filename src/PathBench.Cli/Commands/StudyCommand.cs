using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using System.Reflection;
using PathBench.Analysis;
using PathBench.Io;
using PathBench.Rendering.Scenes;
using Spectre.Console;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench study STUDY.yaml</c> runs a study file; <c>pathbench demo</c> runs the built-in one
/// (<c>scenes/fence-yard.study.yaml</c> on <c>scenes/fence-yard.yaml</c>, both compiled into the
/// program and written beside the outputs so the user can edit and rerun them).
/// </summary>
internal static class StudyCommand
{
    private const string DemoStudyResource = "PathBench.Cli.Demo.fence-yard.study.yaml";
    private const string DemoSceneResource = "PathBench.Cli.Demo.fence-yard.yaml";

    public static Command CreateStudy(CliIo io)
    {
        var file = new Argument<string>("study") { Description = "Study file (YAML; see scenes/studies.md)" };
        var (output, threads, quiet) = CommonOptions("DIR (default: STUDY-NAME next to the study file)");
        var command = new Command("study", "Compare configurations on a scene: replicates, MSE with intervals, slopes, equal time, win map, plots");
        command.Arguments.Add(file);
        command.Options.Add(output);
        command.Options.Add(threads);
        command.Options.Add(quiet);
        command.SetAction(parse =>
        {
            string path = parse.GetValue(file)!;
            StudyDefinition study = StudyFile.Load(path);
            string dir = parse.GetValue(output) ?? Path.Combine(Path.GetDirectoryName(Path.GetFullPath(path)) ?? ".", Path.GetFileNameWithoutExtension(path));
            return Run(io, study, dir, parse.GetValue(threads), parse.GetValue(quiet));
        });
        return command;
    }

    public static Command CreateDemo(CliIo io)
    {
        var (output, threads, quiet) = CommonOptions("DIR (default: pathbench-demo here)");
        var command = new Command("demo", "Run the built-in study (four configurations on the fence-yard scene, about two minutes on two cores)");
        command.Options.Add(output);
        command.Options.Add(threads);
        command.Options.Add(quiet);
        command.SetAction(parse =>
        {
            string dir = parse.GetValue(output) ?? "pathbench-demo";
            ImageIo.Guard(dir, () => Directory.CreateDirectory(dir));
            string studyPath = Path.Combine(dir, "fence-yard.study.yaml");
            ImageIo.Guard(studyPath, () =>
            {
                AtomicFile.WriteText(studyPath, Resource(DemoStudyResource));
                AtomicFile.WriteText(Path.Combine(dir, "fence-yard.yaml"), Resource(DemoSceneResource));
            });
            StudyDefinition study = StudyFile.Load(studyPath);
            return Run(io, study, dir, parse.GetValue(threads), parse.GetValue(quiet));
        });
        return command;
    }

    public static Command CreateReport(CliIo io)
    {
        var dir = new Argument<string>("dir") { Description = "A study's output folder (with summary.json, the plots and images/)" };
        var command = new Command("report", "Rebuild a study's report.html from its outputs, without rendering");
        command.Arguments.Add(dir);
        command.SetAction(parse =>
        {
            string path = Analysis.Report.StudyReport.Write(parse.GetValue(dir)!);
            io.Out.WriteLine(Inv($"{path}: {new FileInfo(path).Length / 1024.0:F0} KiB"));
            return 0;
        });
        return command;
    }

    private static (Option<string?> Output, Option<int?> Threads, Option<bool> Quiet) CommonOptions(string outputDescription) =>
        (new Option<string?>("--out") { Description = "Output folder " + outputDescription + "; renders are cached in DIR/cache so a rerun resumes" },
         new Option<int?>("--threads") { Description = "Worker threads per render (default: the study's 'threads', else every core)" },
         new Option<bool>("--quiet") { Description = "Print only the results table" });

    private static string Resource(string name)
    {
        using Stream stream = typeof(StudyCommand).Assembly.GetManifestResourceStream(name)
            ?? throw new InvalidOperationException($"the program lacks its built-in resource {name}");
        using var reader = new StreamReader(stream);
        return reader.ReadToEnd();
    }

    private static int Run(CliIo io, StudyDefinition study, string dir, int? threads, bool quiet)
    {
        if (threads is { } t)
        {
            SamplerOptions.RequireAtLeast("--threads", t, 1);
        }

        if (File.Exists(dir))
        {
            throw new CliUsageException($"--out {dir}: is a file, not a folder");
        }

        var options = new StudyRunOptions(dir, threads, RenderCommand.Version);
        StudyOutcome outcome = WithProgress(io, quiet, progress => StudyPipeline.Run(study, options, progress));
        PrintTable(io.Out, outcome);
        return 0;
    }

    private static StudyOutcome WithProgress(CliIo io, bool quiet, Func<IStudyProgress?, StudyOutcome> run)
    {
        if (quiet)
        {
            return run(null);
        }

        if (Console.IsErrorRedirected || !ReferenceEquals(io.Error, Console.Error))
        {
            return run(new PlainProgress(io.Error));
        }

        IAnsiConsole console = AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Error) });
        StudyOutcome? outcome = null;
        console.Progress()
            .Columns(new TaskDescriptionColumn(), new ProgressBarColumn(), new PercentageColumn(), new ElapsedTimeColumn(), new RemainingTimeColumn())
            .Start(ctx => outcome = run(new SpectreProgress(ctx)));
        return outcome!;
    }

    private static void PrintTable(TextWriter o, StudyOutcome outcome)
    {
        StudySummary s = outcome.Summary;
        int largest = s.Result.Study.Spp[^1];
        var rows = new List<string[]>
        {
            new[] { "configuration", "slope [95% CI]", "theory", $"MSE @{largest}spp", "relMSE", "efficiency", "MSE @equal time", "rank", "wins", "structure" },
        };
        for (int i = 0; i < s.Configurations.Count; i++)
        {
            ConfigurationSummary c = s.Configurations[i];
            StudyPoint last = c.Points[^1];
            EqualTimeEntry et = s.EqualTime.Entries[i];
            rows.Add(
            [
                c.Configuration.Name,
                c.Slope is not { } f ? "-"
                    : double.IsFinite(f.SlopeLow) && double.IsFinite(f.SlopeHigh) ? Inv($"{f.Slope:F2} [{f.SlopeLow:F2}, {f.SlopeHigh:F2}]")
                    : Inv($"{f.Slope:F2} [no CI from {c.Points.Count} spp]"), // a line through two points has no residual to estimate its spread
                Theory(c.Theory),
                Inv($"{last.Mse:G3}"),
                Inv($"{last.RelMse:G3}"),
                last.Efficiency is { } e ? Inv($"{e:G3}") : "-",
                et.Mse is { } m ? Inv($"{m:G3}{(et.Extrapolated ? "*" : "")}") : "-",
                et.Rank?.ToString(CultureInfo.InvariantCulture) ?? "-",
                Inv($"{100 * s.WinMap.WinFractions[i]:F0}%"),
                c.Structure is { } st ? Inv($"{st.Score:F1}") : "-",
            ]);
        }

        int[] widths = [.. Enumerable.Range(0, rows[0].Length).Select(col => rows.Max(r => r[col].Length))];
        foreach (string[] row in rows)
        {
            o.WriteLine(string.Join("  ", row.Select((cell, col) => col == 0 ? cell.PadRight(widths[col]) : cell.PadLeft(widths[col]))).TrimEnd());
        }

        o.WriteLine(Inv($"equal time: {s.EqualTime.Seconds:G3} s per image; * = outside the measured times. wins: tiles won at equal time ({100 * s.WinMap.NoDifferenceFraction:F0}% no significant difference). structure: -log10 p of white noise (above 3 is structured). theory: published MSE slopes for smooth / discontinuous integrands (sources in summary.json)."));
        foreach (string warning in s.Warnings)
        {
            o.WriteLine("warning: " + warning);
        }

        string dir = Path.GetDirectoryName(outcome.Files[^1]) ?? ".";
        o.WriteLine(Inv($"{outcome.Files.Count} files in {dir}: open {Path.Combine(dir, "report.html")} in a browser; numbers in summary.json and results.csv; {outcome.CachedRenders} renders from the cache"));
    }

    /// <summary>The published MSE exponents, smooth / with discontinuities, e.g. "-2 / -1.5".</summary>
    private static string Theory(TheoryRate t) =>
        t.Smooth is null && t.Discontinuous is null ? "-" : Inv($"{t.Smooth?.ToString("G3", CultureInfo.InvariantCulture) ?? "?"} / {t.Discontinuous?.ToString("G3", CultureInfo.InvariantCulture) ?? "?"}");

    private static string Inv(FormattableString s) => s.ToString(CultureInfo.InvariantCulture);

    /// <summary>One line per render on a redirected stream, with an estimate of the time left.</summary>
    private sealed class PlainProgress(TextWriter error) : IStudyProgress
    {
        private readonly Stopwatch _clock = Stopwatch.StartNew();
        private int _rendered;

        public void Phase(string what) => error.WriteLine("pathbench: " + what);

        public void Render(int done, int total, string what, bool cached)
        {
            if (!cached)
            {
                _rendered++;
            }

            // Time per fresh render so far, times what is left (cached renders cost nothing).
            double left = _rendered == 0 ? 0 : _clock.Elapsed.TotalSeconds / _rendered * (total - done);
            error.WriteLine(Inv($"[{done}/{total}] {what}{(cached ? " (cached)" : "")}, about {left:F0} s left"));
        }
    }

    private sealed class SpectreProgress(ProgressContext context) : IStudyProgress
    {
        private ProgressTask? _task;

        public void Phase(string what)
        {
            _task?.StopTask();
            _task = context.AddTask(Markup.Escape(what), maxValue: 1);
        }

        public void Render(int done, int total, string what, bool cached)
        {
            if (_task is null)
            {
                return;
            }

            _task.MaxValue = total;
            _task.Value = done;
            _task.Description = Markup.Escape(what + (cached ? " (cached)" : ""));
        }
    }
}
