namespace PathBench.Imaging.Tests.OpenExr;

/// <summary>
/// File layouts other renderers write, made by OpenImageIO (python3-openimageio, through the OpenEXR
/// library) and checked pixel for pixel against its own decode: tiles, several parts, layers and
/// chosen channels, UINT channels, and a data window inside a larger display window.
/// </summary>
public sealed class ExrLayoutTests
{
    public static TheoryData<string, string, string, string[]> Layouts => new()
    {
        { "scanline_none_half", "none", "half", [] },
        { "scanline_zips_float", "zips", "float", [] },
        { "tiled_zip_half_16x16", "zip", "half", ["--tile", "16", "16"] },
        { "tiled_none_float_7x5", "none", "float", ["--tile", "7", "5"] },
        { "tiled_zips_half_64x64", "zips", "half", ["--tile", "64", "64"] },
        { "tiled_zip_float_origin", "zip", "float", ["--tile", "8", "8", "--origin", "-3", "11"] },
        { "scanline_rle_half", "rle", "half", [] },
        { "scanline_rle_float", "rle", "float", ["--seed", "4"] },
        { "tiled_rle_half_8x8", "rle", "half", ["--tile", "8", "8"] },
        { "scanline_pxr24_half", "pxr24", "half", [] },
        { "scanline_pxr24_float", "pxr24", "float", ["--seed", "5"] },
        { "tiled_pxr24_float_16x8", "pxr24", "float", ["--tile", "16", "8"] },
        { "scanline_pxr24_uint", "pxr24", "uint", [] },
        { "scanline_rle_uint", "rle", "uint", [] },
        { "scanline_b44_half", "b44", "half", [] },
        { "scanline_b44_float", "b44", "float", [] },
        { "scanline_b44a_half", "b44a", "half", ["--seed", "6"] },
        { "tiled_b44a_half_8x8", "b44a", "half", ["--tile", "8", "8"] },
        { "tiled_b44_half_13x7", "b44", "half", ["--tile", "13", "7"] },
        { "scanline_piz_half", "piz", "half", [] },
        { "scanline_piz_float", "piz", "float", ["--seed", "8"] },
        { "scanline_piz_uint", "piz", "uint", [] },
        { "scanline_piz_half_steps", "piz", "half", ["--steps"] },
        { "scanline_piz_float_steps", "piz", "float", ["--steps"] },
        { "tiled_piz_half_steps_16x8", "piz", "half", ["--tile", "16", "8", "--steps"] },
        { "tiled_piz_half_16x16", "piz", "half", ["--tile", "16", "16"] },
        { "tiled_piz_float_8x5", "piz", "float", ["--tile", "8", "5"] },

        // DWA: R, G, B go through the lossy Y'CbCr path; UINT channels through the zlib (UNKNOWN) section.
        // Mild noise, so that the lossy chunks are smaller than raw and stored coded (noisier chunks are stored raw).
        { "scanline_dwaa_half", "dwaa", "half", ["--noise", "0.02"] },
        { "scanline_dwaa_float", "dwaa", "float", ["--seed", "9", "--noise", "0.02"] },
        { "scanline_dwab_half", "dwab", "half", ["--seed", "10", "--noise", "0"] },
        { "scanline_dwab_float", "dwab", "float", ["--noise", "0.05"] },
        { "scanline_dwaa_half_steps", "dwaa", "half", ["--steps"] },
        { "scanline_dwaa_uint", "dwaa", "uint", [] },
        { "tiled_dwaa_half_16x16", "dwaa", "half", ["--tile", "16", "16", "--noise", "0.02"] },
        { "tiled_dwab_float_13x7", "dwab", "float", ["--tile", "13", "7", "--noise", "0"] },
        { "tiled_dwaa_float_8x8_origin", "dwaa", "float", ["--tile", "8", "8", "--origin", "-3", "11", "--noise", "0.02"] },
    };

