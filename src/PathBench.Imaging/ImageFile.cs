using PathBench.Io;

namespace PathBench.Imaging;

/// <summary>The file formats PathBench reads and writes.</summary>
public enum ImageFormat
{
    /// <summary>Portable Float Map.</summary>
    Pfm,

    /// <summary>OpenEXR.</summary>
    Exr,

    /// <summary>PNG (read at any bit depth and colour type; written as 8-bit sRGB).</summary>
    Png,
}

/// <summary>Format dispatch: readers pick the format from the file's first bytes, writers from its extension.</summary>
public static class ImageFile
{
    /// <summary>Reads a PFM, OpenEXR or PNG file, recognised by its magic bytes; <paramref name="exr"/> picks an OpenEXR file's part and channels.</summary>
    /// <exception cref="ImageFileException">Unreadable, unknown format, malformed or unsupported.</exception>
    public static ImageReadResult Read(string path, ImageLimits? limits = null, ExrReadOptions? exr = null)
    {
        using FileStream stream = OpenRead(path);
        Span<byte> magic = stackalloc byte[8];
        int n = stream.ReadAtLeast(magic, magic.Length, throwOnEndOfStream: false);
        stream.Position = 0;
        ImageFormat? format = Sniff(magic[..n]);
        return format switch
        {
            ImageFormat.Pfm => PfmCodec.Read(stream, path, limits),
            ImageFormat.Exr => ExrCodec.Read(stream, path, limits, exr),
            ImageFormat.Png => PngCodec.Read(stream, path, limits),
            _ => throw new ImageFileException(path, "unknown image format (expected PFM, OpenEXR or PNG by its first bytes)"),
        };
    }

    /// <summary>
    /// Writes <paramref name="image"/> in the format its extension names: EXR with
    /// <paramref name="exr"/> (default: FLOAT, ZIP), PFM, or PNG through <paramref name="display"/>
    /// (default: no exposure, clamp).
    /// </summary>
    /// <exception cref="ImageFileException">Unknown extension, or a file that cannot be created.</exception>
    public static void Write(string path, RgbImage image, ExrWriteOptions? exr = null, DisplayTransform? display = null)
    {
        switch (FormatFromExtension(path))
        {
            case ImageFormat.Pfm:
                PfmCodec.Write(path, image);
                break;
            case ImageFormat.Exr:
                ExrCodec.Write(path, image, exr);
                break;
            default:
                PngCodec.Write(path, image, display);
                break;
        }
    }

    /// <summary>The format whose magic the bytes start with, or null.</summary>
    public static ImageFormat? Sniff(ReadOnlySpan<byte> start)
    {
        if (start.Length >= 4 && start[..4].SequenceEqual((ReadOnlySpan<byte>)[0x76, 0x2f, 0x31, 0x01]))
        {
            return ImageFormat.Exr;
        }

        if (start.Length >= 8 && start[..8].SequenceEqual((ReadOnlySpan<byte>)[0x89, 0x50, 0x4E, 0x47, 0x0D, 0x0A, 0x1A, 0x0A]))
        {
            return ImageFormat.Png;
        }

        if (start.Length >= 3 && start[0] == 'P' && (start[1] == 'F' || start[1] == 'f') && start[2] is (byte)'\n' or (byte)'\r' or (byte)' ' or (byte)'\t')
        {
            return ImageFormat.Pfm;
        }

        return null;
    }

    /// <summary>The format named by a path's extension (.pfm, .exr, .png, any case).</summary>
    /// <exception cref="ImageFileException">Any other extension.</exception>
    public static ImageFormat FormatFromExtension(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        return Path.GetExtension(path).ToLowerInvariant() switch
        {
            ".pfm" => ImageFormat.Pfm,
            ".exr" => ImageFormat.Exr,
            ".png" => ImageFormat.Png,
            string ext => throw new ImageFileException(path, $"unknown image format '{ext}' (expected .pfm, .exr or .png)"),
        };
    }

    /// <summary>
    /// Opens a regular file for reading (<see cref="InputFile"/>: its type is checked before the open,
    /// so a FIFO is refused rather than waited on); failures become a one-line <see cref="ImageFileException"/>.
    /// </summary>
    public static FileStream OpenRead(string path) => InputFile.OpenRead(path, reason => new ImageFileException(path, reason));

    /// <summary>
    /// Writes a file through <see cref="AtomicFile"/> (temporary file, flush, rename), turning I/O
    /// failures into a one-line <see cref="ImageFileException"/>; the previous file survives a failure.
    /// </summary>
    public static void WriteAtomically(string path, Action<Stream> body)
    {
        try
        {
            AtomicFile.Write(path, body);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or ArgumentException or NotSupportedException)
        {
            throw new ImageFileException(path, $"cannot write: {e.Message}", e);
        }
    }
}
