using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using PathBench.Imaging;
using PathBench.Io;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench compare REFERENCE TEST</c>: error metrics of a test render against a reference
/// (MSE, RMSE, relMSE, SMAPE, PSNR, SSIM, bias; pooled, per channel and on luminance), optional
/// error map and side-by-side strip. Formulas and sources: <see cref="ImageComparison"/>, <see cref="Ssim"/>.
/// </summary>
internal static class CompareCommand
{
    public static Command Create(CliIo io)
    {
        var reference = new Argument<string>("reference") { Description = "Ground-truth image (PFM, OpenEXR or PNG)" };
        var test = new Argument<string>("test") { Description = "Image to measure, same size" };
        var roi = new Option<string?>("--roi") { Description = "Restrict every metric to the region X,Y,W,H (pixels, origin top-left)" };
        var epsilon = new Option<double>("--epsilon")
        {
            Description = "The ε of relMSE = mean (x−r)²/(r²+ε) and SMAPE = mean |x−r|/(|x|+|r|+ε)",
            DefaultValueFactory = _ => 0.01,
        };
        var dataRange = new Option<double>("--data-range")
        {
            Description = "Peak of PSNR and L of SSIM (linear value of white)",
            DefaultValueFactory = _ => 1.0,
        };
        var heatmap = new Option<string?>("--heatmap") { Description = "Write a per-pixel error map with a scale bar (PNG)" };
        var errorKind = new Option<string>("--error")
        {
            Description = "Error shown by --heatmap and --side-by-side: relative (|x−r|/√(r²+ε)) or absolute (|x−r|)",
            DefaultValueFactory = _ => "relative",
        };
        errorKind.AcceptOnlyFromAmong("relative", "absolute");
        var sideBySide = new Option<string?>("--side-by-side") { Description = "Write reference | test | error as one PNG strip" };
        var exposure = new Option<double>("--exposure") { Description = "Exposure in stops for the images of --side-by-side" };
        var tone = new Option<string>("--tone") { Description = "Tone curve for --side-by-side: clamp or reinhard", DefaultValueFactory = _ => "clamp" };
        tone.AcceptOnlyFromAmong("clamp", "reinhard");
        var json = new Option<bool>("--json") { Description = "Write JSON instead of a table" };

        var exrSelection = new ExrSelectionOptions();
        var command = new Command("compare", "Error metrics of a test image against a reference image");
        command.Arguments.Add(reference);
        command.Arguments.Add(test);
        foreach (Option o in new Option[] { roi, epsilon, dataRange, heatmap, errorKind, sideBySide, exposure, tone, json })
        {
            command.Options.Add(o);
        }

        exrSelection.AddTo(command);

        command.SetAction(parse =>
        {
            string refPath = parse.GetValue(reference)!;
            string testPath = parse.GetValue(test)!;
            double eps = parse.GetValue(epsilon);
            double range = parse.GetValue(dataRange);
            if (!(eps > 0) || !double.IsFinite(eps))
            {
                throw new CliUsageException(FormattableString.Invariant($"--epsilon must be a positive number, got {eps}"));
            }

            if (!(range > 0) || !double.IsFinite(range))
            {
                throw new CliUsageException(FormattableString.Invariant($"--data-range must be a positive number, got {range}"));
            }

            double stops = parse.GetValue(exposure);
            if (DisplayTransform.ExposureProblem("--exposure", stops) is { } problem)
            {
                throw new CliUsageException(problem);
            }

            string? heatmapPath = parse.GetValue(heatmap);
            string? stripPath = parse.GetValue(sideBySide);
            new OutputPaths().Input(refPath).Input(testPath)
                .Output(heatmapPath, "the heat map (PNG)", ".png")
                .Output(stripPath, "the side-by-side strip (PNG)", ".png");

            PixelRect? region = null;
            string? roiText = parse.GetValue(roi);
            if (roiText is not null)
            {
                try
                {
                    region = PixelRect.Parse(roiText);
                }
                catch (FormatException e)
                {
                    throw new CliUsageException($"--roi: {e.Message}", e);
                }
            }

            ExrReadOptions exr = exrSelection.Read(parse);
            // Both images have the reference's size (or the comparison is refused), so everything the
            // command will hold is known from the reference's header: refused there, before any decode.
            var limits = new ImageLimits(After: (w, h) => CompareBytes(w, h, heatmapPath, stripPath), Use: "and comparing them");
            ImageReadResult r = ImageFile.Read(refPath, limits, exr);
            ImageReadResult t = ImageFile.Read(testPath, limits, exr);
            PixelRect rw = r.DisplayWindow ?? PixelRect.Full(r.Image.Width, r.Image.Height);
            PixelRect tw = t.DisplayWindow ?? PixelRect.Full(t.Image.Width, t.Image.Height);
            // Different sizes get the comparison's own size message; same sizes at different places are refused here.
            if (rw != tw && (rw.Width, rw.Height) == (tw.Width, tw.Height))
            {
                throw new CliUsageException(FormattableString.Invariant(
                    $"{refPath} vs {testPath}: display windows differ: {rw.Width}x{rw.Height} at ({rw.X},{rw.Y}) and {tw.Width}x{tw.Height} at ({tw.X},{tw.Y})"));
            }
            var options = new ComparisonOptions { Epsilon = eps, DataRange = range, Region = region };
            ComparisonReport report;
            try
            {
                report = ImageComparison.Compare(r.Image, t.Image, options);
            }
            catch (ImageComparisonException e)
            {
                throw new CliUsageException($"{refPath} vs {testPath}: {e.Message}", e);
            }

            ErrorMapKind kind = parse.GetValue(errorKind) == "absolute" ? ErrorMapKind.Absolute : ErrorMapKind.Relative;
            double? scaleTop = null;
            if (heatmapPath is not null || stripPath is not null)
            {
                float[] errors = ErrorMap.Compute(r.Image, t.Image, report.Region, kind, eps);
                double top = ErrorMap.ScaleTop(errors);
                scaleTop = top;
                string title = kind == ErrorMapKind.Relative
                    ? FormattableString.Invariant($"relative error |x-r|/sqrt(r²+{eps:G3})")
                    : "absolute error |x-r|";
                if (heatmapPath is not null)
                {
                    ImageIo.Guard(heatmapPath, () => ErrorMap.WriteHeatmap(heatmapPath, errors, report.Width, report.Height, top, title));
                }

                if (stripPath is not null)
                {
                    var display = new DisplayTransform(stops, DisplayTransform.ParseCurve(parse.GetValue(tone)!));
                    ImageIo.Guard(stripPath, () => ErrorMap.WriteSideBySide(
                        stripPath, r.Image, t.Image, report.Region, errors, top, display, kind == ErrorMapKind.Relative ? "relative error" : "absolute error"));
                }
            }

            if (parse.GetValue(json))
            {
                WriteJson(io.Out, refPath, testPath, r, t, report, kind, scaleTop);
            }
            else
            {
                foreach (string note in r.Notes)
                {
                    io.Error.WriteLine($"pathbench: note: {refPath}: {note}");
                }

                foreach (string note in t.Notes)
                {
                    io.Error.WriteLine($"pathbench: note: {testPath}: {note}");
                }

                WriteTable(io.Out, refPath, testPath, r, t, report);
            }

            return 0;
        });
        return command;
    }

