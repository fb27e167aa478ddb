using System.Globalization;
using System.Text;
using PathBench.Imaging;
using PathBench.Io;
using SkiaSharp;

namespace PathBench.Analysis;

/// <summary>
/// Draws a <see cref="WinMap"/>: the reference in grey, each tile tinted with the colour of the
/// configuration that wins it at equal time, tiles without a significant winner left grey and
/// hatched, and a legend with every configuration's share of the image. Colours are the
/// colour-blind-safe palette of Okabe &amp; Ito (2008, "Color Universal Design"), black left out
/// because the hatching is dark; past seven configurations the colours repeat (the legend says so).
/// </summary>
public static class WinMapImage
{
    /// <summary>Okabe–Ito colours: orange, sky blue, bluish green, blue, vermillion, reddish purple, and yellow last (it reads worst on white).</summary>
    public static readonly IReadOnlyList<(byte R, byte G, byte B)> Palette =
    [
        (230, 159, 0), (86, 180, 233), (0, 158, 115), (0, 114, 178), (213, 94, 0), (204, 121, 167), (240, 228, 66),
    ];

    private const int LegendRow = 20;
    private const int Margin = 10;
    private const byte TintAlpha = 150;

    /// <summary>Writes the map as PNG, magnified so small images stay readable.</summary>
    public static void WritePng(string path, WinMap map, ReferenceImage reference, IReadOnlyList<string> names, string title)
    {
        ArgumentNullException.ThrowIfNull(map);
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(names);
        (int mag, int panelW, int panelH, int canvasW, int canvasH) = Layout(map, names.Count);
        PngCodec.RequireEncodable(path, canvasW, canvasH);
        using var bitmap = new SKBitmap(new SKImageInfo(canvasW, canvasH, SKColorType.Rgba8888, SKAlphaType.Opaque));
        using var canvas = new SKCanvas(bitmap);
        canvas.Clear(SKColors.White);
        using var font = new SKFont(SKTypeface.Default, 13);
        using var text = new SKPaint { Color = SKColors.Black, IsAntialias = true };
        canvas.DrawText(title, Margin, 17, SKTextAlign.Left, font, text);

        using (SKBitmap grey = GreyReference(reference))
        using (var image = SKImage.FromBitmap(grey))
        {
            canvas.DrawImage(image, new SKRect(Margin, 24, Margin + panelW, 24 + panelH), new SKSamplingOptions(SKFilterMode.Nearest));
        }

        using var tint = new SKPaint { IsAntialias = false };
        using var hatch = new SKPaint { Color = new SKColor(60, 60, 60, 110), StrokeWidth = 1, IsAntialias = true };
        using var grid = new SKPaint { Color = new SKColor(255, 255, 255, 90), Style = SKPaintStyle.Stroke, StrokeWidth = 1 };
        for (int t = 0; t < map.Winners.Count; t++)
        {
            SKRect r = TileRect(map, t, mag, Margin, 24);
            int w = map.Winners[t];
            if (w == WinMap.NoDifference)
            {
                canvas.Save();
                canvas.ClipRect(r);
                for (float d = -r.Height; d < r.Width; d += 6)
                {
                    canvas.DrawLine(r.Left + d, r.Bottom, r.Left + d + r.Height, r.Top, hatch);
                }

                canvas.Restore();
            }
            else
            {
                (byte cr, byte cg, byte cb) = Palette[w % Palette.Count];
                tint.Color = new SKColor(cr, cg, cb, TintAlpha);
                canvas.DrawRect(r, tint);
            }

            canvas.DrawRect(r, grid);
        }

        float y = 24 + panelH + Margin;
        for (int i = 0; i <= names.Count; i++)
        {
            bool none = i == names.Count;
            var swatch = new SKRect(Margin, y + 3, Margin + 14, y + 17);
            if (none)
            {
                tint.Color = new SKColor(200, 200, 200);
                canvas.DrawRect(swatch, tint);
                canvas.DrawLine(swatch.Left, swatch.Bottom, swatch.Right, swatch.Top, hatch);
            }
            else
            {
                (byte cr, byte cg, byte cb) = Palette[i % Palette.Count];
                tint.Color = new SKColor(cr, cg, cb);
                canvas.DrawRect(swatch, tint);
            }

            canvas.DrawText(LegendLine(map, names, i), Margin + 22, y + 15, SKTextAlign.Left, font, text);
            y += LegendRow;
        }

        ImageFile.WriteAtomically(path, stream => PngCodec.WriteBitmap(stream, bitmap));
    }

