using System.Text.Json;
using PathBench.Cli;

namespace PathBench.Imaging.Tests;

/// <summary><c>pathbench compare</c> and <c>pathbench convert</c>, driven in-process through <see cref="CliApp.Run"/>.</summary>
public sealed class CliTests
{
    private static (int Code, string Out, string Err) Run(params string[] args)
    {
        var stdout = new StringWriter();
        var stderr = new StringWriter();
        int code = CliApp.Run(args, stdout, stderr);
        return (code, stdout.ToString(), stderr.ToString());
    }

    private static void AssertOneLineError((int Code, string Out, string Err) r, string fragment)
    {
        Assert.Equal(CliApp.UsageExitCode, r.Code);
        string[] lines = r.Err.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.True(lines.Length == 1, $"expected one line on stderr, got: {r.Err}");
        Assert.StartsWith("pathbench: error: ", lines[0], StringComparison.Ordinal);
        Assert.True(lines[0].Contains(fragment, StringComparison.Ordinal), $"'{fragment}' not in: {lines[0]}");
    }

    [Fact]
    public void Compare_json_has_the_required_fields_and_the_library_values()
    {
        using var dir = new TempFolder();
        RgbImage reference = SyntheticImages.Gradient(32, 24);
        RgbImage test = SyntheticImages.Noisy(reference, 0.05, seed: 3);
        ExrCodec.Write(dir.File("ref.exr"), reference);
        PfmCodec.Write(dir.File("test.pfm"), test);

        var r = Run("compare", dir.File("ref.exr"), dir.File("test.pfm"), "--json", "--epsilon", "0.02");
        Assert.True(r.Code == 0, r.Err);
        using JsonDocument doc = JsonDocument.Parse(r.Out);
        JsonElement root = doc.RootElement;
        foreach (string field in new[] { "width", "height", "mse", "rmse", "relmse", "smape", "psnr", "ssim", "bias", "nonfinite_pixels" })
        {
            Assert.True(root.TryGetProperty(field, out _), $"missing field {field}");
        }

        ComparisonReport expected = ImageComparison.Compare(reference, test, new ComparisonOptions { Epsilon = 0.02 });
        Assert.Equal(32, root.GetProperty("width").GetInt32());
        Assert.Equal(24, root.GetProperty("height").GetInt32());
        Assert.Equal(0, root.GetProperty("nonfinite_pixels").GetInt64());
        Assert.Equal(expected.All.Mse, root.GetProperty("mse").GetDouble());
        Assert.Equal(expected.All.RelMse, root.GetProperty("relmse").GetDouble());
        Assert.Equal(expected.All.Psnr, root.GetProperty("psnr").GetDouble());
        Assert.Equal(expected.Ssim!.Value, root.GetProperty("ssim").GetDouble());
        Assert.Equal(expected.Y.Mse, root.GetProperty("channels").GetProperty("luminance").GetProperty("mse").GetDouble());
    }

    [Fact]
    public void Compare_roi_restricts_the_metrics_and_counts_non_finite_pixels()
    {
        using var dir = new TempFolder();
        RgbImage reference = SyntheticImages.Gradient(40, 30);
        RgbImage test = SyntheticImages.Noisy(reference, 0.1, seed: 4);
        test.At(12, 12, 0) = float.NaN;  // inside the region
        test.At(0, 0, 1) = float.NaN;    // outside
        PfmCodec.Write(dir.File("r.pfm"), reference);
        PfmCodec.Write(dir.File("t.pfm"), test);

        var r = Run("compare", dir.File("r.pfm"), dir.File("t.pfm"), "--roi", "10,8,20,15", "--json");
        Assert.True(r.Code == 0, r.Err);
        using JsonDocument doc = JsonDocument.Parse(r.Out);
        ComparisonReport expected = ImageComparison.Compare(reference.Crop(new PixelRect(10, 8, 20, 15)), test.Crop(new PixelRect(10, 8, 20, 15)));
        Assert.Equal(20, doc.RootElement.GetProperty("width").GetInt32());
        Assert.Equal(15, doc.RootElement.GetProperty("height").GetInt32());
        Assert.Equal(1, doc.RootElement.GetProperty("nonfinite_pixels").GetInt64());
        Assert.Equal(expected.All.Mse, doc.RootElement.GetProperty("mse").GetDouble());
        Assert.Equal(expected.Ssim!.Value, doc.RootElement.GetProperty("ssim").GetDouble());
    }

