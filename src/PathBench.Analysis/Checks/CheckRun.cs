using System.Globalization;
using System.Text;
using System.Text.Json;
using System.Xml;
using PathBench.Io;

namespace PathBench.Analysis.Checks;

/// <summary>A finished check: every verdict, and each case's figures (for a baseline).</summary>
/// <param name="Suite">The suite.</param>
/// <param name="Verdicts">Every assertion's verdict, in suite order.</param>
/// <param name="Figures">Per case that produced its images, its figures.</param>
/// <param name="Seconds">Per case, the wall time it took.</param>
public sealed record CheckResult(CheckSuite Suite, IReadOnlyList<Verdict> Verdicts, IReadOnlyDictionary<string, CaseFigures> Figures, IReadOnlyDictionary<string, double> Seconds)
{
    /// <summary>When the run started, in UTC (the JUnit report's timestamp).</summary>
    public DateTime Started { get; init; } = DateTime.UtcNow;

    /// <summary>Whether every assertion holds.</summary>
    public bool Passed => Verdicts.All(v => v.Passed);
}

/// <summary>Runs a check suite and writes its results: the terminal table, JUnit XML, JSON and baselines.</summary>
public static class CheckRun
{
    /// <summary>Runs every case. A case that cannot produce its images fails all its assertions with the reason; it never stops the others.</summary>
    /// <exception cref="Rendering.Scenes.SceneException">Bad input (a scene or reference that does not fit).</exception>
    /// <exception cref="InvalidOperationException">An assertion needs a baseline the run was not given.</exception>
    public static CheckResult Run(CheckSuite suite, string workDirectory, int threads, IReadOnlyDictionary<string, CaseFigures>? baseline, Action<string>? progress = null)
    {
        ArgumentNullException.ThrowIfNull(suite);
        if (baseline is null && suite.Cases.SelectMany(c => c.Assertions).FirstOrDefault(a => a.AgainstBaseline) is not null)
        {
            string name = suite.Cases.First(c => c.Assertions.Any(a => a.AgainstBaseline)).Name;
            throw new InvalidOperationException($"case '{name}' asserts mse_at_most against a baseline: pass --baseline FILE (made by 'pathbench baseline')");
        }

        // Every render case's memory is known from its scene: refused before the first case runs.
        foreach (CheckCase c in suite.Cases)
        {
            CaseImages.RequireMemory(c);
        }

        DateTime started = DateTime.UtcNow;
        var verdicts = new List<Verdict>();
        var figures = new Dictionary<string, CaseFigures>(StringComparer.Ordinal);
        var seconds = new Dictionary<string, double>(StringComparer.Ordinal);
        foreach (CheckCase c in suite.Cases)
        {
            progress?.Invoke($"case {c.Name}");
            var clock = System.Diagnostics.Stopwatch.StartNew();
            try
            {
                CaseMeasurements m = CaseImages.Measure(c, workDirectory, threads, progress);
                figures[c.Name] = Verdicts.Figures(c, m);
                verdicts.AddRange(Verdicts.Decide(c, m, baseline));
            }
            catch (CaseFailedException e)
            {
                verdicts.AddRange(Verdicts.Failed(c, e.Message));
            }

            seconds[c.Name] = clock.Elapsed.TotalSeconds;
        }

        return new CheckResult(suite, verdicts, figures, seconds) { Started = started };
    }

    /// <summary>The terminal table: case × assertion × measured × bound × verdict.</summary>
    public static void WriteTable(TextWriter o, CheckResult result)
    {
        ArgumentNullException.ThrowIfNull(o);
        ArgumentNullException.ThrowIfNull(result);
        var rows = new List<string[]> { new[] { "case", "assertion", "measured", "bound", "p", "verdict" } };
        rows.AddRange(result.Verdicts.Select(v => new[]
        {
            v.Case, v.Assertion.Kind, Number(v.Measured), Number(v.Bound), v.P is { } p ? p.ToString("G3", CultureInfo.InvariantCulture) : "-", v.Passed ? "pass" : "FAIL",
        }));
        int[] widths = [.. Enumerable.Range(0, 6).Select(col => rows.Max(r => r[col].Length))];
        foreach (string[] row in rows)
        {
            o.WriteLine(string.Join("  ", row.Select((cell, col) => col < 2 ? cell.PadRight(widths[col]) : cell.PadLeft(widths[col]))).TrimEnd());
        }

        foreach (Verdict v in result.Verdicts.Where(v => !v.Passed))
        {
            o.WriteLine($"FAIL {v.Case} {v.Assertion.Kind}: {v.Detail}");
        }

        int failed = result.Verdicts.Count(v => !v.Passed);
        o.WriteLine(FormattableString.Invariant($"{result.Verdicts.Count - failed} of {result.Verdicts.Count} assertions hold"));
    }

