using System.Buffers.Binary;
using System.Text;

namespace PathBench.Imaging.Tests;

/// <summary>PFM layout as the format defines it (HDRShop's PFM description, from memory): header, sign of scale = byte order, rows bottom-to-top.</summary>
public sealed class PfmTests
{
    private static byte[] Pfm(string header, float[] values, bool littleEndian)
    {
        var bytes = new List<byte>(Encoding.ASCII.GetBytes(header));
        var b = new byte[4];
        foreach (float v in values)
        {
            if (littleEndian)
            {
                BinaryPrimitives.WriteSingleLittleEndian(b, v);
            }
            else
            {
                BinaryPrimitives.WriteSingleBigEndian(b, v);
            }

            bytes.AddRange(b);
        }

        return [.. bytes];
    }

    private static ImageReadResult Read(byte[] bytes) => PfmCodec.Read(new MemoryStream(bytes), "test.pfm");

    // 2x2 colour image, file order: bottom row first. Pixel values name their position: 10·row + column (+0.1·channel).
    private static readonly float[] FileOrder2x2 =
    [
        10.0f, 10.1f, 10.2f, 11.0f, 11.1f, 11.2f, // bottom row (image row 1)
        0.0f, 0.1f, 0.2f, 1.0f, 1.1f, 1.2f,        // top row (image row 0)
    ];

    public static TheoryData<string, string, bool> ColourHeaders => new()
    {
        { "little_endian", "PF\n2 2\n-1.0\n", true },
        { "big_endian", "PF\n2 2\n1.0\n", false },
        { "spaces_instead_of_newlines", "PF 2 2 -1 ", true },
        { "crlf_and_scale_magnitude", "PF\r\n2 2\r\n-4.5\n", true },
    };

    [Theory]
    [MemberData(nameof(ColourHeaders))]
    public void Colour_pfm_rows_are_stored_bottom_to_top(string name, string header, bool littleEndian)
    {
        RgbImage image = Read(Pfm(header, FileOrder2x2, littleEndian)).Image;
        Assert.Equal((2, 2), (image.Width, image.Height));
        for (int y = 0; y < 2; y++)
        {
            for (int x = 0; x < 2; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    Assert.True((10 * y) + x + (0.1f * c) == image.At(x, y, c) || Math.Abs((10 * y) + x + (0.1f * c) - image.At(x, y, c)) < 1e-6, $"{name} ({x},{y},{c})");
                }
            }
        }
    }

    [Fact]
    public void Grey_pfm_is_copied_to_three_channels_with_a_note()
    {
        ImageReadResult result = Read(Pfm("Pf\n3 1\n-1.0\n", [0.25f, 0.5f, 2.0f], littleEndian: true));
        Assert.Equal(new[] { 0.25f, 0.25f, 0.25f, 0.5f, 0.5f, 0.5f, 2f, 2f, 2f }, result.Image.Data);
        Assert.Contains(result.Notes, n => n.Contains("grey", StringComparison.Ordinal));
    }

    [Fact]
    public void Write_then_read_keeps_every_bit()
    {
        RgbImage image = SyntheticImages.Uniform(7, 5, -3, 1e6, seed: 3);
        image.Data[4] = float.NaN;
        image.Data[5] = float.NegativeInfinity;
        image.Data[6] = BitConverter.Int32BitsToSingle(1); // smallest subnormal
        var stream = new MemoryStream();
        PfmCodec.Write(stream, image);
        byte[] bytes = stream.ToArray();
        Assert.StartsWith("PF\n7 5\n-1.0\n", Encoding.ASCII.GetString(bytes, 0, 12), StringComparison.Ordinal);
        Assert.Equal(12 + (7 * 5 * 3 * 4), bytes.Length);
        RgbImage back = Read(bytes).Image;
        Assert.Equal(image.Data.Select(BitConverter.SingleToInt32Bits), back.Data.Select(BitConverter.SingleToInt32Bits));
    }

    [Fact]
    public void First_stored_row_is_the_bottom_row_of_the_image()
    {
        var image = new RgbImage(1, 2);
        image.At(0, 1, 0) = 42f; // bottom row
        var stream = new MemoryStream();
        PfmCodec.Write(stream, image);
        byte[] bytes = stream.ToArray();
        Assert.Equal(42f, BinaryPrimitives.ReadSingleLittleEndian(bytes.AsSpan("PF\n1 2\n-1.0\n".Length)));
    }

    [Fact]
    public void A_header_with_crlf_line_ends_is_read_with_a_note()
    {
        // A writer in Windows text mode: "PF\r\n2 1\r\n-1.0\r\n" then 2·1·3 little-endian floats.
        float[] values = [0.5f, 1.5f, -2f, 3.25f, 0f, 8f];
        var bytes = new List<byte>(System.Text.Encoding.ASCII.GetBytes("PF\r\n2 1\r\n-1.0\r\n"));
        foreach (float v in values)
        {
            bytes.AddRange(BitConverter.GetBytes(v));
        }

        ImageReadResult r = PfmCodec.Read(new MemoryStream(bytes.ToArray()), "crlf.pfm");
        Assert.Equal(values, r.Image.Data);
        Assert.Contains(r.Notes, n => n.Contains("CR LF", StringComparison.Ordinal));
    }
}
