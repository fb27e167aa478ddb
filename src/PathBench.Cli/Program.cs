using System.Globalization;
using PathBench.Cli.Commands;

namespace PathBench.Cli;

/// <summary>Entry point of the <c>pathbench</c> executable.</summary>
public static class Program
{
    /// <summary>
    /// Test hook: when set to a file path, the process writes its own peak resident set (Linux
    /// <c>VmHWM</c> from <c>/proc/self/status</c>, in bytes) there when it ends, so tests can state
    /// the memory a command really took.
    /// </summary>
    public const string PeakMemoryVariable = "PATHBENCH_TEST_PEAK_MEMORY_FILE";

    /// <summary>Runs the command line and returns the process exit code.</summary>
    public static int Main(string[] args)
    {
        int code = CliApp.Run(args, Console.Out, Console.Error);
        if (Environment.GetEnvironmentVariable(PeakMemoryVariable) is { Length: > 0 } file && PeakResidentBytes() is { } peak)
        {
            PathBench.Io.AtomicFile.WriteText(file, peak.ToString(CultureInfo.InvariantCulture));
        }

        return code;
    }

    /// <summary>VmHWM of this process in bytes, or null where /proc does not give it.</summary>
    private static long? PeakResidentBytes()
    {
        try
        {
            foreach (string line in File.ReadLines("/proc/self/status"))
            {
                // "VmHWM:    123456 kB" (proc(5)).
                if (line.StartsWith("VmHWM:", StringComparison.Ordinal))
                {
                    string[] parts = line.Split(' ', StringSplitOptions.RemoveEmptyEntries);
                    return long.Parse(parts[1], CultureInfo.InvariantCulture) * 1024;
                }
            }
        }
        catch (IOException)
        {
        }

        return null;
    }
}