    /// <summary>
    /// DWAA and DWAB files with every kind of DWA channel, each channel compared: R, G, B of a layer
    /// (lossy, together as Y'CbCr), Y alone (lossy, one channel), A (RLE section), Z and other names
    /// the library's rules do not know (zlib UNKNOWN section); sizes that are multiples neither of the
    /// 8×8 blocks nor of the chunk height, several chunks, and tiles.
    /// </summary>
    public static TheoryData<string, int, int, string, string, string, string[]> DwaLayouts => new()
    {
        { "dwaa_rgba_half_70x75", 70, 75, "dwaa", "half", "R,G,B,A", ["--noise", "0.02"] },
        { "dwaa_rgba_float_45x40", 45, 40, "dwaa", "float", "R,G,B,A", ["--seed", "11", "--noise", "0.02"] },
        { "dwab_rgba_half_61x270", 61, 270, "dwab", "half", "R,G,B,A", ["--noise", "0.05"] },
        { "dwab_rgbz_float_33x20", 33, 20, "dwab", "float", "R,G,B,Z", ["--noise", "0.02"] },
        { "dwaa_mixed_types_29x35", 29, 35, "dwaa", "float,half,half,float", "A,B,G,R", ["--noise", "0.02"] },
        { "dwaa_layers_41x33", 41, 33, "dwaa", "half", "R,G,B,diffuse.R,diffuse.G,diffuse.B,depth.Z", ["--noise", "0.02"] },
        { "dwaa_grey_ya_half_64x64", 64, 64, "dwaa", "half", "Y,A", ["--noise", "0.01"] },
        { "dwab_rgba_half_tiled_32x32", 70, 45, "dwab", "half", "R,G,B,A", ["--tile", "32", "32", "--noise", "0.02"] },
        { "dwaa_rgba_half_tiled_16x8", 37, 21, "dwaa", "half", "R,G,B,A", ["--tile", "16", "8", "--steps"] },

        // Coarse quantization (OpenImageIO's "dwaa:LEVEL" sets dwaCompressionLevel) leaves blocks with
        // 1..7 trailing zero coefficient rows and DC-only blocks: every inverse-DCT variant of the library.
        { "dwab_level5000_rgb_half_64x64", 64, 64, "dwab:5000", "half", "R,G,B", ["--noise", "0.01"] },
        { "dwaa_level100000_rgb_half_40x40", 40, 40, "dwaa:100000", "half", "R,G,B", ["--noise", "0.2"] },
        { "dwaa_level30000_rgb_float_40x40", 40, 40, "dwaa:30000", "float", "R,G,B", ["--noise", "0.5"] },
    };

    [Theory]
    [MemberData(nameof(DwaLayouts))]
    public void DWA_files_read_bit_exactly_in_every_channel(string name, int width, int height, string compression, string type, string channels, string[] extra)
    {
        // Source: OpenImageIO's decode (through the OpenEXR library) of the file it wrote.
        using var dir = new TempFolder();
        string path = dir.File(name + ".exr");
        OiioReference.Write(path, width, height, compression, type, channels, extra);
        OiioReference.Decoded reference = OiioReference.Decode(path);
        foreach (string channel in channels.Split(','))
        {
            ImageReadResult ours = ExrCodec.Read(path, options: new ExrReadOptions(Channels: [channel]));
            OiioReference.AssertSame(reference, ours, $"{name} channel {channel}", [channel]);
        }
    }

