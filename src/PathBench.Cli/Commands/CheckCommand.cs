using System.CommandLine;
using PathBench.Analysis.Checks;
using PathBench.Io;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench check SUITE.yaml</c>: statistical verdicts on replicate images (ours, files, or the
/// user's renderer) with exit 0 when every assertion holds and 1 when one fails; <c>pathbench
/// baseline SUITE.yaml --out FILE</c> records the figures a later check compares against.
/// </summary>
internal static class CheckCommand
{
    /// <summary>Exit code when an assertion fails (or a case cannot produce its images).</summary>
    public const int FailedExitCode = 1;

    public static Command CreateCheck(CliIo io)
    {
        var suite = new Argument<string>("suite") { Description = "Check suite (YAML; see scenes/checks.md)" };
        var junit = new Option<string?>("--junit") { Description = "Write JUnit XML here (one test case per assertion)" };
        var json = new Option<string?>("--json") { Description = "Write the verdicts as JSON here" };
        var baseline = new Option<string?>("--baseline") { Description = "A baseline from 'pathbench baseline', for 'mse_at_most: { baseline: FACTOR }'" };
        (Option<string?> work, Option<int?> threads) = Common();
        var command = new Command("check", "Statistical regression checks of a renderer's sampling code: bias, MSE, slope, structure, SSIM, non-finite values");
        command.Arguments.Add(suite);
        foreach (Option o in new Option[] { junit, json, baseline, work, threads })
        {
            command.Options.Add(o);
        }

        command.SetAction(parse =>
        {
            string path = parse.GetValue(suite)!;
            CheckSuite s = CheckSuiteFile.Load(path);
            IReadOnlyDictionary<string, CaseFigures>? figures = parse.GetValue(baseline) is { } b ? CheckRun.ReadBaseline(b) : null;
            CheckResult result = Run(io, s, path, parse.GetValue(work), parse.GetValue(threads), figures);
            CheckRun.WriteTable(io.Out, result);
            if (parse.GetValue(junit) is { } j)
            {
                ImageIo.Guard(j, () => AtomicFile.Write(j, stream => CheckRun.WriteJUnit(stream, result)));
            }

            if (parse.GetValue(json) is { } js)
            {
                ImageIo.Guard(js, () => AtomicFile.Write(js, stream => CheckRun.WriteJson(stream, result)));
            }

            return result.Passed ? 0 : FailedExitCode;
        });
        return command;
    }

    public static Command CreateBaseline(CliIo io)
    {
        var suite = new Argument<string>("suite") { Description = "Check suite (YAML; see scenes/checks.md)" };
        var output = new Option<string>("--out") { Description = "The baseline file to write (JSON)", Required = true };
        (Option<string?> work, Option<int?> threads) = Common();
        var command = new Command("baseline", "Run a suite's cases and record their MSE, spread and slope for later checks");
        command.Arguments.Add(suite);
        command.Options.Add(output);
        command.Options.Add(work);
        command.Options.Add(threads);
        command.SetAction(parse =>
        {
            string path = parse.GetValue(suite)!;
            CheckSuite s = CheckSuiteFile.Load(path);
            // A baseline records figures; assertions against a baseline cannot be decided while making one.
            var plain = s with { Cases = [.. s.Cases.Select(c => c with { Assertions = [.. c.Assertions.Where(a => !a.AgainstBaseline)] })] };
            CheckResult result = Run(io, plain, path, parse.GetValue(work), parse.GetValue(threads), null);
            string outPath = parse.GetValue(output)!;
            ImageIo.Guard(outPath, () => AtomicFile.Write(outPath, stream => CheckRun.WriteBaseline(stream, result, RenderCommand.Version)));
            io.Out.WriteLine($"{outPath}: figures of {result.Figures.Count} of {s.Cases.Count} cases");
            foreach (Verdict v in result.Verdicts.Where(v => double.IsNaN(v.Measured)).DistinctBy(v => v.Case))
            {
                io.Error.WriteLine($"pathbench: case '{v.Case}' has no figures: {v.Detail}");
            }

            return result.Figures.Count == s.Cases.Count ? 0 : FailedExitCode;
        });
        return command;
    }

    private static (Option<string?> Work, Option<int?> Threads) Common() =>
        (new Option<string?>("--work") { Description = "Folder for renders, command outputs and logs (default: SUITE-NAME.check next to the suite)" },
         new Option<int?>("--threads") { Description = "Worker threads per render (default: every core)" });

    private static CheckResult Run(CliIo io, CheckSuite suite, string path, string? work, int? threads, IReadOnlyDictionary<string, CaseFigures>? baseline)
    {
        if (threads is { } t)
        {
            SamplerOptions.RequireAtLeast("--threads", t, 1);
        }

        string dir = work ?? Path.Combine(Path.GetDirectoryName(Path.GetFullPath(path)) ?? ".", Path.GetFileNameWithoutExtension(path) + ".check");
        ImageIo.Guard(dir, () => Directory.CreateDirectory(dir));
        try
        {
            return CheckRun.Run(suite, dir, threads ?? Environment.ProcessorCount, baseline, line => io.Error.WriteLine("pathbench: " + line));
        }
        catch (InvalidOperationException e)
        {
            throw new CliUsageException(e.Message, e);
        }
    }
}
