using System.Diagnostics;
using System.Globalization;
using System.Security.Cryptography;
using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Columns;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Reports;
using BenchmarkDotNet.Running;
using PathBench.Imaging;

namespace PathBench.Benchmarks;

/// <summary>
/// Decoding a 4096×2160 RGBA HALF OpenEXR file (67.5 MiB of pixels) written by OpenImageIO with
/// each compression, by our reader and by OpenImageIO's own `oiiotool` (Debian openimageio-tools)
/// on the same file in the same run. Both read the file from disk (the page cache after the first
/// iteration) and use every core. `oiiotool FILE -o X.null` decodes every pixel and writes
/// nothing; `oiiotool --info FILE` reads only the header, so the difference of the two is the
/// library's decode without the process start-up, and the MB/s column of the full read is taken
/// over that difference. The pixels are invented test data (tools/imaging/oiio_exr.py's pattern:
/// a gradient with mild noise, flat blocks, HDR stripes, negative lines and tiny values).
/// Run with tools/bench.sh --filter '*ExrDecode*'.
/// </summary>
[Config(typeof(Columns))]
public class ExrDecodeBenchmarks
{
    private const int Width = 4096;
    private const int Height = 2160;

    /// <summary>Decoded bytes: 4 HALF channels.</summary>
    public const double DecodedBytes = Width * Height * 4 * 2.0;

    private string _path = null!;

    /// <summary>The file's compression, as OpenImageIO names it.</summary>
    [Params("piz", "dwaa", "zip")]
    public string Compression { get; set; } = "piz";

    [GlobalSetup]
    public void Setup() => _path = BenchmarkFile(Compression);

    [Benchmark(Description = "PathBench ExrCodec.Read")]
    public float Ours() => ExrCodec.Read(_path).Image.Data[^1];

    [Benchmark(Description = "oiiotool FILE -o X.null")]
    public int OiioToolFullRead() => Run("oiiotool", _path, "-o", Path.Combine(Path.GetTempPath(), "pathbench-bench.null"));

    [Benchmark(Description = "oiiotool --info FILE")]
    public int OiioToolHeaderOnly() => Run("oiiotool", "--info", _path);

    /// <summary>
    /// The file for <paramref name="compression"/>, written once by OpenImageIO and kept in the temp
    /// folder under a name that includes the writing script's hash, so a changed pattern is rewritten.
    /// </summary>
    private static string BenchmarkFile(string compression)
    {
        string script = Path.Combine(RepositoryRoot(), "tools", "imaging", "oiio_exr.py");
        string hash = Convert.ToHexString(SHA256.HashData(File.ReadAllBytes(script)))[..12];
        string dir = Path.Combine(Path.GetTempPath(), "pathbench-bench");
        Directory.CreateDirectory(dir);
        string path = Path.Combine(dir, FormattableString.Invariant($"rgba_half_{Width}x{Height}_{compression}_{hash}.exr"));
        if (!File.Exists(path))
        {
            string partial = Path.ChangeExtension(path, ".partial.exr"); // OpenImageIO picks its writer by the extension
            Run("/usr/bin/python3", script, "write", partial, "--size", Width.ToString(CultureInfo.InvariantCulture),
                Height.ToString(CultureInfo.InvariantCulture), "--channels", "R,G,B,A", "--type", "half",
                "--compression", compression, "--noise", "0.05", "--seed", "1");
            File.Move(partial, path, overwrite: true);
        }

        return path;
    }

    private static string RepositoryRoot()
    {
        for (DirectoryInfo? d = new(AppContext.BaseDirectory); d is not null; d = d.Parent)
        {
            if (File.Exists(Path.Combine(d.FullName, "PathBench.sln")))
            {
                return d.FullName;
            }
        }

        throw new InvalidOperationException("the benchmarks must run from inside the PathBench repository (no PathBench.sln above " + AppContext.BaseDirectory + ")");
    }

    /// <summary>
    /// Runs a tool to completion, its output discarded; a status other than 0 fails the benchmark
    /// with the tool's error output (tools/bench.sh installs the tools).
    /// </summary>
    private static int Run(string tool, params string[] args)
    {
        var start = new ProcessStartInfo(tool) { RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (string a in args)
        {
            start.ArgumentList.Add(a);
        }

        using Process p = Process.Start(start) ?? throw new InvalidOperationException($"{tool} did not start");
        Task<string> stderr = p.StandardError.ReadToEndAsync();
        p.StandardOutput.ReadToEnd();
        p.WaitForExit();
        if (p.ExitCode != 0)
        {
            throw new InvalidOperationException($"{tool} {string.Join(' ', args)} exited {p.ExitCode}: {stderr.Result}");
        }

        return p.ExitCode;
    }

    /// <summary>Adds the decode-throughput column.</summary>
    private sealed class Columns : ManualConfig
    {
        public Columns() => AddColumn(new ThroughputColumn());
    }

    /// <summary>
    /// Decoded MB/s (10^6 bytes) over the mean time; for the full `oiiotool` read, over its mean
    /// minus the header-only run's mean of the same file (the process start-up).
    /// </summary>
    private sealed class ThroughputColumn : IColumn
    {
        public string Id => nameof(ThroughputColumn);

        public string ColumnName => "Decode MB/s";

        public bool AlwaysShow => true;

        public ColumnCategory Category => ColumnCategory.Custom;

        public int PriorityInCategory => 0;

        public bool IsNumeric => true;

        public UnitType UnitType => UnitType.Dimensionless;

        public string Legend => "Decoded pixel bytes (10^6) per second; oiiotool's full read net of its header-only run";

        public string GetValue(Summary summary, BenchmarkCase benchmarkCase) => GetValue(summary, benchmarkCase, summary.Style);

        public string GetValue(Summary summary, BenchmarkCase benchmarkCase, SummaryStyle style)
        {
            string method = benchmarkCase.Descriptor.WorkloadMethod.Name;
            double? ns = summary[benchmarkCase]?.ResultStatistics?.Mean;
            if (ns is null || method == nameof(OiioToolHeaderOnly))
            {
                return "-";
            }

            if (method == nameof(OiioToolFullRead))
            {
                BenchmarkCase? header = summary.BenchmarksCases.FirstOrDefault(c =>
                    c.Descriptor.WorkloadMethod.Name == nameof(OiioToolHeaderOnly) && c.Parameters.DisplayInfo == benchmarkCase.Parameters.DisplayInfo);
                double? headerNs = header is null ? null : summary[header]?.ResultStatistics?.Mean;
                if (headerNs is null || headerNs >= ns)
                {
                    return "-";
                }

                ns -= headerNs;
            }

            return (DecodedBytes / 1e6 / (ns.Value / 1e9)).ToString("F0", CultureInfo.InvariantCulture);
        }

        public bool IsAvailable(Summary summary) => true;

        public bool IsDefault(Summary summary, BenchmarkCase benchmarkCase) => false;
    }
}