    [Fact]
    public void Compare_of_identical_images_reports_infinite_psnr_as_null_and_ssim_one()
    {
        using var dir = new TempFolder();
        ExrCodec.Write(dir.File("a.exr"), SyntheticImages.Gradient(16, 16));
        var r = Run("compare", dir.File("a.exr"), dir.File("a.exr"), "--json");
        using JsonDocument doc = JsonDocument.Parse(r.Out);
        Assert.Equal(JsonValueKind.Null, doc.RootElement.GetProperty("psnr").ValueKind);
        Assert.True(doc.RootElement.GetProperty("psnr_infinite").GetBoolean());
        Assert.Equal(1.0, doc.RootElement.GetProperty("ssim").GetDouble(), 12);
        Assert.Equal(0.0, doc.RootElement.GetProperty("mse").GetDouble());
    }

    [Fact]
    public void Compare_table_names_every_metric()
    {
        using var dir = new TempFolder();
        PfmCodec.Write(dir.File("r.pfm"), SyntheticImages.Gradient(20, 20));
        PfmCodec.Write(dir.File("t.pfm"), SyntheticImages.Noisy(SyntheticImages.Gradient(20, 20), 0.01, seed: 1));
        var r = Run("compare", dir.File("r.pfm"), dir.File("t.pfm"));
        Assert.Equal(0, r.Code);
        foreach (string metric in new[] { "mse", "rmse", "relmse", "smape", "psnr dB", "bias", "ssim" })
        {
            Assert.Contains(Environment.NewLine + metric + " ", r.Out, StringComparison.Ordinal);
        }
    }

    public static TheoryData<string, string[], string> BadCompares => new()
    {
        { "different_sizes", ["compare", "{a}", "{small}"], "image sizes differ: reference is 16x12, test is 8x8" },
        { "missing_file", ["compare", "{a}", "{dir}/nope.exr"], "nope.exr: cannot open" },
        { "unknown_format", ["compare", "{a}", "{text}"], "unknown image format" },
        { "roi_outside", ["compare", "{a}", "{a}", "--roi", "10,10,10,10"], "region 10,10,10,10 does not lie inside the 16x12 images" },
        { "roi_malformed", ["compare", "{a}", "{a}", "--roi", "1,2,3"], "--roi: region '1,2,3' is not X,Y,W,H" },
        { "roi_empty", ["compare", "{a}", "{a}", "--roi", "0,0,0,5"], "is empty" },
        { "epsilon_zero", ["compare", "{a}", "{a}", "--epsilon", "0"], "--epsilon must be a positive number" },
        { "tiled_exr", ["compare", "{a}", "{tiled}"], "header lacks the required attribute 'tiles'" },
        { "all_nonfinite", ["compare", "{a}", "{nan}"], "no pixel of region" },
    };

    [Theory]
    [MemberData(nameof(BadCompares))]
    public void Compare_bad_input_is_one_line_and_exit_2(string name, string[] args, string fragment)
    {
        using var dir = new TempFolder();
        ExrCodec.Write(dir.File("a.exr"), SyntheticImages.Gradient(16, 12));
        PfmCodec.Write(dir.File("small.pfm"), SyntheticImages.Gradient(8, 8));
        File.WriteAllText(dir.File("text.exr"), "this is not an image\n");
        PfmCodec.Write(dir.File("nan.pfm"), SyntheticImages.Flat(16, 12, float.NaN, 0, 0));
        byte[] tiled = File.ReadAllBytes(dir.File("a.exr"));
        tiled[5] |= 0x02;
        File.WriteAllBytes(dir.File("tiled.exr"), tiled);
        string[] expanded = args.Select(a => a
            .Replace("{a}", dir.File("a.exr"), StringComparison.Ordinal)
            .Replace("{small}", dir.File("small.pfm"), StringComparison.Ordinal)
            .Replace("{text}", dir.File("text.exr"), StringComparison.Ordinal)
            .Replace("{tiled}", dir.File("tiled.exr"), StringComparison.Ordinal)
            .Replace("{nan}", dir.File("nan.pfm"), StringComparison.Ordinal)
            .Replace("{dir}", dir.Path, StringComparison.Ordinal)).ToArray();
        AssertOneLineError(Run(expanded), fragment);
        _ = name;
    }