    /// <summary>
    /// What a comparison holds besides the image being decoded: the other image (12 bytes a pixel),
    /// the metrics' working memory (16 bytes a pixel: a 5000² PFM pair peaked at 32.8 bytes a pixel
    /// above the idle process, images included, measured with VmHWM), and the heat map's and
    /// strip's drawing (<see cref="ErrorMap.RequireDrawable"/>).
    /// </summary>
    private static Int128 CompareBytes(long width, long height, string? heatmapPath, string? stripPath)
    {
        Int128 bytes = (Int128)width * height * (ImageLimits.DecodedBytesPerPixel + 16);
        if (heatmapPath is not null)
        {
            bytes += ErrorMap.RequireDrawable(heatmapPath, width, height, 1);
        }

        if (stripPath is not null)
        {
            bytes += ErrorMap.RequireDrawable(stripPath, width, height, 3);
        }

        return bytes;
    }

    private static void WriteJson(TextWriter output, string refPath, string testPath, ImageReadResult r, ImageReadResult t, ComparisonReport report, ErrorMapKind kind, double? scaleTop)
    {
        JsonOutput.Write(output, w =>
        {
            w.WriteStartObject();
            w.WriteString("reference", refPath);
            w.WriteString("test", testPath);
            w.WriteString("reference_format", r.Format);
            w.WriteString("test_format", t.Format);
            w.WriteNumber("width", report.Width);
            w.WriteNumber("height", report.Height);
            w.WriteStartObject("roi");
            w.WriteNumber("x", report.Region.X);
            w.WriteNumber("y", report.Region.Y);
            w.WriteNumber("w", report.Region.Width);
            w.WriteNumber("h", report.Region.Height);
            w.WriteEndObject();
            w.WriteNumber("compared_pixels", report.ComparedPixels);
            w.WriteNumber("nonfinite_pixels", report.NonFinitePixels);
            w.Number("epsilon", report.Options.Epsilon);
            w.Number("data_range", report.Options.DataRange);
            WriteMetrics(w, report.All);

            // SSIM is on luminance only; null when the region is smaller than its 11x11 window.
            if (report.Ssim is double ssim)
            {
                w.Number("ssim", ssim);
            }
            else
            {
                w.WriteNull("ssim");
            }

            // psnr is null when MSE = 0 (identical images: infinite PSNR).
            w.WriteBoolean("psnr_infinite", double.IsPositiveInfinity(report.All.Psnr));
            w.WriteStartObject("channels");
            foreach ((string name, ErrorMetrics m) in new[] { ("r", report.R), ("g", report.G), ("b", report.B), ("luminance", report.Y) })
            {
                w.WriteStartObject(name);
                WriteMetrics(w, m);
                w.WriteEndObject();
            }

            w.WriteEndObject();
            if (scaleTop is double top)
            {
                w.WriteString("error_map", kind == ErrorMapKind.Relative ? "relative" : "absolute");
                w.Number("error_map_scale_top", top);
            }

            w.WriteStartArray("notes");
            foreach (string note in r.Notes.Select(n => $"{refPath}: {n}").Concat(t.Notes.Select(n => $"{testPath}: {n}")))
            {
                w.WriteStringValue(note);
            }

            w.WriteEndArray();
            w.WriteEndObject();
        });
    }