    /// <summary>PIZ over several 32-line chunks with a short last one, a 1-pixel column and a 1-line row.</summary>
    [Theory]
    [InlineData("piz_half_61x70", 61, 70, "half")]
    [InlineData("piz_half_61x70_steps", 61, 70, "half", "steps")]
    [InlineData("piz_float_300x40_steps", 300, 40, "float", "steps")]
    [InlineData("piz_float_1x40", 1, 40, "float")]
    [InlineData("piz_half_50x1", 50, 1, "half")]
    public void PIZ_files_of_awkward_sizes_read_bit_exactly(string name, int width, int height, string type, string content = "noise")
    {
        using var dir = new TempFolder();
        string path = dir.File(name + ".exr");
        OiioReference.Write(path, width, height, "piz", type, "R,G,B", content == "steps" ? ["--steps"] : ["--seed", "3"]);
        OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path), ["R", "G", "B"]);
    }

    [Theory]
    [MemberData(nameof(Layouts))]
    public void OpenImageIO_files_read_bit_exactly(string name, string compression, string type, string[] extra)
    {
        using var dir = new TempFolder();
        string path = dir.File(name + ".exr");
        OiioReference.Write(path, 37, 21, compression, type, "R,G,B", extra);
        OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path), ["R", "G", "B"]);
    }

    [Fact]
    public void Every_part_of_a_multi_part_file_reads_by_index_and_by_name()
    {
        using var dir = new TempFolder();
        string path = dir.File("parts.exr");
        OiioReference.Write(path, 29, 17, "zip", "half", "R,G,B", "--parts", "3");
        ImageReadResult first = ExrCodec.Read(path);
        Assert.Contains(first.Notes, n => n.Contains("3 parts", StringComparison.Ordinal));
        OiioReference.AssertSameAsOurs(path, first, ["R", "G", "B"], subimage: 0);
        for (int p = 0; p < 3; p++)
        {
            string index = p.ToString(System.Globalization.CultureInfo.InvariantCulture);
            OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path, options: new ExrReadOptions(Part: index)), ["R", "G", "B"], subimage: p);
            OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path, options: new ExrReadOptions(Part: "part" + index)), ["R", "G", "B"], subimage: p);
        }

        ImageFileException e = Assert.Throws<ImageFileException>(() => ExrCodec.Read(path, options: new ExrReadOptions(Part: "beauty")));
        Assert.Equal($"{path}: no part 'beauty'; parts: 0: 'part0', 1: 'part1', 2: 'part2'", e.Message);
    }

    [Fact]
    public void Layers_and_channels_choose_what_is_read()
    {
        using var dir = new TempFolder();
        string path = dir.File("layers.exr");
        OiioReference.Write(path, 23, 13, "zip", "half", "diffuse.R,diffuse.G,diffuse.B,R,G,B,depth.Z");
        OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path), ["R", "G", "B"]);
        OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path, options: new ExrReadOptions(Layer: "diffuse")), ["diffuse.R", "diffuse.G", "diffuse.B"]);
        OiioReference.AssertSameAsOurs(path, ExrCodec.Read(path, options: new ExrReadOptions(Channels: ["depth.Z"])), ["depth.Z"]);
        OiioReference.AssertSameAsOurs(
            path, ExrCodec.Read(path, options: new ExrReadOptions(Channels: ["diffuse.B", "G", "depth.Z"])), ["diffuse.B", "G", "depth.Z"]);

        ImageFileException noLayer = Assert.Throws<ImageFileException>(() => ExrCodec.Read(path, options: new ExrReadOptions(Layer: "specular")));
        Assert.Equal(
            $"{path}: layer 'specular' has no R,G,B or Y channels; layers: (none) (B,G,R), depth (Z), diffuse (B,G,R) (choose with --layer NAME or --channels A,B,C)",
            noLayer.Message);
        ImageFileException noChannel = Assert.Throws<ImageFileException>(() => ExrCodec.Read(path, options: new ExrReadOptions(Channels: ["Q"])));
        Assert.Contains("no channel 'Q'; channels: ", noChannel.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Uint_channels_read_as_their_float_values()
    {
        using var dir = new TempFolder();
        string path = dir.File("uint.exr");
        OiioReference.Write(path, 19, 11, "zip", "uint", "R,G,B");
        OiioReference.Decoded reference = OiioReference.Decode(path);
        ImageReadResult ours = ExrCodec.Read(path);
        Assert.Contains(ours.Notes, n => n.Contains("UINT channel", StringComparison.Ordinal));
        for (int y = 0; y < 11; y++)
        {
            for (int x = 0; x < 19; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    // The pattern's integers stay below 2^24, where float holds every integer exactly.
                    Assert.Equal((float)reference.At(x, y, "RGB"[c].ToString()), ours.Image.At(x, y, c));
                }
            }
        }
    }

    [Fact]
    public void A_data_window_inside_the_display_window_reads_as_the_display_window_with_zeros_around()
    {
        using var dir = new TempFolder();
        string path = dir.File("window.exr");
        OiioReference.Write(path, 20, 10, "zip", "float", "R,G,B", "--origin", "5", "3", "--display", "0", "0", "32", "18");
        OiioReference.Decoded reference = OiioReference.Decode(path);
        Assert.Equal([0, 0, 32, 18], reference.Info.Full);
        ImageReadResult ours = ExrCodec.Read(path);
        Assert.Equal((32, 18), (ours.Image.Width, ours.Image.Height));
        Assert.Contains(ours.Notes, n => n.Contains("pixels outside it are zero", StringComparison.Ordinal));
        for (int y = 0; y < 18; y++)
        {
            for (int x = 0; x < 32; x++)
            {
                bool inside = x >= 5 && x < 25 && y >= 3 && y < 13;
                for (int c = 0; c < 3; c++)
                {
                    uint expected = inside ? reference.At(x - 5, y - 3, "RGB"[c].ToString()) : 0u;
                    Assert.Equal(expected, BitConverter.SingleToUInt32Bits(ours.Image.At(x, y, c)));
                }
            }
        }
    }
}
