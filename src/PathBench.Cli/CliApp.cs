using System.CommandLine;
using PathBench.Cli.Commands;
using PathBench.Imaging;
using PathBench.Io;
using PathBench.Rendering.Accumulation;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;

namespace PathBench.Cli;

/// <summary>
/// Builds the command tree and runs it against the given writers, so tests can drive the
/// whole program in-process. Exit codes: 0 success, 1 a measured check failed or an
/// unexpected internal error, 2 bad arguments or bad input (one line on stderr, no stack trace).
/// </summary>
public static class CliApp
{
    /// <summary>Exit code for bad arguments or unreadable input.</summary>
    public const int UsageExitCode = 2;

    /// <summary>The global option that loads a generator plug-in.</summary>
    public const string PluginOptionName = "--plugin";

    /// <summary>Exit code for an unexpected internal error.</summary>
    public const int InternalErrorExitCode = 1;

    /// <summary>Runs <paramref name="args"/> and returns the exit code.</summary>
    public static int Run(string[] args, TextWriter stdout, TextWriter stderr)
    {
        ArgumentNullException.ThrowIfNull(args);
        var io = new CliIo(stdout, stderr);
        RootCommand root = BuildRoot(io);
        Option<string[]> plugins = root.Options.OfType<Option<string[]>>().Single(o => o.Name == PluginOptionName);
        ParseResult parse = root.Parse(args);
        if (parse.Errors.Count > 0)
        {
            // One line: the parser's messages may span lines (lists of allowed values).
            string message = string.Join("; ", parse.Errors.Select(e => string.Join(" ", e.Message.Split(['\n', '\r', '\t'], StringSplitOptions.RemoveEmptyEntries))));
            stderr.WriteLine($"pathbench: error: {message} (see 'pathbench --help')");
            return UsageExitCode;
        }

        try
        {
            // Every invocation sets its budget (the default when the option is absent), so an
            // earlier in-process run never leaks its budget into the next.
            MemoryBudget.Current = MaxMemory(parse.GetValue(MaxMemoryOption));
            if (SamplerLanes.CheckVariable() is { } lanes)
            {
                throw new CliUsageException(lanes);
            }

            // Plug-ins are seen by this invocation only (the catalog's scope ends with it), and only
            // when named: nothing is loaded from a folder or a setting behind the user's back.
            using IDisposable scope = SamplerCatalog.OpenScope();
            foreach (string plugin in (parse.GetValue(plugins) ?? []).DistinctBy(Path.GetFullPath))
            {
                GeneratorPlugins.Load(plugin);
            }

            return parse.Invoke(new InvocationConfiguration { Output = stdout, Error = stderr, EnableDefaultExceptionHandler = false });
        }
        catch (Exception caught) when (caught is not OutOfMemoryException)
        {
            // A worker thread's exception arrives wrapped by its parallel loop: the one inside is what happened.
            Exception e = Unwrap(caught);
            switch (e)
            {
                case CliUsageException:
                case SamplerSpecException or SceneException or ImageFileException or AccumulationFileException or MemoryBudgetException or OutputPathException:
                    // The libraries' bad-input exceptions already carry the one line to print
                    // (file, position, what was wrong); mapped to exit 2 here, once, for every command.
                    stderr.WriteLine($"pathbench: error: {e.Message.ReplaceLineEndings(" ")}");
                    return UsageExitCode;
                case OutOfMemoryException:
                    throw;
            }

            string what = $"{e.GetType().Name}: {e.Message.ReplaceLineEndings(" ")}";
            if (GeneratorPlugins.Culprit(e) is { } plugin)
            {
                // Thrown in a plug-in's code (or in what it called): the plug-in and its method are
                // the place to look, not PathBench. Exit 1: the command did not complete.
                stderr.WriteLine($"pathbench: error: plug-in {plugin.Path}: {plugin.Method} threw {what}");
                return InternalErrorExitCode;
            }

            // A bug or an input no check foresaw: say so in one line (the type names the place
            // to look) and exit 1; nothing is written as if it had worked.
            stderr.WriteLine($"pathbench: internal error: {what}");
            return InternalErrorExitCode;
        }
    }

