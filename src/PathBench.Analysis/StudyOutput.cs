using System.Globalization;
using System.Text;
using System.Text.Json;
using PathBench.Io;

namespace PathBench.Analysis;

/// <summary>An image a study leaves for viewing, listed in <c>summary.json</c> under <c>images</c>.</summary>
/// <param name="Kind"><c>reference</c>, <c>reference-variance</c>, <c>render</c> (a configuration's first replicate at one spp) or <c>variance</c> (a configuration's variance across replicates at the largest spp).</param>
/// <param name="Configuration">The configuration's name; null for the reference.</param>
/// <param name="Spp">Samples per pixel; null where it does not apply.</param>
/// <param name="File">Path relative to the study's output folder.</param>
public sealed record StudyImage(string Kind, string? Configuration, int? Spp, string File);

/// <summary>Where and when a study ran, for its summary and report.</summary>
/// <param name="StudyFile">The study file as given.</param>
/// <param name="Version">PathBench version.</param>
/// <param name="Date">When the study finished (UTC).</param>
/// <param name="Images">The images left for viewing.</param>
public sealed record StudyMetadata(string StudyFile, string Version, DateTimeOffset Date, IReadOnlyList<StudyImage> Images)
{
    /// <summary>Logical processors of the machine.</summary>
    public int Cores { get; init; } = Environment.ProcessorCount;

    /// <summary>The operating system's description.</summary>
    public string OperatingSystem { get; init; } = System.Runtime.InteropServices.RuntimeInformation.OSDescription;

    /// <summary>The .NET runtime's description.</summary>
    public string Runtime { get; init; } = System.Runtime.InteropServices.RuntimeInformation.FrameworkDescription;
}

/// <summary>
/// Writes a study's numbers: <c>results.csv</c> (one row per configuration × spp × replicate) and
/// <c>summary.json</c>. Field names are stable snake_case; numbers are invariant-culture,
/// shortest round-trip; a value that does not exist (an interval from one replicate, an
/// efficiency of a non-positive MSE) is empty in CSV and null in JSON.
/// </summary>
public static class StudyOutput
{
    /// <summary>The columns of <c>results.csv</c>, in order.</summary>
    public static readonly IReadOnlyList<string> CsvColumns =
    [
        "configuration", "generator", "randomize", "hemisphere", "lights", "spp", "replicate", "seed",
        "seconds", "rays", "nonfinite_samples", "cached", "mse", "mse_uncorrected", "relmse",
    ];

    /// <summary>Writes <c>results.csv</c> and <c>summary.json</c> into <paramref name="directory"/>, each through a temporary file and a rename.</summary>
    public static void Write(string directory, StudySummary summary, string sceneLabel, string? referencePath, StudyMetadata metadata)
    {
        ArgumentNullException.ThrowIfNull(summary);
        Directory.CreateDirectory(directory);
        AtomicFile.WriteText(Path.Combine(directory, "results.csv"), w => WriteCsv(w, summary.Result));
        AtomicFile.WriteText(Path.Combine(directory, "summary.json"), w => WriteJson(w, summary, sceneLabel, referencePath, metadata));
    }

    /// <summary>One row per replicate render.</summary>
    public static void WriteCsv(TextWriter writer, StudyResult result)
    {
        ArgumentNullException.ThrowIfNull(writer);
        ArgumentNullException.ThrowIfNull(result);
        writer.Write(string.Join(',', CsvColumns));
        writer.Write('\n');
        var byName = result.Study.Configurations.ToDictionary(c => c.Name, StringComparer.Ordinal);
        foreach (StudySample s in result.Samples)
        {
            StudyConfiguration c = byName[s.Configuration];
            string[] cells =
            [
                c.Name, c.Generator, c.RandomizeName, c.HemisphereName, c.LightsName,
                Number(s.Spp), Number(s.Replicate), s.Seed.ToString(CultureInfo.InvariantCulture),
                Number(s.Seconds), s.Rays.ToString(CultureInfo.InvariantCulture),
                s.NonFiniteSamples.ToString(CultureInfo.InvariantCulture), s.Cached ? "true" : "false",
                Number(s.Error.Mse), Number(s.Error.MseUncorrected), Number(s.Error.RelMse),
            ];
            writer.Write(string.Join(',', cells));
            writer.Write('\n');
        }
    }

