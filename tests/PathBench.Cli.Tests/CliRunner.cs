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

    /// <summary>A fresh folder under the system temp folder, deleted on dispose.</summary>
    public sealed class TempFolder : IDisposable
    {
        public TempFolder() => Directory.CreateDirectory(Path);

        public string Path { get; } = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "pathbench-cli-" + Guid.NewGuid().ToString("N"));

        public string File(string name) => System.IO.Path.Combine(Path, name);

        public void Dispose() => Directory.Delete(Path, recursive: true);
    }
}