    /// <summary>A layer of an OpenImageIO-written file (python3-openimageio) compared with itself by name, and the refusals around it.</summary>
    [Fact]
    public void Compare_and_convert_read_the_layer_and_part_asked_for()
    {
        using var dir = new TempFolder();
        string layered = dir.File("layers.exr");
        OiioReference.Write(layered, 23, 13, "zip", "half", "diffuse.R,diffuse.G,diffuse.B,R,G,B");
        var converted = Run("convert", layered, dir.File("diffuse.pfm"), "--layer", "diffuse");
        Assert.True(converted.Code == 0, converted.Err);
        OiioReference.AssertSameAsOurs(layered, PfmCodec.Read(dir.File("diffuse.pfm")), ["diffuse.R", "diffuse.G", "diffuse.B"]);

        var same = Run("compare", layered, dir.File("diffuse.pfm"), "--layer", "diffuse", "--json");
        Assert.True(same.Code == 0, same.Err);
        using (JsonDocument doc = JsonDocument.Parse(same.Out))
        {
            Assert.Equal(0.0, doc.RootElement.GetProperty("mse").GetDouble());
        }

        AssertOneLineError(Run("compare", layered, layered, "--layer", "specular"), "layer 'specular' has no R,G,B or Y channels; layers: (none) (B,G,R), diffuse (B,G,R)");
        AssertOneLineError(Run("compare", layered, layered, "--part", "2"), "no part '2'; parts: 0");
        AssertOneLineError(Run("compare", layered, layered, "--channels", "R,G"), "--channels takes one name or three");

        string shifted = dir.File("shifted.exr");
        OiioReference.Write(shifted, 23, 13, "zip", "half", "R,G,B", "--origin", "4", "0", "--display", "4", "0", "23", "13");
        AssertOneLineError(Run("compare", layered, shifted), "display windows differ: 23x13 at (0,0) and 23x13 at (4,0)");
    }

    [Fact]
    public void Compare_writes_heatmap_and_side_by_side()
    {
        using var dir = new TempFolder();
        PfmCodec.Write(dir.File("r.pfm"), SyntheticImages.Gradient(30, 20));
        PfmCodec.Write(dir.File("t.pfm"), SyntheticImages.Noisy(SyntheticImages.Gradient(30, 20), 0.05, seed: 2));
        var r = Run("compare", dir.File("r.pfm"), dir.File("t.pfm"), "--heatmap", dir.File("h.png"), "--side-by-side", dir.File("s.png"), "--error", "absolute", "--json");
        Assert.True(r.Code == 0, r.Err);
        Assert.Equal(8 + (30 * 8) + 8 + 16 + 84, PngCodec.Read(dir.File("h.png")).Image.Width);
        Assert.Equal(8 + (3 * ((30 * 8) + 8)) + 16 + 84, PngCodec.Read(dir.File("s.png")).Image.Width);
        using JsonDocument doc = JsonDocument.Parse(r.Out);
        Assert.Equal("absolute", doc.RootElement.GetProperty("error_map").GetString());
    }

    [Fact]
    public void Convert_exr_to_pfm_to_exr_float_is_lossless_bit_for_bit()
    {
        using var dir = new TempFolder();
        RgbImage image = SyntheticImages.Uniform(19, 11, -1e5, 1e5, seed: 8);
        image.Data[0] = float.NaN;
        image.Data[1] = float.PositiveInfinity;
        image.Data[2] = -0.0f;
        image.Data[3] = BitConverter.Int32BitsToSingle(3); // subnormal
        ExrCodec.Write(dir.File("in.exr"), image, new ExrWriteOptions(ExrCompression.Zips, ExrPixelType.Float));

        Assert.Equal(0, Run("convert", dir.File("in.exr"), dir.File("mid.pfm")).Code);
        Assert.Equal(0, Run("convert", dir.File("mid.pfm"), dir.File("out.exr")).Code);
        RgbImage back = ExrCodec.Read(dir.File("out.exr")).Image;
        Assert.Equal(image.Data.Select(BitConverter.SingleToInt32Bits), back.Data.Select(BitConverter.SingleToInt32Bits));
        Assert.Contains("FLOAT ZIP", ExrCodec.Read(dir.File("out.exr")).Format, StringComparison.Ordinal);
    }