    /// <summary>The summary in the shape the issue tracker and the report rely on.</summary>
    public static void WriteJson(TextWriter writer, StudySummary summary, string sceneLabel, string? referencePath, StudyMetadata metadata)
    {
        ArgumentNullException.ThrowIfNull(writer);
        ArgumentNullException.ThrowIfNull(summary);
        ArgumentNullException.ThrowIfNull(metadata);
        using var stream = new MemoryStream();
        using (var w = new Utf8JsonWriter(stream, new JsonWriterOptions { Indented = true }))
        {
            ReferenceImage reference = summary.Result.Reference;
            w.WriteStartObject();
            w.WriteString("scene", sceneLabel);
            w.WriteStartObject("reference");
            w.WriteString("path", referencePath);
            Nullable(w, "spp", reference.Spp);
            Nullable(w, "mean_variance", reference.MeanVariance);
            w.WriteEndObject();
            w.WriteString("study_file", metadata.StudyFile);
            w.WriteString("pathbench_version", metadata.Version);
            w.WriteString("date", metadata.Date.UtcDateTime.ToString("yyyy-MM-dd'T'HH:mm:ss'Z'", CultureInfo.InvariantCulture));
            w.WriteStartObject("machine");
            w.WriteNumber("cores", metadata.Cores);
            w.WriteString("os", metadata.OperatingSystem);
            w.WriteString("runtime", metadata.Runtime);
            w.WriteEndObject();
            w.WriteNumber("width", reference.Width);
            w.WriteNumber("height", reference.Height);
            w.WriteStartArray("spp_ladder");
            foreach (int n in summary.Result.Study.Spp)
            {
                w.WriteNumberValue(n);
            }

            w.WriteEndArray();
            w.WriteNumber("replicates", summary.Result.Study.Replicates);
            w.WriteNumber("threads", summary.Result.Threads);
            w.WriteNumber("tile_size", StudySummary.TileSize);
            w.WriteNumber("tile_bias_alpha", StudySummary.TileAlpha);
            w.WriteStartArray("warnings");
            foreach (string warning in summary.Warnings)
            {
                w.WriteStringValue(warning);
            }

            w.WriteEndArray();
            EqualTimeComparison et = summary.EqualTime;
            w.WriteStartObject("equal_time");
            Nullable(w, "seconds", et.Seconds);
            w.WriteString("method", "log MSE fitted on log seconds per configuration, read at the shortest of the configurations' times at the largest spp");
            w.WriteStartArray("ranking");
            foreach (string name in et.Ranking)
            {
                w.WriteStringValue(name);
            }

            w.WriteEndArray();
            w.WriteEndObject();
            WinMap map = summary.WinMap;
            w.WriteStartObject("win_map");
            w.WriteNumber("tile_size", WinMap.TileSize);
            w.WriteNumber("tiles_x", map.TilesX);
            w.WriteNumber("tiles_y", map.TilesY);
            w.WriteNumber("false_discovery_rate", WinMap.FalseDiscoveryRate);
            w.WriteNumber("no_difference_fraction", map.NoDifferenceFraction);
            w.WriteStartArray("winners");
            foreach (int winner in map.Winners)
            {
                if (winner == WinMap.NoDifference)
                {
                    w.WriteNullValue();
                }
                else
                {
                    w.WriteStringValue(summary.Configurations[winner].Configuration.Name);
                }
            }

            w.WriteEndArray();
            w.WriteEndObject();
            w.WriteStartArray("images");
            foreach (StudyImage image in metadata.Images)
            {
                w.WriteStartObject();
                w.WriteString("kind", image.Kind);
                w.WriteString("configuration", image.Configuration);
                Nullable(w, "spp", image.Spp);
                w.WriteString("file", image.File);
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteStartArray("configurations");
            for (int index = 0; index < summary.Configurations.Count; index++)
            {
                ConfigurationSummary cs = summary.Configurations[index];
                StudyConfiguration c = cs.Configuration;
                w.WriteStartObject();
                w.WriteString("name", c.Name);
                w.WriteString("generator", c.Generator);
                w.WriteString("randomize", c.RandomizeName);
                w.WriteString("hemisphere", c.HemisphereName);
                w.WriteString("lights", c.LightsName);
                w.WriteBoolean("randomized", c.IsRandomized);
                w.WriteBoolean("progressive", c.IsProgressive);
                Nullable(w, "slope", cs.Slope?.Slope);
                if (cs.Slope is { } fit && double.IsFinite(fit.SlopeLow))
                {
                    w.WriteStartArray("slope_ci");
                    w.WriteNumberValue(fit.SlopeLow);
                    w.WriteNumberValue(fit.SlopeHigh);
                    w.WriteEndArray();
                }
                else
                {
                    w.WriteNull("slope_ci");
                }

                Nullable(w, "structure_score", cs.Structure?.Score);
                Nullable(w, "structure_p", cs.Structure?.P);
                w.WriteNumber("win_fraction", map.WinFractions[index]);
                EqualTimeEntry entry = et.Entries[index];
                Nullable(w, "mse_at_equal_time", entry.Mse);
                Nullable(w, "equal_time_rank", entry.Rank);
                w.WriteBoolean("equal_time_extrapolated", entry.Extrapolated);
                w.WriteStartObject("theory");
                Nullable(w, "smooth", cs.Theory.Smooth);
                Nullable(w, "discontinuous", cs.Theory.Discontinuous);
                w.WriteString("source", cs.Theory.Source);
                w.WriteEndObject();
                w.WriteStartArray("notes");
                foreach (string note in cs.Notes)
                {
                    w.WriteStringValue(note);
                }

                w.WriteEndArray();
                w.WriteStartArray("points");
                foreach (StudyPoint p in cs.Points)
                {
                    w.WriteStartObject();
                    w.WriteNumber("spp", p.Spp);
                    w.WriteNumber("replicates", p.Replicates);
                    Nullable(w, "mse", p.Mse);
                    if (p.MseLow is { } lo && p.MseHigh is { } hi)
                    {
                        w.WriteStartArray("mse_ci");
                        w.WriteNumberValue(lo);
                        w.WriteNumberValue(hi);
                        w.WriteEndArray();
                    }
                    else
                    {
                        w.WriteNull("mse_ci");
                    }

                    Nullable(w, "mse_uncorrected", p.MseUncorrected);
                    Nullable(w, "relmse", p.RelMse);
                    Nullable(w, "estimator_variance", p.EstimatorVariance);
                    Nullable(w, "bias", p.Bias);
                    Nullable(w, "bias_z", p.BiasZ);
                    Nullable(w, "biased_tiles", p.BiasedTiles);
                    Nullable(w, "seconds", p.Seconds);
                    Nullable(w, "seconds_min", p.SecondsMin);
                    Nullable(w, "seconds_max", p.SecondsMax);
                    Nullable(w, "seconds_per_sample", p.SecondsPerSample);
                    Nullable(w, "efficiency", p.Efficiency);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                w.WriteEndObject();
            }

            w.WriteEndArray();
            w.WriteEndObject();
        }

        writer.Write(Encoding.UTF8.GetString(stream.ToArray()));
        writer.Write('\n');
    }

    private static void Nullable(Utf8JsonWriter w, string name, double? value)
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

    private static string Number(double v) => double.IsFinite(v) ? v.ToString("R", CultureInfo.InvariantCulture) : "";
}
