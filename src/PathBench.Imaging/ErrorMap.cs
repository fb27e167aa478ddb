using System.Globalization;
using SkiaSharp;

namespace PathBench.Imaging;

/// <summary>What a per-pixel error map shows.</summary>
public enum ErrorMapKind
{
    /// <summary>mean over R, G, B of |x − r|/√(r² + ε): the square root of each relMSE term.</summary>
    Relative,

    /// <summary>mean over R, G, B of |x − r|.</summary>
    Absolute,
}

/// <summary>
/// Per-pixel error maps drawn in viridis with a labelled scale bar, and the reference | test |
/// error strip. Non-finite pixels are drawn magenta, which viridis never produces.
/// </summary>
public static class ErrorMap
{
    // Scale-bar and label geometry in pixels; small enough for thumbnails, large enough for 11 px text.
    private const int Margin = 8;
    private const int BarWidth = 16;
    private const int LabelWidth = 84;
    private const int TitleHeight = 20;
    private const int MinPanelHeight = 160;
    private const int Ticks = 5;

    /// <summary>Per-pixel error over <paramref name="region"/>, row-major; NaN where either image is non-finite.</summary>
    public static float[] Compute(RgbImage reference, RgbImage test, PixelRect region, ErrorMapKind kind, double epsilon)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(test);
        region.ThrowIfOutside(reference.Width, reference.Height);
        region.ThrowIfOutside(test.Width, test.Height);
        var map = new float[region.PixelCount];
        Parallel.For(0, region.Height, y =>
        {
            ReadOnlySpan<float> rr = reference.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
            ReadOnlySpan<float> tr = test.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
            for (int x = 0; x < region.Width; x++)
            {
                double sum = 0;
                bool finite = true;
                for (int c = 0; c < 3; c++)
                {
                    double r = rr[(x * 3) + c], t = tr[(x * 3) + c];
                    finite &= double.IsFinite(r) && double.IsFinite(t);
                    double d = Math.Abs(t - r);
                    sum += kind == ErrorMapKind.Relative ? d / Math.Sqrt((r * r) + epsilon) : d;
                }

                map[((long)y * region.Width) + x] = finite ? (float)(sum / 3) : float.NaN;
            }
        });
        return map;
    }

    /// <summary>
    /// Top of the colour scale: the 99th percentile of the finite errors, so a few fireflies do not
    /// turn the rest of the map dark (common practice); the maximum if that is 0; 1 if all are 0.
    /// Above 2^20 pixels the percentile is taken over an evenly strided subset of about 2^20 of them.
    /// </summary>
    public static double ScaleTop(float[] errors)
    {
        ArgumentNullException.ThrowIfNull(errors);
        int stride = Math.Max(1, errors.Length >> 20);
        var sample = new List<float>(Math.Min(errors.Length, (1 << 20) + 1));
        for (int i = 0; i < errors.Length; i += stride)
        {
            if (float.IsFinite(errors[i]))
            {
                sample.Add(errors[i]);
            }
        }

        float[] finite = [.. sample];
        if (finite.Length == 0)
        {
            return 1;
        }

        Array.Sort(finite);
        double top = finite[(int)Math.Min(finite.Length - 1, Math.Floor(0.99 * finite.Length))];
        if (top <= 0)
        {
            top = finite[^1];
        }

        return top > 0 ? top : 1;
    }

    /// <summary>Writes the error map with its scale bar as PNG.</summary>
    public static void WriteHeatmap(string path, float[] errors, int width, int height, double top, string title)
    {
        ArgumentNullException.ThrowIfNull(errors);
        int mag = Magnification(width, height, 1);
        int panelW = width * mag, panelH = height * mag;
        int canvasW = Margin + panelW + Margin + BarWidth + LabelWidth;
        int canvasH = TitleHeight + panelH + Margin;
        RequireCanvas(path, canvasW, canvasH);
        using var bitmap = new SKBitmap(new SKImageInfo(canvasW, canvasH, SKColorType.Rgba8888, SKAlphaType.Opaque));
        using var canvas = new SKCanvas(bitmap);
        canvas.Clear(SKColors.White);
        using SKBitmap map = HeatBitmap(errors, width, height, top);
        DrawPanel(canvas, map, Margin, TitleHeight, mag, title);
        DrawScaleBar(canvas, Margin + panelW + Margin, TitleHeight, panelH, top);
        Save(path, bitmap);
    }

    /// <summary>Writes reference | test | error side by side as PNG (reference and test through <paramref name="display"/>).</summary>
    public static void WriteSideBySide(
        string path, RgbImage reference, RgbImage test, PixelRect region, float[] errors, double top, DisplayTransform display, string errorTitle)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(test);
        int mag = Magnification(region.Width, region.Height, 3);
        int panelW = region.Width * mag, panelH = region.Height * mag;
        long canvasWide = Margin + (3L * (panelW + Margin)) + BarWidth + LabelWidth;
        int canvasH = TitleHeight + panelH + Margin;
        RequireCanvas(path, canvasWide, canvasH);
        int canvasW = (int)canvasWide;
        using var bitmap = new SKBitmap(new SKImageInfo(canvasW, canvasH, SKColorType.Rgba8888, SKAlphaType.Opaque));
        using var canvas = new SKCanvas(bitmap);
        canvas.Clear(SKColors.White);
        using (SKBitmap r = DisplayBitmap(reference.Crop(region), display))
        {
            DrawPanel(canvas, r, Margin, TitleHeight, mag, "reference");
        }

        using (SKBitmap t = DisplayBitmap(test.Crop(region), display))
        {
            DrawPanel(canvas, t, Margin + panelW + Margin, TitleHeight, mag, "test");
        }

        using (SKBitmap e = HeatBitmap(errors, region.Width, region.Height, top))
        {
            DrawPanel(canvas, e, Margin + (2 * (panelW + Margin)), TitleHeight, mag, errorTitle);
        }

        DrawScaleBar(canvas, Margin + (3 * (panelW + Margin)), TitleHeight, panelH, top);
        Save(path, bitmap);
    }

    /// <summary>The scale-bar labels: <see cref="Ticks"/> evenly spaced values from 0 to the top, the top marked "≥".</summary>
    public static IReadOnlyList<string> TickLabels(double top)
    {
        var labels = new List<string>();
        for (int i = 0; i < Ticks; i++)
        {
            double v = top * i / (Ticks - 1);
            string text = v.ToString("G3", CultureInfo.InvariantCulture);
            labels.Add(i == Ticks - 1 ? "≥" + text : text);
        }

        return labels;
    }

    // Small images are enlarged so they can be seen (up to 16×), by their height, but never
    // so much that the panels grow wider than MaxCanvasSide.
    private static int Magnification(int width, int height, int panels) =>
        Math.Clamp(Math.Min((MinPanelHeight + height - 1) / height, MaxCanvasSide / Math.Max(1, panels * width)), 1, 16);

    /// <summary>The widest canvas an error map is drawn on before enlargement stops.</summary>
    private const int MaxCanvasSide = 8192;

    private static void RequireCanvas(string path, long width, long height) => PngCodec.RequireEncodable(path, width, height);

    /// <summary>
    /// The memory drawing a heat map (<paramref name="panels"/> = 1) or a side-by-side strip (3) of a
    /// width×height region needs, from the region's size alone; a canvas the PNG encoder would refuse
    /// is refused here, before any metric is computed. The canvas is held as RGBA and once more as
    /// the encoder's copy (8 bytes a canvas pixel); each panel's source holds a cropped float image,
    /// a colour array and a bitmap (12 + 4 + 4 bytes a region pixel), with the error plane (4).
    /// </summary>
    public static Int128 RequireDrawable(string path, long width, long height, int panels)
    {
        int mag = Magnification((int)Math.Min(width, int.MaxValue), (int)Math.Min(height, int.MaxValue), panels);
        long canvasW = Margin + (panels * ((width * mag) + Margin)) + BarWidth + LabelWidth;
        long canvasH = TitleHeight + (height * mag) + Margin;
        RequireCanvas(path, canvasW, canvasH);
        return ((Int128)canvasW * canvasH * 8) + ((Int128)width * height * ((panels * 20) + 4));
    }

    private static SKBitmap HeatBitmap(float[] errors, int width, int height, double top)
    {
        if (errors.LongLength != (long)width * height)
        {
            throw new ArgumentException("error map size does not match the image", nameof(errors));
        }

        var bitmap = new SKBitmap(new SKImageInfo(width, height, SKColorType.Rgba8888, SKAlphaType.Opaque));
        var pixels = new SKColor[errors.Length];
        for (int i = 0; i < errors.Length; i++)
        {
            float e = errors[i];
            if (float.IsFinite(e))
            {
                (byte r, byte g, byte b) = Viridis.Map(e / top);
                pixels[i] = new SKColor(r, g, b);
            }
            else
            {
                pixels[i] = new SKColor(255, 0, 255);
            }
        }

        bitmap.Pixels = pixels;
        return bitmap;
    }

    private static SKBitmap DisplayBitmap(RgbImage image, DisplayTransform display)
    {
        var bitmap = new SKBitmap(new SKImageInfo(image.Width, image.Height, SKColorType.Rgba8888, SKAlphaType.Opaque));
        var pixels = new SKColor[image.PixelCount];
        Span<byte> rgb = stackalloc byte[3];
        for (int i = 0; i < pixels.Length; i++)
        {
            display.Apply(image.Data[i * 3], image.Data[(i * 3) + 1], image.Data[(i * 3) + 2], rgb);
            pixels[i] = new SKColor(rgb[0], rgb[1], rgb[2]);
        }

        bitmap.Pixels = pixels;
        return bitmap;
    }

    private static void DrawPanel(SKCanvas canvas, SKBitmap panel, int x, int y, int mag, string title)
    {
        using var image = SKImage.FromBitmap(panel);
        canvas.DrawImage(image, new SKRect(x, y, x + (panel.Width * mag), y + (panel.Height * mag)), new SKSamplingOptions(SKFilterMode.Nearest));
        using var font = new SKFont(SKTypeface.Default, 12);
        using var paint = new SKPaint { Color = SKColors.Black, IsAntialias = true };
        canvas.DrawText(title, x, y - 6, SKTextAlign.Left, font, paint);
    }

    private static void DrawScaleBar(SKCanvas canvas, int x, int y, int height, double top)
    {
        using var paint = new SKPaint { IsAntialias = false };
        for (int row = 0; row < height; row++)
        {
            (byte r, byte g, byte b) = Viridis.Map(1.0 - (row / (double)Math.Max(1, height - 1)));
            paint.Color = new SKColor(r, g, b);
            canvas.DrawRect(x, y + row, BarWidth, 1, paint);
        }

        using var font = new SKFont(SKTypeface.Default, 11);
        using var text = new SKPaint { Color = SKColors.Black, IsAntialias = true };
        IReadOnlyList<string> labels = TickLabels(top);
        for (int i = 0; i < labels.Count; i++)
        {
            float ty = y + height - 1 - ((height - 1) * i / (float)(labels.Count - 1));
            canvas.DrawRect(x + BarWidth, ty, 4, 1, text);
            canvas.DrawText(labels[i], x + BarWidth + 6, Math.Clamp(ty + 4, y + 9, y + height), SKTextAlign.Left, font, text);
        }
    }

    private static void Save(string path, SKBitmap bitmap)
    {
        ImageFile.WriteAtomically(path, stream => PngCodec.WriteBitmap(stream, bitmap));
    }
}
