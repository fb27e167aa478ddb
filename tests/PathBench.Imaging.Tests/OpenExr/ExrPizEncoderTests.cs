namespace PathBench.Imaging.Tests.OpenExr;

/// <summary>
/// The PIZ encoder (the writer's, also checked through OpenImageIO in <see cref="ExrTests"/>): what it codes, the decoder — itself checked bit for
/// bit against OpenImageIO in <see cref="ExrLayoutTests"/> — must give back exactly (common practice: a
/// lossless encoder inverts its checked decoder).
/// </summary>
public sealed class ExrPizEncoderTests
{
    public static TheoryData<string, ExrPixelType[], int, int, int> Blocks => new()
    {
        { "half_rgb_37x21", [ExrPixelType.Half, ExrPixelType.Half, ExrPixelType.Half], 37, 21, 1 },
        { "float_y_64x32", [ExrPixelType.Float], 64, 32, 2 },
        { "mixed_33x17", [ExrPixelType.Half, ExrPixelType.Float, ExrPixelType.UInt], 33, 17, 3 },
    };

    [Theory]
    [MemberData(nameof(Blocks))]
    public void Decoding_what_the_encoder_wrote_gives_the_raw_bytes_back(string name, ExrPixelType[] types, int width, int height, int seed)
    {
        ExrChannelLayout[] channels = [.. types.Select((t, i) => new ExrChannelLayout(((char)('A' + i)).ToString(), t, 1, 1, false))];
        var block = new ExrBlock(channels, 0, 0, width, height);
        var raw = new byte[block.RawSize];

        // Steps with a little noise in the low byte: compressible, but not trivially.
        var random = new Random(seed);
        for (int i = 0; i < raw.Length; i++)
        {
            raw[i] = (i & 1) == 0 ? (byte)random.Next(0, 4) : (byte)(0x30 + ((i / 97) % 5));
        }

        byte[]? packed = ExrPiz.Compress(raw, block);
        Assert.True(packed is not null && packed.Length < raw.Length, $"{name}: the encoder did not shrink compressible data");
        var back = new byte[raw.Length];
        ExrPiz.Decompress(packed, back, block, new byte[raw.Length]);
        Assert.Equal(raw, back);
    }
}
