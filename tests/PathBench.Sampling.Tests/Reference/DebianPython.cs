using System.Diagnostics;
using System.Globalization;
using System.Text;

namespace PathBench.Sampling.Tests.Reference;

/// <summary>
/// Runs a script under Debian's own interpreter, which is the one whose site-packages hold
/// Debian's python3-scipy (the first python3 on PATH may be another one). CI installs the
/// packages; a missing interpreter or module is a test failure with the reason, not a skip.
/// Override the interpreter with PATHBENCH_REFERENCE_PYTHON.
/// </summary>
internal static class DebianPython
{
    public static string Interpreter =>
        Environment.GetEnvironmentVariable("PATHBENCH_REFERENCE_PYTHON") is { Length: > 0 } p ? p : "/usr/bin/python3";

    /// <summary>Runs <paramref name="script"/> with <paramref name="stdin"/> and returns its standard output.</summary>
    public static string Run(string script, string stdin = "")
    {
        if (!File.Exists(Interpreter))
        {
            throw new InvalidOperationException($"{Interpreter} not found: install Debian's python3 and python3-scipy (see .ci/run)");
        }

        var psi = new ProcessStartInfo(Interpreter, ["-c", script])
        {
            RedirectStandardInput = true,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            StandardOutputEncoding = Encoding.UTF8,
        };
        using Process process = Process.Start(psi) ?? throw new InvalidOperationException($"could not start {Interpreter}");
        Task<string> output = process.StandardOutput.ReadToEndAsync();
        Task<string> error = process.StandardError.ReadToEndAsync();
        process.StandardInput.Write(stdin);
        process.StandardInput.Close();
        if (!process.WaitForExit(120_000))
        {
            process.Kill(true);
            throw new TimeoutException($"{Interpreter} did not finish in 120 s");
        }

        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"{Interpreter} failed ({process.ExitCode}): {error.Result}");
        }

        return output.Result;
    }

    /// <summary>Parses whitespace-separated numbers written by Python's repr (which round-trips doubles).</summary>
    public static double[] Numbers(string text) =>
        text.Split((char[]?)null, StringSplitOptions.RemoveEmptyEntries)
            .Select(t => double.Parse(t, NumberStyles.Float, CultureInfo.InvariantCulture)).ToArray();

    /// <summary>Formats doubles so Python reads back the same values.</summary>
    public static string Format(IEnumerable<double> values) =>
        string.Join(' ', values.Select(v => v.ToString("R", CultureInfo.InvariantCulture)));
}
