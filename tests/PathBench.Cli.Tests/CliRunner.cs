using System.Globalization;

namespace PathBench.Cli.Tests;

/// <summary>Runs the program in-process with captured output.</summary>
internal static class CliRunner
{
    public static (int Code, string Out, string Err) Run(params string[] args)
    {
        using var stdout = new StringWriter(CultureInfo.InvariantCulture);
        using var stderr = new StringWriter(CultureInfo.InvariantCulture);
        int code = CliApp.Run(args, stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }
}