    [Fact]
    public void Convert_half_and_compression_options_reach_the_file()
    {
        using var dir = new TempFolder();
        RgbImage image = SyntheticImages.Gradient(10, 10, scale: 3);
        PfmCodec.Write(dir.File("in.pfm"), image);
        Assert.Equal(0, Run("convert", dir.File("in.pfm"), dir.File("h.exr"), "--half", "--compression", "none").Code);
        ImageReadResult back = ExrCodec.Read(dir.File("h.exr"));
        Assert.Equal("OpenEXR RGB HALF NONE", back.Format);
        Assert.Equal(image.Data.Select(v => (float)(Half)v), back.Image.Data);
    }

    [Fact]
    public void Convert_to_png_applies_exposure_and_tone_curve()
    {
        using var dir = new TempFolder();
        PfmCodec.Write(dir.File("in.pfm"), SyntheticImages.Flat(4, 4, 0.5f, 0.5f, 0.5f));
        Assert.Equal(0, Run("convert", dir.File("in.pfm"), dir.File("o.png"), "--exposure", "1", "--tone", "reinhard").Code);

        // 0.5 · 2^1 = 1 → Reinhard 1/(1+1) = 0.5 → sRGB code of 0.5.
        float expected = Srgb.DecodeByte(Srgb.EncodeToByte(0.5));
        Assert.All(PngCodec.Read(dir.File("o.png")).Image.Data, v => Assert.Equal(expected, v));
    }

    [Fact]
    public void Convert_float_output_with_exposure_scales_the_values()
    {
        using var dir = new TempFolder();
        PfmCodec.Write(dir.File("in.pfm"), SyntheticImages.Flat(3, 2, 0.25f, 1f, 4f));
        Assert.Equal(0, Run("convert", dir.File("in.pfm"), dir.File("o.exr"), "--exposure", "-2").Code);
        Assert.Equal(SyntheticImages.Flat(3, 2, 0.0625f, 0.25f, 1f).Data, ExrCodec.Read(dir.File("o.exr")).Image.Data);
    }

    public static TheoryData<string, string[], string> BadConverts => new()
    {
        { "unknown_output_extension", ["convert", "{in}", "{dir}/out.tiff"], "unknown image format '.tiff'" },
        { "tone_for_float_output", ["convert", "{in}", "{dir}/out.exr", "--tone", "reinhard"], "--tone applies to PNG output only" },
        { "half_for_png_output", ["convert", "{in}", "{dir}/out.png", "--half"], "apply to OpenEXR output only" },
        { "missing_input", ["convert", "{dir}/none.pfm", "{dir}/out.exr"], "none.pfm: cannot open" },
        { "truncated_input", ["convert", "{cut}", "{dir}/out.exr"], "truncated" },
        { "unwritable_output", ["convert", "{in}", "{dir}/no/such/dir/out.exr"], "cannot write" },
    };

    [Theory]
    [MemberData(nameof(BadConverts))]
    public void Convert_bad_input_is_one_line_and_exit_2(string name, string[] args, string fragment)
    {
        using var dir = new TempFolder();
        PfmCodec.Write(dir.File("in.pfm"), SyntheticImages.Gradient(8, 8));
        File.WriteAllBytes(dir.File("cut.pfm"), File.ReadAllBytes(dir.File("in.pfm"))[..100]);
        string[] expanded = args.Select(a => a
            .Replace("{in}", dir.File("in.pfm"), StringComparison.Ordinal)
            .Replace("{cut}", dir.File("cut.pfm"), StringComparison.Ordinal)
            .Replace("{dir}", dir.Path, StringComparison.Ordinal)).ToArray();
        AssertOneLineError(Run(expanded), fragment);
        _ = name;
    }
}