    /// <summary>Writes the map as SVG: one rectangle per tile and the legend (no reference image, so it stays small).</summary>
    public static void WriteSvg(string path, WinMap map, IReadOnlyList<string> names, string title)
    {
        ArgumentNullException.ThrowIfNull(map);
        ArgumentNullException.ThrowIfNull(names);
        (int mag, _, int panelH, int width, int height) = Layout(map, names.Count);
        var svg = new StringBuilder();
        svg.Append(CultureInfo.InvariantCulture, $"<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width}\" height=\"{height}\" font-family=\"sans-serif\" font-size=\"13\">\n");
        svg.Append("<defs><pattern id=\"none\" width=\"6\" height=\"6\" patternUnits=\"userSpaceOnUse\" patternTransform=\"rotate(45)\"><rect width=\"6\" height=\"6\" fill=\"#dcdcdc\"/><line x1=\"0\" y1=\"0\" x2=\"0\" y2=\"6\" stroke=\"#3c3c3c\" stroke-opacity=\"0.45\"/></pattern></defs>\n");
        svg.Append(CultureInfo.InvariantCulture, $"<rect width=\"{width}\" height=\"{height}\" fill=\"white\"/><text x=\"{Margin}\" y=\"17\">{Escape(title)}</text>\n");
        for (int t = 0; t < map.Winners.Count; t++)
        {
            SKRect r = TileRect(map, t, mag, Margin, 24);
            int w = map.Winners[t];
            string fill = w == WinMap.NoDifference ? "url(#none)" : Hex(Palette[w % Palette.Count]);
            string label = w == WinMap.NoDifference ? "no significant difference" : names[w];
            svg.Append(CultureInfo.InvariantCulture, $"<rect x=\"{r.Left}\" y=\"{r.Top}\" width=\"{r.Width}\" height=\"{r.Height}\" fill=\"{fill}\" stroke=\"white\" stroke-width=\"0.5\"><title>{Escape(label)}</title></rect>\n");
        }

        float y = 24 + panelH + Margin;
        for (int i = 0; i <= names.Count; i++)
        {
            string fill = i == names.Count ? "url(#none)" : Hex(Palette[i % Palette.Count]);
            svg.Append(CultureInfo.InvariantCulture, $"<rect x=\"{Margin}\" y=\"{y + 3}\" width=\"14\" height=\"14\" fill=\"{fill}\"/><text x=\"{Margin + 22}\" y=\"{y + 15}\">{Escape(LegendLine(map, names, i))}</text>\n");
            y += LegendRow;
        }

        svg.Append("</svg>\n");
        AtomicFile.WriteText(path, svg.ToString());
    }

    private static string LegendLine(WinMap map, IReadOnlyList<string> names, int i)
    {
        if (i == names.Count)
        {
            return string.Create(CultureInfo.InvariantCulture,
                $"no significant difference (Welch, FDR {WinMap.FalseDiscoveryRate:0.##}): {100 * map.NoDifferenceFraction:F1} %");
        }

        string repeat = i >= Palette.Count ? " (colour repeats)" : "";
        return string.Create(CultureInfo.InvariantCulture, $"{names[i]}: wins {100 * map.WinFractions[i]:F1} %{repeat}");
    }

    /// <summary>Magnification (small images are enlarged up to 8× towards 640 px), panel and canvas sizes: title, panel, legend of one row per configuration and one for "no difference".</summary>
    private static (int Mag, int PanelW, int PanelH, int CanvasW, int CanvasH) Layout(WinMap map, int configurations)
    {
        int mag = Math.Clamp(640 / Math.Max(1, map.Width), 1, 8);
        int panelW = map.Width * mag, panelH = map.Height * mag;
        return (mag, panelW, panelH, Math.Max(panelW + (2 * Margin), 360), 24 + panelH + Margin + ((configurations + 1) * LegendRow) + Margin);
    }

    private static SKRect TileRect(WinMap map, int t, int mag, int x0, int y0)
    {
        int tx = t % map.TilesX, ty = t / map.TilesX;
        int left = tx * WinMap.TileSize, top = ty * WinMap.TileSize;
        int right = Math.Min(map.Width, left + WinMap.TileSize), bottom = Math.Min(map.Height, top + WinMap.TileSize);
        return new SKRect(x0 + (left * mag), y0 + (top * mag), x0 + (right * mag), y0 + (bottom * mag));
    }

    /// <summary>The reference's luminance, scaled so its 99th percentile is white, sRGB-encoded and faded towards white so tints read.</summary>
    private static SKBitmap GreyReference(ReferenceImage reference)
    {
        int n = reference.Width * reference.Height;
        var y = new double[n];
        for (int p = 0; p < n; p++)
        {
            y[p] = Math.Max(0, Luminance.Rec709(reference.Value[3 * p], reference.Value[(3 * p) + 1], reference.Value[(3 * p) + 2]));
        }

        double[] sorted = [.. y.Where(double.IsFinite).Order()];
        double white = sorted.Length == 0 ? 1 : Math.Max(sorted[(int)(0.99 * (sorted.Length - 1))], 1e-12);
        var bitmap = new SKBitmap(new SKImageInfo(reference.Width, reference.Height, SKColorType.Rgba8888, SKAlphaType.Opaque));
        var pixels = new SKColor[n];
        for (int p = 0; p < n; p++)
        {
            byte g = Srgb.EncodeToByte(Math.Min(1, y[p] / white));
            byte faded = (byte)(64 + (g * 3 / 4));
            pixels[p] = new SKColor(faded, faded, faded);
        }

        bitmap.Pixels = pixels;
        return bitmap;
    }

    private static string Hex((byte R, byte G, byte B) c) => string.Create(CultureInfo.InvariantCulture, $"#{c.R:x2}{c.G:x2}{c.B:x2}");

    private static string Escape(string s) => s.Replace("&", "&amp;", StringComparison.Ordinal).Replace("<", "&lt;", StringComparison.Ordinal).Replace(">", "&gt;", StringComparison.Ordinal);
}
