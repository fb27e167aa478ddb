using System.Globalization;
using PathBench.Io;
using ScottPlot;

namespace PathBench.Analysis;

/// <summary>
/// The study's plots, each as PNG and SVG (ScottPlot): MSE against spp on log-log axes with each
/// configuration's 95 % intervals and fitted line; efficiency against spp; MSE at equal time. They
/// are views of <c>summary.json</c>, never the only copy of a number.
/// </summary>
public static class StudyPlots
{
    private const int PlotWidth = 800;
    private const int PlotHeight = 560;

    /// <summary>Writes every plot into <paramref name="directory"/> and returns the files written.</summary>
    public static IReadOnlyList<string> Write(string directory, StudySummary summary)
    {
        ArgumentNullException.ThrowIfNull(summary);
        var files = new List<string>();
        files.AddRange(Save(MsePlot(summary), directory, "mse-vs-spp"));
        files.AddRange(Save(EfficiencyPlot(summary), directory, "efficiency"));
        files.AddRange(Save(EqualTimePlot(summary), directory, "mse-at-equal-time"));
        return files;
    }

    /// <summary>The colour of configuration <paramref name="index"/> in every plot and in the win map (Okabe &amp; Ito 2008, see <see cref="WinMapImage"/>).</summary>
    public static Color ColourOf(int index)
    {
        (byte r, byte g, byte b) = WinMapImage.Palette[index % WinMapImage.Palette.Count];
        return new Color(r, g, b);
    }

    private static Plot MsePlot(StudySummary summary)
    {
        var plot = new Plot();
        for (int i = 0; i < summary.Configurations.Count; i++)
        {
            ConfigurationSummary c = summary.Configurations[i];
            StudyPoint[] points = [.. c.Points.Where(p => p.Mse > 0)];
            if (points.Length == 0)
            {
                continue;
            }

            double[] xs = [.. points.Select(p => Math.Log10(p.Spp))];
            double[] ys = [.. points.Select(p => Math.Log10(p.Mse))];
            var scatter = plot.Add.ScatterPoints(xs, ys, ColourOf(i));
            scatter.MarkerSize = 8;
            string slope = c.Slope is { } f ? string.Create(CultureInfo.InvariantCulture, $" (slope {f.Slope:F2})") : "";
            scatter.LegendText = c.Configuration.Name + slope;

            // 95 % intervals of the mean MSE, in log space (a lower end at or below zero is drawn to the axis floor).
            for (int k = 0; k < points.Length; k++)
            {
                if (points[k].MseLow is { } lo && points[k].MseHigh is { } hi)
                {
                    double bottom = lo > 0 ? Math.Log10(lo) : ys[k] - 1;
                    var bar = plot.Add.Line(xs[k], bottom, xs[k], Math.Log10(hi));
                    bar.Color = ColourOf(i);
                    bar.LineWidth = 1.5f;
                }
            }

            if (c.Slope is { } fit)
            {
                // log10 MSE = log10(e)·(intercept + slope·ln spp) = intercept·log10(e) + slope·log10 spp.
                double x0 = xs[0], x1 = xs[^1];
                double a = fit.Intercept / Math.Log(10);
                var line = plot.Add.Line(x0, a + (fit.Slope * x0), x1, a + (fit.Slope * x1));
                // Solid: Skia's SVG canvas cannot write dash effects (it prints a warning per line).
                line.Color = ColourOf(i).WithAlpha(0.6);
                line.LineWidth = 1.5f;
            }
        }

        return Finish(plot, summary, "MSE against samples per pixel (95 % intervals over replicates, fitted slopes)", "MSE (corrected for the reference's noise)");
    }

    private static Plot EfficiencyPlot(StudySummary summary)
    {
        var plot = new Plot();
        for (int i = 0; i < summary.Configurations.Count; i++)
        {
            ConfigurationSummary c = summary.Configurations[i];
            StudyPoint[] points = [.. c.Points.Where(p => p.Efficiency is > 0)];
            if (points.Length == 0)
            {
                continue;
            }

            double[] xs = [.. points.Select(p => Math.Log10(p.Spp))];
            double[] ys = [.. points.Select(p => Math.Log10(p.Efficiency!.Value))];
            var scatter = plot.Add.Scatter(xs, ys, ColourOf(i));
            scatter.LegendText = c.Configuration.Name;
            scatter.MarkerSize = 7;
        }

        return Finish(plot, summary, "Efficiency = 1 / (MSE × seconds); higher is better", "efficiency (1 / (MSE·s))");
    }

    /// <summary>Log-log axes with a tick at each spp of the ladder, titles and the legend.</summary>
    private static Plot Finish(Plot plot, StudySummary summary, string title, string yLabel)
    {
        LogAxes(plot, x: true, y: true, summary.Result.Study.Spp);
        plot.Title(title);
        plot.XLabel("samples per pixel");
        plot.YLabel(yLabel);
        plot.ShowLegend(Alignment.UpperRight);
        return plot;
    }

    private static Plot EqualTimePlot(StudySummary summary)
    {
        var plot = new Plot();
        EqualTimeComparison et = summary.EqualTime;
        var ticks = new List<Tick>();
        var bars = new List<Bar>();
        for (int i = 0; i < et.Entries.Count; i++)
        {
            EqualTimeEntry e = et.Entries[i];
            ticks.Add(new Tick(i, e.Name));
            if (e.Mse is not { } mse || !(mse > 0))
            {
                continue;
            }

            bars.Add(new Bar { Position = i, Value = Math.Log10(mse), FillColor = ColourOf(i) });
        }

        // Bars grow up from below the smallest value, so their lengths compare on the log axis.
        if (bars.Count > 0)
        {
            double floor = Math.Floor(bars.Min(b => b.Value)) - 0.5;
            foreach (Bar b in bars)
            {
                b.ValueBase = floor;
            }

            plot.Add.Bars(bars);
        }

        plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual([.. ticks]);
        LogAxes(plot, x: false, y: true, []);
        plot.Title(string.Create(CultureInfo.InvariantCulture, $"MSE at equal time ({et.Seconds:G3} s per image); lower is better"));
        plot.YLabel("MSE at equal time");
        return plot;
    }

    private static void LogAxes(Plot plot, bool x, bool y, IReadOnlyList<int> spp)
    {
        static string Power(double v) => string.Create(CultureInfo.InvariantCulture, $"{Math.Pow(10, v):G3}");
        if (x)
        {
            // One tick at each sample count of the ladder.
            plot.Axes.Bottom.TickGenerator = new ScottPlot.TickGenerators.NumericManual(
                [.. spp.Select(n => new Tick(Math.Log10(n), n.ToString(CultureInfo.InvariantCulture)))]);
        }

        if (y)
        {
            plot.Axes.Left.TickGenerator = new ScottPlot.TickGenerators.NumericAutomatic
            {
                MinorTickGenerator = new ScottPlot.TickGenerators.LogMinorTickGenerator(),
                IntegerTicksOnly = true,
                LabelFormatter = Power,
            };
        }
    }

    private static IEnumerable<string> Save(Plot plot, string directory, string name)
    {
        string png = Path.Combine(directory, name + ".png");
        string svg = Path.Combine(directory, name + ".svg");
        AtomicFile.WriteBytes(png, plot.GetImageBytes(PlotWidth, PlotHeight, ImageFormat.Png));
        AtomicFile.WriteText(svg, plot.GetSvgXml(PlotWidth, PlotHeight));
        return [png, svg];
    }
}