    /// <summary>
    /// The exception inside the wrappers of parallel loops and reflection calls. When several workers
    /// failed, the first one's (the others usually failed the same way; one line says one thing).
    /// </summary>
    internal static Exception Unwrap(Exception e)
    {
        while (true)
        {
            switch (e)
            {
                case AggregateException a when a.InnerExceptions.Count > 0:
                    e = a.InnerExceptions[0];
                    break;
                case System.Reflection.TargetInvocationException { InnerException: { } inner }:
                    e = inner;
                    break;
                default:
                    return e;
            }
        }
    }

    /// <summary>The global <c>--max-memory</c>: the memory budget every command checks its declared sizes against.</summary>
    internal static Option<string?> MaxMemoryOption { get; } = new("--max-memory")
    {
        Description = "Memory budget for any command, e.g. 512M, 4G (default 2G): inputs and outputs whose declared size needs more are refused before anything is allocated",
        Recursive = true,
    };

    /// <summary>The root command with every subcommand registered.</summary>
    internal static RootCommand BuildRoot(CliIo io)
    {
        var root = new RootCommand(
            "PathBench: sample generators, randomizations and measurements for the sampling code of physically based renderers.");
        root.Options.Add(MaxMemoryOption);
        root.Options.Add(new Option<string[]>(PluginOptionName)
        {
            Description = "Load sample generators from a .NET assembly implementing PathBench.Sampling.Generators.IGeneratorPlugin (repeatable; see README, 'Bring your own sampler')",
            Recursive = true,
            Arity = ArgumentArity.OneOrMore,
        });
        root.Subcommands.Add(SamplersCommand.Create(io));
        root.Subcommands.Add(PointsCommand.Create(io));
        root.Subcommands.Add(PointStatsCommand.Create(io));
        root.Subcommands.Add(IntegrandsCommand.Create(io));
        root.Subcommands.Add(RenderCommand.Create(io));
        root.Subcommands.Add(RenderCommand.CreateReference(io));
        root.Subcommands.Add(MergeCommand.Create(io));
        root.Subcommands.Add(BatchCommand.Create(io));
        root.Subcommands.Add(StudyCommand.CreateStudy(io));
        root.Subcommands.Add(StudyCommand.CreateDemo(io));
        root.Subcommands.Add(StudyCommand.CreateReport(io));
        root.Subcommands.Add(CheckCommand.CreateCheck(io));
        root.Subcommands.Add(CheckCommand.CreateBaseline(io));
        root.Subcommands.Add(SelfTestCommand.Create(io));
        root.Subcommands.Add(CompareCommand.Create(io));
        root.Subcommands.Add(ConvertCommand.Create(io));
        root.Subcommands.Add(BenchCommand.Create(io));
        return root;
    }

    private static MemoryBudget MaxMemory(string? text)
    {
        if (text is null)
        {
            return MemoryBudget.Default;
        }

        try
        {
            return MemoryBudget.Parse(text);
        }
        catch (FormatException e)
        {
            throw new CliUsageException($"--max-memory: {e.Message}", e);
        }
    }
}

/// <summary>The writers a command prints to.</summary>
public sealed record CliIo(TextWriter Out, TextWriter Error);

/// <summary>Bad arguments or bad input: reported as one line with exit code 2.</summary>
public sealed class CliUsageException : Exception
{
    /// <summary>Creates the exception with the line to print.</summary>
    public CliUsageException(string message) : base(message) { }

    /// <summary>Creates the exception with the line to print and its cause.</summary>
    public CliUsageException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates an empty exception.</summary>
    public CliUsageException() { }
}
