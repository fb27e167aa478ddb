using System.Buffers.Binary;
using System.Globalization;

namespace PathBench.Imaging.Tests;

/// <summary>PNG output through SkiaSharp (8-bit sRGB after exposure and tone curve), read back by our decoder (sRGB decode of untagged or sRGB-tagged 8-bit files).</summary>
public sealed class PngTests
{
    private static byte[] Encode(RgbImage image, DisplayTransform? display = null)
    {
        var s = new MemoryStream();
        PngCodec.Write(s, image, display);
        return s.ToArray();
    }

    [Fact]
    public void Written_png_is_8_bit_truecolour_of_the_right_size()
    {
        byte[] png = Encode(SyntheticImages.Uniform(13, 7, 0, 1, seed: 1));

        // PNG (ISO/IEC 15948:2004) §11.2.2: IHDR follows the signature; width, height big-endian, then bit depth, colour type.
        Assert.Equal(13u, BinaryPrimitives.ReadUInt32BigEndian(png.AsSpan(16)));
        Assert.Equal(7u, BinaryPrimitives.ReadUInt32BigEndian(png.AsSpan(20)));
        Assert.Equal(8, png[24]);
        Assert.Contains(png[25], new byte[] { 2, 6 });
    }

    [Fact]
    public void Read_back_gives_the_srgb_decode_of_the_written_codes()
    {
        RgbImage image = SyntheticImages.Uniform(16, 9, -0.2, 1.3, seed: 2);
        ImageReadResult back = PngCodec.Read(new MemoryStream(Encode(image)), "t.png");
        for (int i = 0; i < image.Data.Length; i++)
        {
            Assert.Equal(Srgb.DecodeByte(Srgb.EncodeToByte(image.Data[i])), back.Image.Data[i]);
        }

        Assert.Contains(back.Notes, n => n.Contains("sRGB", StringComparison.Ordinal));
    }

    public static TheoryData<string, float, double, ToneCurve, double> DisplayCases => new()
    {
        // (name, linear value, exposure stops, curve, expected display value before sRGB encoding)
        { "clamp_identity", 0.18f, 0, ToneCurve.Clamp, 0.18 },
        { "clamp_one_stop_up_doubles", 0.18f, 1, ToneCurve.Clamp, 0.36 },
        { "clamp_two_stops_down_quarters", 0.8f, -2, ToneCurve.Clamp, 0.2 },
        { "clamp_clips_above_white", 3f, 0, ToneCurve.Clamp, 1.0 },

        // Reinhard et al. 2002 eq. 3 on luminance: a grey of luminance L maps to L/(1+L).
        { "reinhard_grey_1_to_half", 1f, 0, ToneCurve.Reinhard, 0.5 },
        { "reinhard_grey_3_to_three_quarters", 3f, 0, ToneCurve.Reinhard, 0.75 },
        { "reinhard_after_exposure", 0.5f, 1, ToneCurve.Reinhard, 0.5 },
    };

    [Theory]
    [MemberData(nameof(DisplayCases))]
    public void Display_transform_applies_exposure_then_curve_then_srgb(string name, float value, double stops, ToneCurve curve, double displayed)
    {
        Span<byte> rgb = stackalloc byte[3];
        new DisplayTransform(stops, curve).Apply(value, value, value, rgb);
        byte expected = Srgb.EncodeToByte(displayed);
        Assert.True(rgb[0] == expected && rgb[1] == expected && rgb[2] == expected, $"{name}: got {rgb[0]}, expected {expected}");
    }

    [Fact]
    public void Reinhard_keeps_the_ratio_between_channels()
    {
        Span<byte> rgb = stackalloc byte[3];
        new DisplayTransform(0, ToneCurve.Reinhard).Apply(2f, 1f, 0.5f, rgb);
        double l = Luminance.Rec709(2, 1, 0.5);
        double k = 1 / (1 + l);
        Assert.Equal(Srgb.EncodeToByte(2 * k), rgb[0]);
        Assert.Equal(Srgb.EncodeToByte(1 * k), rgb[1]);
        Assert.Equal(Srgb.EncodeToByte(0.5 * k), rgb[2]);
    }

    [Fact]
    public void Non_finite_pixels_show_magenta()
    {
        Span<byte> rgb = stackalloc byte[3];
        new DisplayTransform().Apply(float.NaN, 0, 0, rgb);
        Assert.Equal(new byte[] { 255, 0, 255 }, rgb.ToArray());
    }

    [Fact]
    public void Python_imaging_library_reads_the_codes_we_wrote()
    {
        // Independent decoder: PIL from Debian's python3-pil (a dependency of python3-matplotlib, which python3-skimage depends on).
        using var dir = new TempFolder();
        RgbImage image = SyntheticImages.Uniform(6, 4, 0, 1, seed: 4);
        string path = dir.File("codes.png");
        PngCodec.Write(path, image);
        ReferenceTools.Result r = ExternalTool.Run(
            ExternalTool.Python,
            "python3-pil",
            ["-c", "import sys; from PIL import Image; im = Image.open(sys.argv[1]).convert('RGB'); print(' '.join(str(v) for p in im.getdata() for v in p))", path]);
        Assert.True(r.ExitCode == 0, $"PIL failed (install python3-pil): {r.Stderr}");
        byte[] codes = r.Stdout.Split(' ', StringSplitOptions.RemoveEmptyEntries).Select(v => byte.Parse(v, CultureInfo.InvariantCulture)).ToArray();
        Assert.Equal(image.Data.Select(v => Srgb.EncodeToByte(v)).ToArray(), codes);
    }

    [Fact]
    public void An_image_wider_than_the_encoder_allows_is_refused_before_writing()
    {
        using var dir = new TempFolder();
        var image = new RgbImage(PngCodec.MaxSide + 1, 1);
        string path = dir.File("wide.png");
        var e = Assert.Throws<ImageFileException>(() => PngCodec.Write(path, image));
        Assert.Contains("beyond the encoder's limit", e.Message, StringComparison.Ordinal);
        Assert.False(File.Exists(path));
    }
}
