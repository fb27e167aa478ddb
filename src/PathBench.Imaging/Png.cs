using System.Buffers.Binary;
using System.Runtime.InteropServices;
using SkiaSharp;

namespace PathBench.Imaging;

/// <summary>
/// PNG through SkiaSharp: 8-bit sRGB out (exposure, tone curve, IEC 61966-2-1 encoding), and
/// 8-bit PNG in, decoded to linear values through the sRGB curve. The IHDR chunk is checked by
/// hand (PNG specification, ISO/IEC 15948:2004 §11.2.2) before the decoder allocates anything.
/// </summary>
public static class PngCodec
{
    private static readonly byte[] Signature = [0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A];

    // Deflate cannot expand data by more than about 1032:1 (a 258-byte match costs at least two
    // bits; from memory), so a file this much shorter than its declared pixels is lying or cut.
    private const long MaxDeflateRatio = 1032;

    /// <summary>Reads an 8-bit PNG into linear RGB (alpha ignored, grey copied to R, G and B).</summary>
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
        limits ??= ImageLimits.Default;
        long length = StreamReading.RequireLength(stream, fileName);
        long start = stream.Position;
        if (length - start < 33)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"truncated: {length - start} bytes is too short for a PNG file"));
        }

        Span<byte> head = stackalloc byte[33];
        StreamReading.ReadExactly(stream, head, fileName, "the PNG header");
        if (!head[..8].SequenceEqual(Signature))
        {
            throw new ImageFileException(fileName, "not a PNG file: wrong signature");
        }

        uint ihdrLength = BinaryPrimitives.ReadUInt32BigEndian(head[8..]);
        if (ihdrLength != 13 || !head[12..16].SequenceEqual("IHDR"u8))
        {
            throw new ImageFileException(fileName, "PNG does not start with a 13-byte IHDR chunk");
        }

        uint width = BinaryPrimitives.ReadUInt32BigEndian(head[16..]);
        uint height = BinaryPrimitives.ReadUInt32BigEndian(head[20..]);
        byte bitDepth = head[24];
        byte colourType = head[25];
        if (width == 0 || height == 0 || width > int.MaxValue || height > int.MaxValue)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"PNG size {width}x{height} is out of range (1..2^31-1)"));
        }

        int samples = colourType switch
        {
            0 => 1,
            2 => 3,
            3 => 1,
            4 => 2,
            6 => 4,
            _ => throw new ImageFileException(fileName, FormattableString.Invariant($"PNG colour type {colourType} does not exist")),
        };
        bool depthValid = colourType switch
        {
            0 => bitDepth is 1 or 2 or 4 or 8 or 16,
            3 => bitDepth is 1 or 2 or 4 or 8,
            _ => bitDepth is 8 or 16,
        };
        if (!depthValid)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"PNG bit depth {bitDepth} is invalid for colour type {colourType}"));
        }

        limits.Check(fileName, width, height, Math.Max(samples, 4));
        long rowBytes = 1 + ((width * samples * bitDepth) + 7) / 8;
        if (rowBytes * height > (MaxDeflateRatio * (length - start)) + 4096)
        {
            throw new ImageFileException(
                fileName,
                FormattableString.Invariant($"truncated or lying: {length - start} bytes cannot hold the {width}x{height} pixels the header declares"));
        }

        var notes = new List<string>();
        if (bitDepth == 16)
        {
            // Skia's decoder reduces 16 to 8 bits by dropping the low byte: values read low by half
            // an 8-bit code on average. Said plainly, since a bias is what users measure.
            notes.Add("16-bit PNG reduced to 8 bits per channel by truncation before decoding: values read low by about half an 8-bit code; convert such files to EXR or PFM for exact comparisons");
        }

        if (colourType is 4 or 6)
        {
            notes.Add("alpha channel ignored");
        }

        if (colourType is 0 or 4)
        {
            notes.Add("grey PNG: the value is copied to R, G and B");
        }

        notes.Add("8-bit values decoded to linear through the sRGB curve (IEC 61966-2-1)");
        stream.Position = start;
        using var codec = SKCodec.Create(stream, out SKCodecResult created);
        if (codec is null)
        {
            throw new ImageFileException(fileName, $"PNG decoder rejected the file ({created})");
        }

        int w = (int)width;
        int h = (int)height;
        if (codec.Info.Width != w || codec.Info.Height != h)
        {
            throw new ImageFileException(fileName, "PNG decoder disagrees with the IHDR size");
        }

        // No colour space on the target: the decoder hands over the stored codes unconverted.
        var info = new SKImageInfo(w, h, SKColorType.Rgba8888, SKAlphaType.Unpremul);
        var pixels = new byte[(long)w * h * 4];
        SKCodecResult result;
        GCHandle pin = GCHandle.Alloc(pixels, GCHandleType.Pinned);
        try
        {
            result = codec.GetPixels(info, pin.AddrOfPinnedObject());
        }
        finally
        {
            pin.Free();
        }

        if (result != SKCodecResult.Success)
        {
            string why = result == SKCodecResult.IncompleteInput ? "truncated: PNG image data ends early" : $"PNG image data is corrupt ({result})";
            throw new ImageFileException(fileName, why);
        }

        var image = new RgbImage(w, h);
        float[] data = image.Data;
        for (long i = 0, n = (long)w * h; i < n; i++)
        {
            data[i * 3] = Srgb.DecodeByte(pixels[i * 4]);
            data[(i * 3) + 1] = Srgb.DecodeByte(pixels[(i * 4) + 1]);
            data[(i * 3) + 2] = Srgb.DecodeByte(pixels[(i * 4) + 2]);
        }

        return new ImageReadResult(image, FormattableString.Invariant($"PNG {bitDepth}-bit"), notes);
    }

    /// <summary>The largest width or height a PNG may have here: libpng's default limit.</summary>
    public const int MaxSide = 1_000_000;

    /// <summary>Writes an 8-bit sRGB PNG of a linear image.</summary>
    public static void Write(string path, RgbImage image, DisplayTransform? display = null)
    {
        ArgumentNullException.ThrowIfNull(image);
        RequireEncodable(path, image.Width, image.Height);
        using FileStream stream = ImageFile.Create(path);
        Write(stream, image, display);
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
