namespace PathBench.Imaging.Tests;

/// <summary>
/// Our PNG reader against Pillow (Debian's python3-pil 9.4, with numpy), live: tools/imaging/png_reference.py
/// writes every colour type at every legal bit depth, interlaced and not, with all five filter
/// types, palettes with tRNS, 16-bit samples whose low bytes differ, tiny Adam7 images and the
/// colour chunks (gAMA, sRGB, iCCP, cICP) alone and together; some files come from Pillow's own
/// writer, the rest from the script's writer built on the PNG specification with zlib and struct.
/// Integer samples must equal Pillow's decode exactly (the numpy integers written, where Pillow
/// truncates 16-bit colour to 8 bits, with Pillow's high byte checked by the script); linear
/// values must equal the transfer formula applied to those integers.
/// </summary>
public sealed class PngReferenceTests : IClassFixture<PngReferenceTests.Files>
{
    private readonly Files _files;

    public PngReferenceTests(Files files) => _files = files;

    /// <summary>The names the script writes (its live_cases), in its order.</summary>
    public static readonly string[] Names =
    [
        "spec_grey1_plain", "spec_grey1_adam7", "spec_grey2_plain", "spec_grey2_adam7", "spec_grey4_plain", "spec_grey4_adam7",
        "spec_grey8_plain", "spec_grey8_adam7", "spec_grey16_plain", "spec_grey16_adam7", "spec_rgb8_plain", "spec_rgb8_adam7",
        "spec_rgb16_plain", "spec_rgb16_adam7", "spec_palette1_plain", "spec_palette1_adam7", "spec_palette2_plain", "spec_palette2_adam7",
        "spec_palette4_plain", "spec_palette4_adam7", "spec_palette8_plain", "spec_palette8_adam7", "spec_greyalpha8_plain",
        "spec_greyalpha8_adam7", "spec_greyalpha16_plain", "spec_greyalpha16_adam7", "spec_rgba8_plain", "spec_rgba8_adam7",
        "spec_rgba16_plain", "spec_rgba16_adam7",
        "pillow_grey1", "pillow_grey8", "pillow_grey16", "pillow_rgb8", "pillow_greyalpha8", "pillow_rgba8", "pillow_palette1",
        "pillow_palette2", "pillow_palette4", "pillow_palette8",
        "spec_adam7_1x1_grey8", "spec_adam7_1x1_rgb16", "spec_adam7_1x1_palette1", "spec_adam7_1x1_grey2", "spec_adam7_2x3_grey8",
        "spec_adam7_2x3_rgb16", "spec_adam7_2x3_palette1", "spec_adam7_2x3_grey2", "spec_adam7_3x2_grey8", "spec_adam7_3x2_rgb16",
        "spec_adam7_3x2_palette1", "spec_adam7_3x2_grey2", "spec_adam7_5x1_grey8", "spec_adam7_5x1_rgb16", "spec_adam7_5x1_palette1",
        "spec_adam7_5x1_grey2",
        "spec_grey8_trns", "spec_rgb16_trns",
        "pillow_rgb8_gama45455", "pillow_rgb8_srgb", "pillow_rgb8_srgb_over_gama", "pillow_palette4_gama55000", "spec_grey16_gama100000",
        "spec_rgba16_adam7_gama220000", "spec_rgb8_iccp_over_gama", "spec_rgb16_cicp_linear", "spec_grey8_cicp_srgb",
    ];

    public static TheoryData<string> CaseNames => new(Names);

    [Fact]
    public void The_script_wrote_exactly_the_cases_named_here()
    {
        // Its exit status alone proves nothing: the cases it printed and its closing count must match.
        Assert.Equal(Names, _files.Printed);
        Assert.Equal($"done {Names.Length}", _files.Closing);
    }

    [Theory]
    [MemberData(nameof(CaseNames))]
    public void Reader_gives_Pillows_samples_and_the_transfer_formula(string name)
    {
        string png = _files.Folder.File(name + ".png");
        Assert.True(File.Exists(png), $"{name}.png was not written");
        PngReference.AssertSameAsOurs(png, PngReference.Load(_files.Folder.File(name + ".txt")), name);
    }

    [Fact]
    public void Sixteen_bit_samples_keep_their_low_byte()
    {
        // The script sets pixel (0,0) of every 16-bit image to 0x12AB in each channel; an 8-bit
        // truncation (what Pillow does to 16-bit colour) would lose the AB.
        foreach (string name in Names.Where(n => n.Contains("16", StringComparison.Ordinal)))
        {
            string png = _files.Folder.File(name + ".png");
            using FileStream s = ImageFile.OpenRead(png);
            PngDecoded d = PngDecoder.Decode(s, png, ImageLimits.Default);
            Assert.Equal(16, d.Header.BitDepth);
            var row = new ushort[d.Header.Width * d.Header.Channels];
            d.Row(0, row);
            Assert.All(row.Take(d.Header.Channels), v => Assert.Equal(0x12AB, v));
        }
    }

    /// <summary>Runs the script once for the class into a fresh folder.</summary>
    public sealed class Files : IDisposable
    {
        public Files()
        {
            Folder = new TempFolder();
            ReferenceTools.Result r = ExternalTool.RunPillowScript("png_reference.py", Folder.Path);
            string[] lines = r.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
            Printed = lines.Where(l => l.StartsWith("case ", StringComparison.Ordinal)).Select(l => l[5..]).ToArray();
            Closing = lines.LastOrDefault() ?? "";
        }

        public TempFolder Folder { get; }

        public string[] Printed { get; }

        public string Closing { get; }

        public void Dispose() => Folder.Dispose();
    }
}
