using System.CommandLine;
using PathBench.Imaging;
using PathBench.Io;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench convert IN OUT</c>: between PFM, OpenEXR and PNG, formats chosen by extension on
/// output and by content on input. Float outputs keep the values exactly (EXR FLOAT ↔ PFM is lossless
/// bit for bit) unless --exposure scales them; PNG output is 8-bit sRGB after exposure and tone curve.
/// </summary>
internal static class ConvertCommand
{
    public static Command Create(CliIo io)
    {
        var input = new Argument<string>("in") { Description = "Input image (PFM, OpenEXR or PNG)" };
        var output = new Argument<string>("out") { Description = "Output image: .pfm, .exr or .png" };
        var exposure = new Option<double>("--exposure") { Description = "Multiply values by 2^STOPS before writing" };
        var tone = new Option<string?>("--tone") { Description = "Tone curve for PNG output: clamp (default) or reinhard" };
        tone.AcceptOnlyFromAmong("clamp", "reinhard");
        var half = new Option<bool>("--half") { Description = "Write OpenEXR channels as HALF instead of FLOAT" };
        var compression = new Option<string?>("--compression") { Description = "OpenEXR compression: none, zips, zip (default) or piz" };
        compression.AcceptOnlyFromAmong("none", "zips", "zip", "piz");

        var command = new Command("convert", "Convert between PFM, OpenEXR and PNG");
        command.Arguments.Add(input);
        command.Arguments.Add(output);
        command.Options.Add(exposure);
        command.Options.Add(tone);
        command.Options.Add(half);
        command.Options.Add(compression);
        var exrSelection = new ExrSelectionOptions();
        exrSelection.AddTo(command);
        command.SetAction(parse =>
        {
            string inPath = parse.GetValue(input)!;
            string outPath = parse.GetValue(output)!;
            double stops = parse.GetValue(exposure);
            if (DisplayTransform.ExposureProblem("--exposure", stops) is { } problem)
            {
                throw new CliUsageException(problem);
            }

            ImageFormat format = ImageFile.FormatFromExtension(outPath);
            new OutputPaths().Input(inPath).Output(outPath, "the converted image");

            string? toneName = parse.GetValue(tone);
            if (toneName is not null && format != ImageFormat.Png)
            {
                throw new CliUsageException($"--tone applies to PNG output only; {outPath} is {format.ToString().ToUpperInvariant()}");
            }

            if ((parse.GetValue(half) || parse.GetValue(compression) is not null) && format != ImageFormat.Exr)
            {
                throw new CliUsageException($"--half and --compression apply to OpenEXR output only; {outPath} is {format.ToString().ToUpperInvariant()}");
            }

            // After the decode: the PNG encoder's RGBA array and bitmap, or a scaled copy and for
            // OpenEXR the writer's chunks. Measured with VmHWM above the idle process, image included:
            // a 5000² PFM to PNG peaked at 20.2 bytes a pixel, to ZIP EXR at 36.6.
            long after = format switch { ImageFormat.Png => 12, ImageFormat.Exr => 28, _ => ImageLimits.DecodedBytesPerPixel };
            var limits = new ImageLimits(After: (w, h) => (Int128)w * h * after, Use: "and converting them");
            ImageReadResult read = ImageFile.Read(inPath, limits, exrSelection.Read(parse));
            foreach (string note in read.Notes)
            {
                io.Error.WriteLine($"pathbench: note: {inPath}: {note}");
            }

            RgbImage image = read.Image;
            if (stops != 0 && format != ImageFormat.Png)
            {
                // PNG applies exposure in its display transform; float outputs are scaled here.
                float scale = (float)Math.Pow(2.0, stops);
                image = image.Clone();
                for (int i = 0; i < image.Data.Length; i++)
                {
                    image.Data[i] *= scale;
                }
            }

            ExrCompression c = parse.GetValue(compression) switch
            {
                "none" => ExrCompression.None,
                "zips" => ExrCompression.Zips,
                "piz" => ExrCompression.Piz,
                _ => ExrCompression.Zip,
            };
            var exrOptions = new ExrWriteOptions(c, parse.GetValue(half) ? ExrPixelType.Half : ExrPixelType.Float);
            var display = new DisplayTransform(stops, DisplayTransform.ParseCurve(toneName ?? "clamp"));
            ImageIo.Guard(outPath, () => ImageFile.Write(outPath, image, exrOptions, display));
            io.Out.WriteLine(FormattableString.Invariant($"{inPath} ({read.Format}, {image.Width}x{image.Height}) -> {outPath}"));
            return 0;
        });
        return command;
    }
}
