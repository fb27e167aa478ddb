using System.Globalization;

namespace PathBench.Imaging.Tests;

/// <summary>
/// The decode recorded beside each PNG by tools/imaging/png_reference.py (NAME.txt: the integer
/// samples Pillow, python3-pil from Debian, decodes — or the numpy integers written where Pillow
/// truncates 16-bit colour — and the linear values the transfer formulas give in float64), and the
/// comparison of our reader with it.
/// </summary>
internal static class PngReference
{
    /// <summary>
    /// Linear values: the reader rounds a double to float32 (2^-24 relative) and its pow may differ
    /// from Python's in the last bit of the double; 2^-23 relative covers both (common practice).
    /// </summary>
    private const double LinearTolerance = 1.0 / (1 << 23);

    /// <summary>One recorded file.</summary>
    public sealed record Expected(
        int Width, int Height, int Channels, int Depth, int ColourType, bool Interlaced,
        string Transfer, string Source, int[] Samples, int[]? Palette, double[] Linear);

    /// <summary>Parses NAME.txt.</summary>
    public static Expected Load(string txt)
    {
        Dictionary<string, string[]> lines = File.ReadAllLines(txt)
            .Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            .Where(p => p.Length > 0)
            .ToDictionary(p => p[0], p => p[1..], StringComparer.Ordinal);
        int[] size = Ints(lines["size"]);
        return new Expected(
            size[0], size[1], size[2], size[3], size[4], size[5] == 1,
            lines["transfer"].Single(), lines["source"].Single(), Ints(lines["samples"]),
            lines.TryGetValue("palette", out string[]? p) ? Ints(p) : null,
            lines["linear"].Select(v => double.Parse(v, NumberStyles.Float, CultureInfo.InvariantCulture)).ToArray());
    }

    /// <summary>Checks our integer samples (exactly), palette, linear values and transfer note against the record.</summary>
    public static void AssertSameAsOurs(string png, Expected e, string name)
    {
        PngDecoded d;
        using (FileStream s = ImageFile.OpenRead(png))
        {
            d = PngDecoder.Decode(s, png, ImageLimits.Default);
        }

        PngHeader h = d.Header;
        Assert.Equal((e.Width, e.Height, e.Channels, e.Depth, e.ColourType, e.Interlaced), (h.Width, h.Height, h.Channels, h.BitDepth, (int)h.ColourType, h.Interlaced));
        Assert.Equal(e.Width * e.Height * e.Channels, e.Samples.Length);
        var row = new ushort[h.Width * h.Channels];
        for (int y = 0; y < h.Height; y++)
        {
            d.Row(y, row);
            for (int i = 0; i < row.Length; i++)
            {
                int expected = e.Samples[(y * row.Length) + i];
                Assert.True(
                    expected == row[i],
                    FormattableString.Invariant($"{name}: pixel ({i / h.Channels},{y}) channel {i % h.Channels}: expected {expected} ({e.Source}), got {row[i]}"));
            }
        }

        if (e.Palette is not null)
        {
            Assert.NotNull(d.Palette);
            Assert.True(d.Palette!.Length >= e.Palette.Length, $"{name}: PLTE has {d.Palette.Length / 3} entries, expected at least {e.Palette.Length / 3}");
            Assert.Equal(e.Palette, d.Palette.Take(e.Palette.Length).Select(b => (int)b).ToArray());
        }

        ImageReadResult r = PngCodec.Read(png);
        float[] data = r.Image.Data;
        Assert.Equal(e.Linear.Length, data.Length);
        for (int i = 0; i < data.Length; i++)
        {
            double bound = LinearTolerance * Math.Abs(e.Linear[i]);
            Assert.True(
                Math.Abs(data[i] - e.Linear[i]) <= bound,
                FormattableString.Invariant($"{name}: linear value {i} (pixel {i / 3}, channel {i % 3}): expected {e.Linear[i]:R}, got {data[i]:R}"));
        }

        string note = TransferNote(e.Transfer);
        Assert.True(r.Notes.Any(n => n.Contains(note, StringComparison.Ordinal)), $"{name}: no note contains '{note}': {string.Join(" | ", r.Notes)}");
    }

    /// <summary>The note our reader must give for a transfer the script names.</summary>
    private static string TransferNote(string transfer) => transfer switch
    {
        "srgb-default" => "no cICP, iCCP, sRGB or gAMA chunk: sRGB assumed",
        "srgb-chunk" => "sRGB chunk: samples decoded through the sRGB curve (IEC 61966-2-1)",
        "iccp" => "iCCP profile 'test profile' not interpreted",
        "cicp-srgb" => "cICP transfer characteristics 13 (sRGB)",
        "cicp-linear" => "cICP transfer characteristics 8 (linear)",
        _ when transfer.StartsWith("gamma:", StringComparison.Ordinal) =>
            "gAMA " + (int.Parse(transfer[6..], CultureInfo.InvariantCulture) / 100000.0).ToString("0.#####", CultureInfo.InvariantCulture) + " ",
        _ => throw new ArgumentException($"unknown transfer '{transfer}'", nameof(transfer)),
    };

    private static int[] Ints(string[] values) => values.Select(v => int.Parse(v, CultureInfo.InvariantCulture)).ToArray();
}
