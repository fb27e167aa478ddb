using System.Globalization;
using System.Text.Json;

namespace PathBench.Imaging.Tests;

/// <summary>
/// OpenImageIO (Debian python3-openimageio 2.4, which decodes through the OpenEXR library) as the
/// reference for our EXR reader and writer, through tools/imaging/oiio_exr.py. Its exit status is
/// trusted only together with its output: a decode must also produce a data file of exactly the
/// size its own JSON describes (OpenEXR's exrinfo was seen here returning a non-zero status on a
/// valid file at random, so no reference tool's status is taken alone).
/// </summary>
internal static class OiioReference
{
    /// <summary>What OpenImageIO reports of a decoded part.</summary>
    public sealed record Info(int Width, int Height, int X, int Y, int[] Full, string[] Channels, string[] Formats, string Compression, int[] Tile);

    /// <summary>A part's pixels as OpenImageIO decodes them: the data window, pixel-interleaved, every channel, as float bits (or uint32 for UINT files).</summary>
    public sealed record Decoded(Info Info, uint[] Bits)
    {
        /// <summary>Bits of channel <paramref name="name"/> at data-window pixel (<paramref name="x"/>, <paramref name="y"/>).</summary>
        public uint At(int x, int y, string name) => Bits[(((long)y * Info.Width) + x) * Info.Channels.Length + Array.IndexOf(Info.Channels, name)];
    }

    /// <summary>Writes a test-pattern file with OpenImageIO. <paramref name="extra"/> are more options of oiio_exr.py write.</summary>
    public static void Write(string path, int width, int height, string compression, string type = "half", string channels = "R,G,B", params string[] extra)
    {
        string[] args =
        [
            "write", path, "--size", width.ToString(CultureInfo.InvariantCulture), height.ToString(CultureInfo.InvariantCulture),
            "--channels", channels, "--type", type, "--compression", compression, .. extra,
        ];
        ExternalTool.RunOiioScript(args);
        Assert.True(File.Exists(path), $"oiio_exr.py write exited 0 but wrote no {path}");
    }

    /// <summary>Decodes part <paramref name="subimage"/> of <paramref name="path"/> with OpenImageIO.</summary>
    public static Decoded Decode(string path, int subimage = 0)
    {
        string prefix = path + ".oiio" + subimage.ToString(CultureInfo.InvariantCulture);
        ExternalTool.RunOiioScript(["decode", path, prefix, "--subimage", subimage.ToString(CultureInfo.InvariantCulture)]);
        return Load(prefix);
    }

    /// <summary>A decode oiio_exr.py wrote to <paramref name="prefix"/>.json and .bin (live, or recorded beside a fixture).</summary>
    public static Decoded Load(string prefix)
    {
        Info info = JsonSerializer.Deserialize<Info>(File.ReadAllText(prefix + ".json"), new JsonSerializerOptions { PropertyNameCaseInsensitive = true })
            ?? throw new InvalidOperationException("oiio_exr.py wrote an empty description");
        byte[] bytes = File.ReadAllBytes(prefix + ".bin");
        long expected = (long)info.Width * info.Height * info.Channels.Length * 4;
        Assert.True(bytes.Length == expected, $"{prefix}.bin has {bytes.Length} bytes; its description needs {expected}");
        var bits = new uint[bytes.Length / 4];
        Buffer.BlockCopy(bytes, 0, bits, 0, bytes.Length);
        return new Decoded(info, bits);
    }

    /// <summary>
    /// Asserts that our reader's image of <paramref name="path"/> holds, bit for bit, OpenImageIO's
    /// decode of channels <paramref name="rgb"/> (three names for R, G, B, or one copied to all three).
    /// </summary>
    public static void AssertSameAsOurs(string path, ImageReadResult ours, string[] rgb, int subimage = 0) =>
        AssertSame(Decode(path, subimage), ours, Path.GetFileName(path), rgb);

    /// <summary>
    /// Asserts that <paramref name="ours"/> (the display window) holds <paramref name="reference"/> (the
    /// data window) where the two overlap, and zero elsewhere.
    /// </summary>
    public static void AssertSame(Decoded reference, ImageReadResult ours, string what, string[] rgb)
    {
        RgbImage image = ours.Image;
        Info info = reference.Info;
        Assert.Equal((info.Full[2], info.Full[3]), (image.Width, image.Height));
        int dx = info.X - info.Full[0];
        int dy = info.Y - info.Full[1];
        bool uint32 = info.Formats.All(f => f == "uint"); // read by us as float: exact below 2^24
        for (int y = 0; y < image.Height; y++)
        {
            for (int x = 0; x < image.Width; x++)
            {
                bool inside = x - dx >= 0 && x - dx < info.Width && y - dy >= 0 && y - dy < info.Height;
                for (int c = 0; c < 3; c++)
                {
                    string name = rgb[rgb.Length == 1 ? 0 : c];
                    uint expected = !inside ? 0u
                        : uint32 ? BitConverter.SingleToUInt32Bits(reference.At(x - dx, y - dy, name))
                        : reference.At(x - dx, y - dy, name);
                    uint actual = BitConverter.SingleToUInt32Bits(image.At(x, y, c));
                    if (expected != actual)
                    {
                        Assert.Fail(FormattableString.Invariant(
                            $"{what}: pixel ({x},{y}) channel {name} is {BitConverter.UInt32BitsToSingle(actual):R} (0x{actual:x8}); OpenImageIO decodes {BitConverter.UInt32BitsToSingle(expected):R} (0x{expected:x8})"));
                    }
                }
            }
        }
    }
}
