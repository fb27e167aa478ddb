using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using PathBench.Imaging;
using PathBench.Io;

namespace PathBench.Analysis;

/// <summary>One finished replicate render as the cache keeps it: the image and what it cost.</summary>
/// <param name="Image">Pixel means, float RGB interleaved, row 0 at the top (exactly what was measured).</param>
/// <param name="Seconds">Wall time to reach this sample count.</param>
/// <param name="Rays">Rays traced to reach it.</param>
/// <param name="NonFiniteSamples">Samples dropped as NaN or infinite.</param>
public sealed record CachedRender(float[] Image, double Seconds, long Rays, long NonFiniteSamples);

/// <summary>
/// The renders of a study, kept in <c>DIR/cache</c> so that an interrupted study resumes where it
/// stopped and a study with one new configuration renders only that one. An entry is a PFM image
/// (32-bit floats: the exact values measured) and a JSON file with its timing; the JSON is written
/// last, through a temporary file and a rename, so an entry without it is unfinished and ignored.
/// The key is a SHA-256 of everything the image depends on (see <see cref="Key"/>), never the
/// configuration's name, so renaming a configuration keeps its renders.
/// </summary>
public sealed class StudyCache
{
    private const string FormatTag = "pathbench-study-cache 1";
    private readonly string _folder;

    /// <summary>A cache in <paramref name="folder"/> (created on first write).</summary>
    public StudyCache(string folder)
    {
        ArgumentNullException.ThrowIfNull(folder);
        _folder = folder;
    }

    /// <summary>The cache's folder.</summary>
    public string Folder => _folder;

    /// <summary>Renders found in the cache since it was opened.</summary>
    public int Hits { get; private set; }

    /// <summary>
    /// The key of one render: the identity of the code that renders (<see cref="RenderCodeIdentity"/>), the scene's SHA-256 and resolution, every
    /// render setting, the seed, the planned count and the sample count. For a progressive
    /// configuration the planned count does not change the points and is left out. A plug-in or
    /// point-file generator adds its provenance (assembly version id, file SHA-256), so changed points
    /// are rendered anew.
    /// </summary>
    public static string Key(string codeIdentity, string sceneSha256, int width, int height, StudyConfiguration c, int depth, ulong seed, int spp)
    {
        ArgumentNullException.ThrowIfNull(c);
        string text = string.Create(CultureInfo.InvariantCulture,
            $"{FormatTag}|{codeIdentity}|{sceneSha256}|{width}x{height}|{c.Generator}|{c.RandomizeName}|{c.HemisphereName}|{c.LightsName}|{depth}|{c.RussianRoulette}|{seed}|{spp}{(c.Info.Provenance is { } p ? "|" + p : "")}");
        return Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text)))[..32];
    }

    /// <summary>The cached render under <paramref name="key"/>, or null when there is none (or it is not <paramref name="width"/>×<paramref name="height"/>).</summary>
    /// <exception cref="ImageFileException">An entry exists but is damaged: its image cannot be read.</exception>
    public CachedRender? TryGet(string key, int width, int height)
    {
        string json = Path.Combine(_folder, key + ".json");
        string image = Path.Combine(_folder, key + ".pfm");
        if (!File.Exists(json) || !File.Exists(image))
        {
            return null;
        }

        double seconds;
        long rays, nonFinite;
        try
        {
            using JsonDocument doc = JsonDocument.Parse(InputFile.ReadAllBytes(json, reason => new IOException(reason)));
            JsonElement root = doc.RootElement;
            seconds = root.GetProperty("seconds").GetDouble();
            rays = root.GetProperty("rays").GetInt64();
            nonFinite = root.GetProperty("nonfinite_samples").GetInt64();
        }
        catch (Exception e) when (e is JsonException or KeyNotFoundException or InvalidOperationException or FormatException or IOException)
        {
            // A damaged entry is not a result: render again rather than guess.
            return null;
        }

        RgbImage read = ImageFile.Read(image).Image;
        if (read.Width != width || read.Height != height || !(seconds >= 0))
        {
            return null;
        }

        Hits++;
        return new CachedRender(read.Data, seconds, rays, nonFinite);
    }

    /// <summary>Stores a finished render under <paramref name="key"/>.</summary>
    public void Put(string key, int width, int height, CachedRender render)
    {
        ArgumentNullException.ThrowIfNull(render);
        Directory.CreateDirectory(_folder);
        string image = Path.Combine(_folder, key + ".pfm");
        string json = Path.Combine(_folder, key + ".json");
        ImageFile.Write(image, new RgbImage(width, height, render.Image));
        AtomicFile.Write(json, stream =>
        {
            using var w = new Utf8JsonWriter(stream);
            w.WriteStartObject();
            w.WriteNumber("seconds", render.Seconds);
            w.WriteNumber("rays", render.Rays);
            w.WriteNumber("nonfinite_samples", render.NonFiniteSamples);
            w.WriteEndObject();
        });
    }
}
