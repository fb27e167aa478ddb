using System.Runtime.InteropServices;
using SkiaSharp;

namespace PathBench.Imaging;

/// <summary>
/// PNG out through SkiaSharp: 8-bit sRGB (exposure, tone curve, IEC 61966-2-1 encoding). PNG in
/// through our own decoder (<see cref="PngDecoder"/>): every colour type and bit depth, 16-bit
/// samples exact, decoded to linear values by the transfer the file's colour chunks state
/// (<see cref="PngTransfer"/>); alpha is ignored and grey goes to R, G and B.
/// </summary>
public static class PngCodec
{
    /// <summary>
    /// Reads any PNG (grey, grey+alpha, RGB, RGBA, palette; 1 to 16 bits; interlaced or not) into
    /// linear RGB. Alpha and tRNS transparency are ignored; grey is copied to R, G and B; the
    /// notes say which transfer to linear was assumed and why.
    /// </summary>
    /// <exception cref="ImageFileException">The file is unreadable, malformed or above the limits.</exception>
    public static ImageReadResult Read(string path, ImageLimits? limits = null)
    {
        using FileStream stream = ImageFile.OpenRead(path);
        return Read(stream, path, limits);
    }

    /// <summary>Reads a PNG from a seekable stream; <paramref name="fileName"/> goes into error messages.</summary>
    /// <exception cref="ImageFileException">The data is malformed or above the limits.</exception>
    public static ImageReadResult Read(Stream stream, string fileName, ImageLimits? limits = null)
    {
        ArgumentNullException.ThrowIfNull(stream);
        PngDecoded png = PngDecoder.Decode(stream, fileName, limits ?? ImageLimits.Default);
        PngHeader h = png.Header;
        bool indexed = h.ColourType == PngColourType.Palette;

        // One linear value per possible stored value: palette entries are always 8-bit.
        int bits = indexed ? 8 : h.BitDepth;
        double max = (1 << bits) - 1;
        float[] linear = new float[1 << bits];
        for (int v = 0; v < linear.Length; v++)
        {
            linear[v] = (float)png.Transfer.ToLinear(v / max);
        }

        var image = new RgbImage(h.Width, h.Height);
        float[] data = image.Data;
        int channels = h.Channels;
        byte[] palette = png.Palette ?? [];
        ushort[] row = new ushort[h.Width * channels];
        long o = 0;
        for (int y = 0; y < h.Height; y++)
        {
            png.Row(y, row);
            for (int x = 0; x < h.Width; x++, o += 3)
            {
                int s = x * channels;
                switch (h.ColourType)
                {
                    case PngColourType.Rgb or PngColourType.Rgba:
                        data[o] = linear[row[s]];
                        data[o + 1] = linear[row[s + 1]];
                        data[o + 2] = linear[row[s + 2]];
                        break;
                    case PngColourType.Palette:
                        int e = row[s] * 3;
                        data[o] = linear[palette[e]];
                        data[o + 1] = linear[palette[e + 1]];
                        data[o + 2] = linear[palette[e + 2]];
                        break;
                    default:
                        data[o] = data[o + 1] = data[o + 2] = linear[row[s]];
                        break;
                }
            }
        }

        var notes = new List<string>(png.Transfer.Notes)
        {
            indexed
                ? "palette entries (8-bit) divided by 255 before the transfer"
                : FormattableString.Invariant($"{h.BitDepth}-bit samples divided by {(1 << h.BitDepth) - 1} before the transfer"),
        };
        if (h.ColourType is PngColourType.GreyAlpha or PngColourType.Rgba)
        {
            notes.Add("alpha channel ignored");
        }

        if (h.ColourType is PngColourType.Grey or PngColourType.GreyAlpha)
        {
            notes.Add("grey PNG: the value is copied to R, G and B");
        }

        notes.AddRange(png.Notes);
        return new ImageReadResult(image, "PNG " + h.Describe(), notes);
    }

    /// <summary>The largest width or height a PNG may have here: libpng's default limit.</summary>
    public const int MaxSide = 1_000_000;

    /// <summary>Writes an 8-bit sRGB PNG of a linear image.</summary>
    public static void Write(string path, RgbImage image, DisplayTransform? display = null)
    {
        ArgumentNullException.ThrowIfNull(image);
        RequireEncodable(path, image.Width, image.Height);
        ImageFile.WriteAtomically(path, stream => Write(stream, image, display));
    }

    /// <summary>Refuses, before anything is written, a size the PNG encoder would reject.</summary>
    internal static void RequireEncodable(string path, long width, long height)
    {
        if (width > MaxSide || height > MaxSide)
        {
            throw new ImageFileException(path, FormattableString.Invariant(
                $"a {width}x{height} PNG is beyond the encoder's limit of {MaxSide} pixels a side; write EXR or PFM instead"));
        }
    }

    /// <summary>Writes an 8-bit sRGB PNG of a linear image to a stream.</summary>
    public static void Write(Stream stream, RgbImage image, DisplayTransform? display = null)
    {
        ArgumentNullException.ThrowIfNull(image);
        display ??= new DisplayTransform();
        byte[] rgba = new byte[image.PixelCount * 4];
        float[] d = image.Data;
        Span<byte> code = stackalloc byte[3];
        for (long i = 0, n = image.PixelCount; i < n; i++)
        {
            display.Apply(d[i * 3], d[(i * 3) + 1], d[(i * 3) + 2], code);
            rgba[i * 4] = code[0];
            rgba[(i * 4) + 1] = code[1];
            rgba[(i * 4) + 2] = code[2];
            rgba[(i * 4) + 3] = 255;
        }

        WriteRgba(stream, image.Width, image.Height, rgba);
    }

    /// <summary>Encodes ready 8-bit RGBA (alpha must be 255) as PNG.</summary>
    internal static void WriteRgba(Stream stream, int width, int height, byte[] rgba)
    {
        ArgumentNullException.ThrowIfNull(stream);
        var info = new SKImageInfo(width, height, SKColorType.Rgba8888, SKAlphaType.Opaque);
        using var bitmap = new SKBitmap(info);
        Marshal.Copy(rgba, 0, bitmap.GetPixels(), rgba.Length);
        WriteBitmap(stream, bitmap);
    }

    /// <summary>Encodes a bitmap as PNG.</summary>
    internal static void WriteBitmap(Stream stream, SKBitmap bitmap)
    {
        // One row filter (Paeth) instead of trying all five per row, zlib level 6: the encoder's
        // exhaustive filter search triples the time of a 4096² image for a few percent of size.
        using SKPixmap pixmap = bitmap.PeekPixels();
        using SKData encoded = pixmap.Encode(new SKPngEncoderOptions(SKPngEncoderFilterFlags.Paeth, 6))
            ?? throw new IOException("the PNG encoder returned nothing");
        encoded.SaveTo(stream);
    }
}
