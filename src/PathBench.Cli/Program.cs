using PathBench.Cli.Commands;

namespace PathBench.Cli;

/// <summary>Entry point of the <c>pathbench</c> executable.</summary>
public static class Program
{
    /// <summary>Runs the command line and returns the process exit code.</summary>
    public static int Main(string[] args) => CliApp.Run(args, Console.Out, Console.Error);
}
