using System.Globalization;
using SkiaSharp;

namespace PathBench.Imaging.Tests;

/// <summary>Viridis table, error maps, scale bar and side-by-side strip.</summary>
public sealed class ErrorMapTests
{
    [Fact]
    public void Viridis_table_equals_matplotlib()
    {
        // Live: the published viridis data as shipped in Debian's python3-matplotlib.
        ReferenceTools.Result r = ExternalTool.Run(
            ExternalTool.Python,
            "python3-matplotlib",
            ["-c", "from matplotlib import _cm_listed as c; print('\\n'.join(' '.join(repr(v) for v in row) for row in c._viridis_data))"]);
        Assert.True(r.ExitCode == 0, $"matplotlib failed (install python3-matplotlib): {r.Stderr}");
        string[] rows = r.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(Viridis.Size, rows.Length);
        for (int i = 0; i < rows.Length; i++)
        {
            double[] v = rows[i].Split(' ').Select(t => double.Parse(t, CultureInfo.InvariantCulture)).ToArray();
            Assert.Equal((v[0], v[1], v[2]), Viridis.Entry(i));
        }
    }

    [Fact]
    public void Viridis_ends_are_dark_violet_and_yellow()
    {
        // First and last entries of viridis (matplotlib data; from memory, checked live above).
        Assert.Equal((0.267004, 0.004874, 0.329415), Viridis.Entry(0));
        Assert.Equal((0.993248, 0.906157, 0.143936), Viridis.Entry(255));
        Assert.Equal(((byte)68, (byte)1, (byte)84), Viridis.Map(0));
        Assert.Equal(((byte)253, (byte)231, (byte)37), Viridis.Map(1));
    }

    [Fact]
    public void Relative_and_absolute_maps_follow_their_formulas()
    {
        RgbImage r = SyntheticImages.Flat(2, 1, 1f, 0.5f, 0f);
        RgbImage t = SyntheticImages.Flat(2, 1, 1.5f, 0.5f, 0.1f);
        t.At(1, 0, 2) = float.NaN;
        float[] abs = ErrorMap.Compute(r, t, PixelRect.Full(2, 1), ErrorMapKind.Absolute, 0.01);
        float[] rel = ErrorMap.Compute(r, t, PixelRect.Full(2, 1), ErrorMapKind.Relative, 0.01);
        Assert.Equal((float)((0.5 + 0 + 0.1) / 3), abs[0], 6);
        Assert.Equal((float)(((0.5 / Math.Sqrt(1.01)) + 0 + (0.1 / Math.Sqrt(0.01))) / 3), rel[0], 6);
        Assert.True(float.IsNaN(abs[1]) && float.IsNaN(rel[1]));
    }

    [Fact]
    public void Scale_top_ignores_the_brightest_percent()
    {
        float[] errors = Enumerable.Range(0, 1000).Select(i => i < 995 ? 0.1f : 50f).Append(float.NaN).ToArray();
        Assert.Equal(0.1, ErrorMap.ScaleTop(errors), 6);
        Assert.Equal(["0", "0.125", "0.25", "0.375", "≥0.5"], ErrorMap.TickLabels(0.5));
    }

    [Fact]
    public void Heatmap_png_shows_the_map_the_bar_and_its_labels()
    {
        using var dir = new TempFolder();
        string path = dir.File("heat.png");
        var errors = new float[40 * 20];
        for (int i = 0; i < errors.Length; i++)
        {
            errors[i] = (i % 40) / 39f; // left 0, right 1
        }

        ErrorMap.WriteHeatmap(path, errors, 40, 20, 1.0, "absolute error");
        using SKBitmap png = SKBitmap.Decode(path);
        int mag = 8; // 160 px minimum panel height / 20 rows
        Assert.Equal(20 * mag + 20 + 8, png.Height);
        Assert.Equal(8 + (40 * mag) + 8 + 16 + 84, png.Width);

        // Panel: left column is viridis(0), right column viridis(1).
        Assert.Equal(new SKColor(68, 1, 84), png.GetPixel(8 + 2, 20 + 10));
        Assert.Equal(new SKColor(253, 231, 37), png.GetPixel(8 + (40 * mag) - 2, 20 + 10));

        // Bar: top is the top of the scale, bottom is 0.
        int barX = 8 + (40 * mag) + 8 + 8;
        Assert.Equal(new SKColor(253, 231, 37), png.GetPixel(barX, 20));
        Assert.Equal(new SKColor(68, 1, 84), png.GetPixel(barX, 20 + (20 * mag) - 1));

        // Labels: dark text pixels in the label column.
        int dark = 0;
        for (int y = 0; y < png.Height; y++)
        {
            for (int x = barX + 8 + 6; x < png.Width; x++)
            {
                SKColor c = png.GetPixel(x, y);
                dark += c.Red + c.Green + c.Blue < 200 ? 1 : 0;
            }
        }

        Assert.True(dark > 50, $"only {dark} dark pixels where the scale labels should be (is a font installed? fonts-dejavu-core)");
    }

    [Fact]
    public void Side_by_side_holds_reference_test_and_error_panels()
    {
        using var dir = new TempFolder();
        string path = dir.File("strip.png");
        RgbImage r = SyntheticImages.Flat(16, 16, 0.18f, 0.18f, 0.18f);
        RgbImage t = SyntheticImages.Flat(16, 16, 1f, 1f, 1f);
        float[] errors = ErrorMap.Compute(r, t, PixelRect.Full(16, 16), ErrorMapKind.Absolute, 0.01);
        ErrorMap.WriteSideBySide(path, r, t, PixelRect.Full(16, 16), errors, 1.0, new DisplayTransform(), "absolute error");
        using SKBitmap png = SKBitmap.Decode(path);
        int mag = 10, panel = 16 * mag;
        Assert.Equal(8 + (3 * (panel + 8)) + 16 + 84, png.Width);
        byte grey = Srgb.EncodeToByte(0.18);
        Assert.Equal(new SKColor(grey, grey, grey), png.GetPixel(8 + 5, 20 + 5));
        Assert.Equal(new SKColor(255, 255, 255), png.GetPixel(8 + panel + 8 + 5, 20 + 5));
        (byte vr, byte vg, byte vb) = Viridis.Map(0.82);
        Assert.Equal(new SKColor(vr, vg, vb), png.GetPixel(8 + (2 * (panel + 8)) + 5, 20 + 5));
    }
}