    /// <summary>
    /// JUnit XML as CI servers read it, valid against the Apache Ant JUnit report schema as Windy Road
    /// publishes it (github.com/windyroad/JUnit-Schema, JUnit.xsd, Apache License 2.0; the tests validate
    /// against it): <c>testsuites</c> / one <c>testsuite</c> (name, timestamp without zone, hostname,
    /// tests, failures, errors, skipped, time, package, id) holding <c>properties</c>, one
    /// <c>testcase</c> per assertion (classname the case, name the assertion, time), then
    /// <c>system-out</c> and <c>system-err</c>. A failed assertion has a <c>failure</c> whose message holds
    /// the measured value, the bound and the p-value and whose text is the verdict's detail; a case that
    /// could not run has its assertions as <c>error</c>s. The schema allows nothing inside a passing
    /// testcase, so every assertion's line (passed ones included) is in the suite's system-out.
    /// </summary>
    public static void WriteJUnit(Stream stream, CheckResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        using var w = XmlWriter.Create(stream, new XmlWriterSettings { Indent = true, Encoding = new UTF8Encoding(false) });
        w.WriteStartDocument();
        w.WriteStartElement("testsuites");
        string suiteName = "pathbench check " + Path.GetFileName(result.Suite.SourcePath);
        int failures = result.Verdicts.Count(v => !v.Passed && !double.IsNaN(v.Measured));
        int errors = result.Verdicts.Count(v => !v.Passed && double.IsNaN(v.Measured));
        w.WriteStartElement("testsuite");
        w.WriteAttributeString("name", suiteName);
        w.WriteAttributeString("timestamp", result.Started.ToUniversalTime().ToString("yyyy-MM-dd'T'HH:mm:ss", CultureInfo.InvariantCulture));
        w.WriteAttributeString("hostname", Environment.MachineName is { Length: > 0 } host && !host.Any(char.IsWhiteSpace) ? host : "localhost");
        w.WriteAttributeString("tests", result.Verdicts.Count.ToString(CultureInfo.InvariantCulture));
        w.WriteAttributeString("failures", failures.ToString(CultureInfo.InvariantCulture));
        w.WriteAttributeString("errors", errors.ToString(CultureInfo.InvariantCulture));
        w.WriteAttributeString("skipped", "0");
        w.WriteAttributeString("time", result.Seconds.Values.Sum().ToString("F3", CultureInfo.InvariantCulture));
        w.WriteAttributeString("package", "pathbench.check");
        w.WriteAttributeString("id", "0");
        w.WriteStartElement("properties");
        WriteProperty(w, "suite", result.Suite.SourcePath);
        WriteProperty(w, "cases", result.Suite.Cases.Count.ToString(CultureInfo.InvariantCulture));
        w.WriteEndElement();
        var lines = new StringBuilder();
        foreach (Verdict v in result.Verdicts)
        {
            int perCase = result.Verdicts.Count(o => o.Case == v.Case);
            w.WriteStartElement("testcase");
            w.WriteAttributeString("name", v.Assertion.Kind);
            w.WriteAttributeString("classname", v.Case);
            w.WriteAttributeString("time", (result.Seconds.GetValueOrDefault(v.Case) / perCase).ToString("F3", CultureInfo.InvariantCulture));
            string message = FormattableString.Invariant($"measured {Number(v.Measured)}, bound {Number(v.Bound)}, p {(v.P is { } p ? p.ToString("G3", CultureInfo.InvariantCulture) : "n/a")}");
            if (!v.Passed)
            {
                bool error = double.IsNaN(v.Measured);
                w.WriteStartElement(error ? "error" : "failure");
                w.WriteAttributeString("message", message);
                w.WriteAttributeString("type", error ? "CaseFailed" : "AssertionFailed");
                w.WriteString(v.Detail);
                w.WriteEndElement();
            }

            w.WriteEndElement();
            lines.Append(v.Passed ? "pass " : "FAIL ").Append(v.Case).Append(' ').Append(v.Assertion.Kind).Append(": ").Append(message).Append("; ").Append(v.Detail).Append('\n');
        }

        w.WriteElementString("system-out", lines.ToString());
        w.WriteElementString("system-err", "");
        w.WriteEndElement();
        w.WriteEndElement();
        w.WriteEndDocument();
    }

