using System.Text.Json;
using PathBench.Analysis;
using PathBench.Imaging;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Rendering.Accumulation;

namespace PathBench.Cli.Commands;

/// <summary>
/// Writes a film as <c>render</c>, <c>reference</c> and <c>merge</c> all do, so a merged film's
/// image is the same bytes as one render's: the image by extension (a reference: FLOAT EXR and
/// <c>NAME.variance.exr</c>) and the JSON sidecar's shared fields.
/// </summary>
internal static class FilmOutput
{
    /// <summary>
    /// Refuses, before any film is allocated, a render or merge whose films and output images need
    /// more than the memory budget: <paramref name="films"/> films of <see cref="Film.BytesPerPixel"/>
    /// bytes a pixel, then what writing the image from them holds: 72 bytes a pixel for a plain image,
    /// 180 for a reference (its value and variance in double and the float image of each). Measured
    /// with VmHWM on a 2000² render at 1 spp: 179 bytes a pixel above the idle process writing EXR,
    /// 146 writing PNG, 290 for a reference at 2 spp, so 116 of film plus 63, 30 and 174.
    /// </summary>
    /// <remarks>
    /// The films' wide sums (pixels with sample values of 2^32 or more, up to 1312 bytes a pixel, see
    /// <c>WideSums</c>) cannot be estimated from declared sizes, since no size declares how bright a
    /// sample will be: they are held to what the budget leaves after this estimate
    /// (<see cref="WideRoom"/>, <see cref="Film.WideBytesLimit"/>) as they are taken.
    /// </remarks>
    public static void RequireMemory(int width, int height, int films, bool reference, string what)
    {
        long perPixel = PerPixel(films, reference);
        MemoryBudget.Current.Require((Int128)width * height * perPixel, FormattableString.Invariant($"{what} of {width}x{height} pixels ({perPixel} bytes a pixel)"));
    }

    /// <summary>What the memory budget leaves for the films' wide sums after <see cref="RequireMemory"/>'s estimate.</summary>
    public static long WideRoom(int width, int height, int films, bool reference) =>
        MemoryBudget.Current.Bytes - ((long)width * height * PerPixel(films, reference));

    private static long PerPixel(int films, bool reference) => ((long)films * Film.BytesPerPixel) + (reference ? 180 : 72);

    /// <summary>Writes the image (and for a reference the variance image); returns the mean variance (0 for a plain image).</summary>
    public static double WriteImage(string outPath, Film film, int spp, bool reference)
    {
        if (reference)
        {
            var truth = ReferenceImage.FromFilm(film, spp);
            ImageIo.Guard(outPath, () => truth.Write(outPath));
            return truth.MeanVariance;
        }

        var image = new RgbImage(film.Width, film.Height, film.ToRgb());
        ImageIo.Guard(outPath, () => ImageFile.Write(outPath, image));
        return 0;
    }

    /// <summary>
    /// Prints a warning on <paramref name="output"/> when samples were dropped (NaN or infinite
    /// values: counted, never averaged in), or when pixel means are beyond what a float image holds,
    /// so a partly empty or partly infinite image is never reported as clean.
    /// </summary>
    public static void WarnDropped(TextWriter output, string outPath, Film film)
    {
        if (film.NonFiniteSamples > 0)
        {
            output.WriteLine(string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"pathbench: warning: {outPath}: {film.NonFiniteSamples} non-finite samples (NaN or infinite) were dropped; their pixels average the remaining samples"));
        }

        // Only a pixel with wide sums (channel values of 2^32 or more) can average above the float
        // range (3.4e38, IEEE 754 binary32), which EXR and PFM then hold as infinite: said, not silent.
        if (film.WidePixels > 0 && !outPath.EndsWith(".png", StringComparison.OrdinalIgnoreCase))
        {
            int beyond = film.ToRgb().Count(float.IsInfinity);
            if (beyond > 0)
            {
                output.WriteLine(string.Create(System.Globalization.CultureInfo.InvariantCulture,
                    $"pathbench: warning: {outPath}: {beyond} channel values average above the float range (3.4e38) and are written as infinite"));
            }
        }
    }

    /// <summary>Writes the sidecar: the identity, the ranges, then <paramref name="more"/> fields.</summary>
    /// <remarks>
    /// <c>scene_sha256</c> is the scene file's own hash (what studies check a reference against), written when
    /// <paramref name="scene"/> is known; <c>scene_digest</c> also covers its meshes, as the accumulation file does.
    /// </remarks>
    public static void WriteSidecar(string path, RenderIdentity identity, Rendering.Scenes.SceneDescription? scene, string outPath, IReadOnlyList<SampleRange> ranges, Film film, Action<Utf8JsonWriter> more)
    {
        ImageIo.Guard(path, () =>
        {
            AtomicFile.WriteText(path, writer => JsonOutput.Write(writer, w =>
            {
                w.WriteStartObject();
                w.WriteString("version", identity.Version);
                if (scene is not null)
                {
                    w.WriteString("scene", scene.SourcePath);
                    w.WriteString("scene_sha256", scene.Sha256);
                }

                w.WriteString("scene_digest", identity.SceneSha256);
                w.WriteString("output", outPath);
                foreach ((string name, string value) in identity.Configuration)
                {
                    if (ulong.TryParse(value, System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out ulong number))
                    {
                        w.WriteNumber(name, number);
                    }
                    else if (value is "true" or "false")
                    {
                        w.WriteBoolean(name, value == "true");
                    }
                    else
                    {
                        w.WriteString(name, value);
                    }
                }

                w.WriteNumber("spp", ranges.Sum(r => r.Count));
                w.WriteStartArray("sample_ranges");
                foreach (SampleRange r in ranges)
                {
                    w.WriteStartObject();
                    w.WriteNumber("first", r.First);
                    w.WriteNumber("end", r.End);
                    w.WriteNumber("spp", r.Count);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                w.WriteNumber("width", film.Width);
                w.WriteNumber("height", film.Height);
                w.WriteNumber("nonfinite_samples", film.NonFiniteSamples);
                w.WriteNumber("wide_pixels", film.WidePixels);
                more(w);
                w.WriteEndObject();
            }));
        });
    }
}