    private static void WriteMetrics(Utf8JsonWriter w, ErrorMetrics m)
    {
        w.Number("mse", m.Mse);
        w.Number("rmse", m.Rmse);
        w.Number("relmse", m.RelMse);
        w.Number("smape", m.Smape);
        w.Number("psnr", m.Psnr);
        w.Number("bias", m.Bias);
    }

    private static void WriteTable(TextWriter o, string refPath, string testPath, ImageReadResult r, ImageReadResult t, ComparisonReport report)
    {
        CultureInfo inv = CultureInfo.InvariantCulture;
        o.WriteLine($"reference  {refPath} ({r.Format})");
        o.WriteLine($"test       {testPath} ({t.Format})");
        o.WriteLine(string.Create(inv, $"region     {report.Region} ({report.Width}x{report.Height}, {report.ComparedPixels} pixels compared, {report.NonFinitePixels} non-finite excluded)"));
        o.WriteLine(string.Create(inv, $"settings   epsilon {report.Options.Epsilon:G6}, data range {report.Options.DataRange:G6}"));
        o.WriteLine();
        ErrorMetrics[] columns = [report.All, report.R, report.G, report.B, report.Y];
        o.WriteLine($"{"metric",-10}{"RGB",14}{"R",14}{"G",14}{"B",14}{"luminance",14}");
        void Row(string name, Func<ErrorMetrics, double> pick, string format)
        {
            o.Write($"{name,-10}");
            foreach (ErrorMetrics m in columns)
            {
                double v = pick(m);
                string text = double.IsPositiveInfinity(v) ? "inf" : v.ToString(format, inv);
                o.Write($"{text,14}");
            }

            o.WriteLine();
        }

        Row("mse", m => m.Mse, "0.0000e+00");
        Row("rmse", m => m.Rmse, "0.0000e+00");
        Row("relmse", m => m.RelMse, "0.0000e+00");
        Row("smape", m => m.Smape, "F6");
        Row("psnr dB", m => m.Psnr, "F3");
        Row("bias", m => m.Bias, "0.0000e+00");
        string ssim = report.Ssim is double s ? s.ToString("F6", inv) : "n/a (region smaller than 11x11)";
        o.WriteLine($"{"ssim",-10}{ssim,14}  (Rec. 709 luminance, Gaussian window sigma 1.5)");
    }
}

/// <summary>Image reading and writing for the commands: library errors become one-line usage errors.</summary>
internal static class ImageIo
{
    /// <summary>Runs a write; an I/O failure without a file name of its own is reported with <paramref name="path"/>.</summary>
    public static void Guard(string path, Action write)
    {
        try
        {
            write();
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new CliUsageException($"{path}: cannot write: {e.Message}", e);
        }
    }
}