    private static void WriteProperty(XmlWriter w, string name, string value)
    {
        w.WriteStartElement("property");
        w.WriteAttributeString("name", name);
        w.WriteAttributeString("value", value);
        w.WriteEndElement();
    }

    /// <summary>The verdicts as JSON (stable snake_case fields).</summary>
    public static void WriteJson(Stream stream, CheckResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        using var w = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true });
        w.WriteStartObject();
        w.WriteString("suite", result.Suite.SourcePath);
        w.WriteBoolean("passed", result.Passed);
        w.WriteStartArray("verdicts");
        foreach (Verdict v in result.Verdicts)
        {
            w.WriteStartObject();
            w.WriteString("case", v.Case);
            w.WriteString("assertion", v.Assertion.Kind);
            WriteNumber(w, "measured", v.Measured);
            WriteNumber(w, "bound", v.Bound);
            WriteNumber(w, "p", v.P);
            w.WriteNumber("alpha", v.Assertion.Alpha);
            w.WriteBoolean("passed", v.Passed);
            w.WriteString("detail", v.Detail);
            w.WriteEndObject();
        }

        w.WriteEndArray();
        w.WriteEndObject();
    }

    /// <summary>Writes a baseline: each case's figures at its largest spp.</summary>
    public static void WriteBaseline(Stream stream, CheckResult result, string version)
    {
        ArgumentNullException.ThrowIfNull(result);
        using var w = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true });
        w.WriteStartObject();
        w.WriteString("format", "pathbench-baseline 1");
        w.WriteString("suite", result.Suite.SourcePath);
        w.WriteString("pathbench_version", version);
        w.WriteStartObject("cases");
        foreach ((string name, CaseFigures f) in result.Figures)
        {
            w.WriteStartObject(name);
            w.WriteNumber("spp", f.Spp);
            w.WriteNumber("mse", f.Mse);
            w.WriteNumber("mse_sd", f.MseSd);
            w.WriteNumber("replicates", f.Replicates);
            WriteNumber(w, "slope", f.Slope);
            w.WriteEndObject();
        }

        w.WriteEndObject();
        w.WriteEndObject();
    }

    /// <summary>Reads a baseline written by <see cref="WriteBaseline"/>.</summary>
    /// <exception cref="Imaging.ImageFileException">The file is missing, not JSON, or not a baseline (named in the message).</exception>
    public static IReadOnlyDictionary<string, CaseFigures> ReadBaseline(string path)
    {
        try
        {
            using JsonDocument doc = JsonDocument.Parse(InputFile.ReadAllBytes(path, reason => new Imaging.ImageFileException(path, reason)));
            JsonElement root = doc.RootElement;
            if (!root.TryGetProperty("format", out JsonElement format) || format.GetString() != "pathbench-baseline 1")
            {
                throw new Imaging.ImageFileException(path, "not a PathBench baseline (no \"format\": \"pathbench-baseline 1\")");
            }

            var cases = new Dictionary<string, CaseFigures>(StringComparer.Ordinal);
            foreach (JsonProperty c in root.GetProperty("cases").EnumerateObject())
            {
                JsonElement f = c.Value;
                var figures = new CaseFigures(
                    f.GetProperty("spp").GetInt32(),
                    f.GetProperty("mse").GetDouble(),
                    f.GetProperty("mse_sd").GetDouble(),
                    f.GetProperty("replicates").GetInt32(),
                    f.GetProperty("slope").ValueKind == JsonValueKind.Number ? f.GetProperty("slope").GetDouble() : null);
                if (!(figures.Mse >= 0) || !(figures.MseSd >= 0) || figures.Replicates < 2)
                {
                    throw new Imaging.ImageFileException(path, $"case '{c.Name}': mse, mse_sd must be non-negative and replicates at least 2");
                }

                cases[c.Name] = figures;
            }

            return cases;
        }
        catch (Exception e) when (e is JsonException or KeyNotFoundException or InvalidOperationException or FormatException or IOException or UnauthorizedAccessException)
        {
            throw new Imaging.ImageFileException(path, $"cannot read the baseline: {e.Message}");
        }
    }

    private static void WriteNumber(Utf8JsonWriter w, string name, double? value)
    {
        if (value is { } v && double.IsFinite(v))
        {
            w.WriteNumber(name, v);
        }
        else
        {
            w.WriteNull(name);
        }
    }

    private static string Number(double v) => double.IsNaN(v) ? "-" : v.ToString("G4", CultureInfo.InvariantCulture);
}
