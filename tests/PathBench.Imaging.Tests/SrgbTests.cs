namespace PathBench.Imaging.Tests;

/// <summary>The sRGB transfer function against IEC 61966-2-1:1999 (equations of §5.2 and its break points).</summary>
public sealed class SrgbTests
{
    /// <summary>
    /// (linear, encoded) pairs. Values from IEC 61966-2-1's equations evaluated in double
    /// precision with Debian's /usr/bin/python3 when the test was written; 128/255 → 0.2158605
    /// is also the widely tabulated decode of code 128 (from memory).
    /// </summary>
    public static TheoryData<string, double, double> Pairs => new()
    {
        { "black", 0.0, 0.0 },
        { "white", 1.0, 1.0 },
        { "linear_break_0.0031308", 0.0031308, 0.040449936 },
        { "mid_grey_linear_0.5", 0.5, 0.7353569830524495 },
        { "grey_card_0.18", 0.18, 0.46135612950044164 },
        { "encoded_0.5", 0.21404114048223255, 0.5 },
        { "code_128", 0.21586050011389926, 128.0 / 255.0 },
    };

    [Theory]
    [MemberData(nameof(Pairs))]
    public void Encode_and_decode_match_the_standard(string name, double linear, double encoded)
    {
        Tolerance.Close(encoded, Srgb.Encode(linear), $"{name} encode", rel: 1e-12);
        Tolerance.Close(linear, Srgb.Decode(encoded), $"{name} decode", rel: 1e-12);
    }

    [Fact]
    public void Linear_segment_is_used_up_to_the_break_points()
    {
        // IEC 61966-2-1: V = 12.92·L for L ≤ 0.0031308, L = V/12.92 for V ≤ 0.04045.
        Assert.Equal(12.92 * 0.002, Srgb.Encode(0.002), 15);
        Assert.Equal(0.04045 / 12.92, Srgb.Decode(0.04045), 15);
        Assert.Equal(0.03 / 12.92, Srgb.Decode(0.03), 15);

        // Just above the break the power segment applies; the two segments nearly meet (the
        // standard's constants leave a gap of ~3e-8 at the break), so the curve is continuous to 1e-7.
        double above = Srgb.Encode(0.0031309);
        Assert.Equal((1.055 * Math.Pow(0.0031309, 1 / 2.4)) - 0.055, above, 15);
        Assert.True(Math.Abs(above - (12.92 * 0.0031309)) < 1e-7);
    }

    [Fact]
    public void Every_8_bit_code_survives_decode_then_encode()
    {
        for (int code = 0; code < 256; code++)
        {
            Assert.Equal(code, Srgb.EncodeToByte(Srgb.DecodeByte((byte)code)));
        }
    }

    [Fact]
    public void Table_encoding_equals_the_direct_formula()
    {
        // The threshold search must give floor(255·Encode(L) + 0.5) exactly, including right at each boundary.
        var rng = new Random(7);
        for (int i = 0; i < 200_000; i++)
        {
            double l = i < 100_000 ? rng.NextDouble() : rng.NextDouble() * 0.01;
            Assert.Equal(Srgb.EncodeToByteDirect(l), Srgb.EncodeToByte(l));
        }

        for (int code = 0; code < 256; code++)
        {
            double boundary = Srgb.Decode((code - 0.5) / 255.0);
            foreach (double l in new[] { boundary, Math.BitDecrement(boundary), Math.BitIncrement(boundary) })
            {
                Assert.Equal(Srgb.EncodeToByteDirect(l), Srgb.EncodeToByte(l));
            }
        }
    }

    [Fact]
    public void Decoded_codes_increase_strictly()
    {
        for (int code = 1; code < 256; code++)
        {
            Assert.True(Srgb.DecodeByte((byte)code) > Srgb.DecodeByte((byte)(code - 1)), $"code {code}");
        }
    }

    [Theory]
    [InlineData(-0.5, 0)]
    [InlineData(7.0, 255)]
    public void Out_of_range_values_clip(double linear, int code) => Assert.Equal(code, Srgb.EncodeToByte(linear));
}
