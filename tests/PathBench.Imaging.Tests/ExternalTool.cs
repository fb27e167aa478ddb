using System.Diagnostics;

namespace PathBench.Imaging.Tests;

/// <summary>
/// Runs the Debian reference tools the live cross-checks need (/usr/bin/python3 with
/// python3-numpy and python3-skimage; exrheader and the other OpenEXR tools from the openexr
/// package). A missing tool fails the test with the package to install: CI installs them, so a
/// skip would hide a broken check.
/// </summary>
internal static class ExternalTool
{
    /// <summary>Debian's own interpreter; the first python3 on PATH may be another one without skimage.</summary>
    public const string Python = "/usr/bin/python3";

    /// <summary>The result of a run.</summary>
    public sealed record Result(int ExitCode, string Stdout, string Stderr);

    /// <summary>Runs a program (absolute path or a name under /usr/bin) and waits at most <paramref name="timeoutSeconds"/>.</summary>
    public static Result Run(string program, string debianPackage, IEnumerable<string> args, int timeoutSeconds = 60)
    {
        string path = program.StartsWith('/') ? program : Path.Combine("/usr/bin", program);
        Assert.True(File.Exists(path), $"{path} is missing: install the Debian package '{debianPackage}' (apt-get install {debianPackage})");
        var start = new ProcessStartInfo(path)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
        };
        foreach (string a in args)
        {
            start.ArgumentList.Add(a);
        }

        using var process = Process.Start(start) ?? throw new InvalidOperationException($"could not start {path}");
        Task<string> stdout = process.StandardOutput.ReadToEndAsync();
        Task<string> stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(timeoutSeconds * 1000))
        {
            process.Kill(entireProcessTree: true);
            Assert.Fail($"{path} did not finish within {timeoutSeconds} s");
        }

        process.WaitForExit();
        return new Result(process.ExitCode, stdout.Result, stderr.Result);
    }

    /// <summary>Runs a Python script from the tools folder copied beside the tests, checking the modules first.</summary>
    public static Result RunPythonScript(string script, params string[] args)
    {
        string path = Path.Combine(AppContext.BaseDirectory, "tools", script);
        Assert.True(File.Exists(path), $"{path} is missing from the test output");
        Result probe = Run(Python, "python3", ["-c", "import numpy, skimage, scipy"]);
        Assert.True(
            probe.ExitCode == 0,
            $"{Python} cannot import numpy/skimage/scipy: install the Debian packages python3-numpy python3-skimage python3-scipy ({probe.Stderr.Trim()})");
        Result result = Run(Python, "python3", [path, .. args], timeoutSeconds: 120);
        Assert.True(result.ExitCode == 0, $"{script} failed (exit {result.ExitCode}): {result.Stderr}");
        return result;
    }
}

/// <summary>A temporary folder deleted on dispose.</summary>
internal sealed class TempDir : IDisposable
{
    public TempDir()
    {
        Path = System.IO.Path.Combine(System.IO.Path.GetTempPath(), "pathbench-imaging-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(Path);
    }

    public string Path { get; }

    public string File(string name) => System.IO.Path.Combine(Path, name);

    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless; the test result is what matters.
        }
    }
}
