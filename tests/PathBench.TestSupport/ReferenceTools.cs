using System.Diagnostics;
using System.Globalization;
using System.Text;

namespace PathBench.TestSupport;

/// <summary>
/// Runs the Debian reference tools that the live cross-checks compare against: Debian's own
/// interpreter (/usr/bin/python3, which owns python3-scipy, -skimage, -numpy; the first python3 on
/// PATH may be another one) and the OpenEXR command-line tools. CI installs them (.ci/run); a
/// missing tool is a failure naming the package to install, never a skip, which would hide a
/// broken check. Override the interpreter with PATHBENCH_REFERENCE_PYTHON.
/// </summary>
public static class ReferenceTools
{
    /// <summary>The interpreter of the live cross-checks.</summary>
    public static string Python =>
        Environment.GetEnvironmentVariable("PATHBENCH_REFERENCE_PYTHON") is { Length: > 0 } p ? p : "/usr/bin/python3";

    /// <summary>What a run printed and returned.</summary>
    public sealed record Result(int ExitCode, string Stdout, string Stderr);

    /// <summary>Runs a program (an absolute path or a name under /usr/bin) with <paramref name="stdin"/>, waiting at most <paramref name="timeoutSeconds"/>.</summary>
    public static Result Run(string program, string debianPackage, IEnumerable<string> args, string stdin = "", int timeoutSeconds = 300)
    {
        ArgumentNullException.ThrowIfNull(program);
        ArgumentNullException.ThrowIfNull(args);
        string path = program.StartsWith('/') ? program : Path.Combine("/usr/bin", program);
        if (!File.Exists(path))
        {
            throw new InvalidOperationException($"{path} is missing: install the Debian package '{debianPackage}' (apt-get install {debianPackage}; .ci/run does)");
        }

        var start = new ProcessStartInfo(path)
        {
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            StandardOutputEncoding = Encoding.UTF8,
        };
        foreach (string a in args)
        {
            start.ArgumentList.Add(a);
        }

        using Process process = Process.Start(start) ?? throw new InvalidOperationException($"could not start {path}");
        Task<string> stdout = process.StandardOutput.ReadToEndAsync();
        Task<string> stderr = process.StandardError.ReadToEndAsync();
        process.StandardInput.Write(stdin);
        process.StandardInput.Close();
        if (!process.WaitForExit(timeoutSeconds * 1000))
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{path} did not finish within {timeoutSeconds} s");
        }

        process.WaitForExit();
        return new Result(process.ExitCode, stdout.Result, stderr.Result);
    }

    /// <summary>Runs Python code under <see cref="Python"/> and returns its standard output; a non-zero exit is an exception with its stderr.</summary>
    public static string RunPython(string code, string stdin = "", int timeoutSeconds = 300)
    {
        Result r = Run(Python, "python3", ["-c", code], stdin, timeoutSeconds);
        return r.ExitCode == 0 ? r.Stdout : throw new InvalidOperationException($"{Python} failed ({r.ExitCode}): {r.Stderr}");
    }

    /// <summary>Parses whitespace-separated numbers written by Python's repr (which round-trips doubles).</summary>
    public static double[] ParseNumbers(string text) =>
        (text ?? throw new ArgumentNullException(nameof(text)))
            .Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries)
            .Select(t => double.Parse(t, NumberStyles.Float, CultureInfo.InvariantCulture)).ToArray();

    /// <summary>Formats doubles so Python reads back the same values.</summary>
    public static string FormatNumbers(IEnumerable<double> values) =>
        string.Join(' ', values.Select(v => v.ToString("R", CultureInfo.InvariantCulture)));
}
