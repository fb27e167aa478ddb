using System.Buffers.Binary;
using System.Globalization;
using System.Runtime.InteropServices;
using System.Text;

namespace PathBench.Imaging;

/// <summary>
/// Portable Float Map. Layout (the format's definition as given with HDRShop by P. Debevec;
/// from memory): an ASCII header "PF" (three channels) or "Pf" (one channel), whitespace,
/// width and height in decimal, whitespace, a scale whose sign gives the byte order
/// (negative = little-endian, positive = big-endian), one whitespace byte, then
/// width·height·channels float32 values with rows stored bottom-to-top.
/// </summary>
public static class PfmCodec
{
    // A header is four short tokens; 256 bytes is generous and bounds the scan of a non-PFM file.
    private const int MaxHeaderBytes = 256;

    /// <summary>Reads a PFM file.</summary>
    /// <exception cref="ImageFileException">The file is unreadable, malformed or above the limits.</exception>
    public static ImageReadResult Read(string path, ImageLimits? limits = null)
    {
        using FileStream stream = ImageFile.OpenRead(path);
        return Read(stream, path, limits);
    }

    /// <summary>Reads a PFM image from a seekable stream; <paramref name="fileName"/> goes into error messages.</summary>
    /// <exception cref="ImageFileException">The data is malformed or above the limits.</exception>
    public static ImageReadResult Read(Stream stream, string fileName, ImageLimits? limits = null)
    {
        ArgumentNullException.ThrowIfNull(stream);
        limits ??= ImageLimits.Default;
        long length = StreamReading.RequireLength(stream, fileName);
        long start = stream.Position;
        var header = new byte[(int)Math.Min(MaxHeaderBytes, length - start)];
        StreamReading.ReadExactly(stream, header, fileName, "the PFM header");

        int pos = 0;
        string magic = NextToken(header, ref pos, fileName, "magic");
        int channels = magic switch
        {
            "PF" => 3,
            "Pf" => 1,
            _ => throw new ImageFileException(fileName, $"not a PFM file: magic is '{Printable(magic)}', expected 'PF' or 'Pf'"),
        };
        long width = ParseDimension(NextToken(header, ref pos, fileName, "width"), "width", fileName);
        long height = ParseDimension(NextToken(header, ref pos, fileName, "height"), "height", fileName);
        string scaleText = NextToken(header, ref pos, fileName, "scale");
        if (!double.TryParse(scaleText, NumberStyles.Float, CultureInfo.InvariantCulture, out double scale) ||
            !double.IsFinite(scale) || scale == 0)
        {
            throw new ImageFileException(fileName, $"PFM scale '{Printable(scaleText)}' is not a non-zero number");
        }

        // Exactly one whitespace byte separates the scale from the pixels.
        if (pos >= header.Length)
        {
            throw new ImageFileException(fileName, "truncated: file ends inside the PFM header");
        }

        if (!IsSpace(header[pos]))
        {
            throw new ImageFileException(fileName, "PFM scale is not followed by a whitespace byte");
        }

        // A writer in Windows text mode ends header lines with CR LF. The LF is then part of the
        // separator, not the first pixel byte, exactly when the file is one byte longer than the
        // pixels need: then it is skipped, with a note.
        bool crlf = header[pos] == (byte)'\r' && pos + 1 < header.Length && header[pos + 1] == (byte)'\n';
        pos++;
        // Rows are read one at a time into the image: the reader holds one row besides it.
        limits.Check(fileName, width, height, width * channels * sizeof(float));

        bool littleEndian = scale < 0;
        long expected = width * height * channels * sizeof(float);
        if (crlf && length - (start + pos) == expected + 1)
        {
            pos++;
        }
        else
        {
            crlf = false;
        }

        long dataStart = start + pos;
        long available = length - dataStart;
        if (available < expected)
        {
            throw new ImageFileException(
                fileName,
                FormattableString.Invariant(
                    $"truncated: header declares {width}x{height} {magic} = {expected} bytes of pixels, but {available} follow"));
        }

        var notes = new List<string>();
        if (crlf)
        {
            notes.Add("header lines end in CR LF; the LF after the scale was taken as part of the header");
        }

        if (available > expected)
        {
            notes.Add(FormattableString.Invariant($"{available - expected} bytes after the pixel data ignored"));
        }

        if (Math.Abs(scale) != 1)
        {
            notes.Add(FormattableString.Invariant($"scale magnitude {Math.Abs(scale)} is not applied (values read as stored)"));
        }

        if (channels == 1)
        {
            notes.Add("grey PFM: the value is copied to R, G and B");
        }

        int w = (int)width;
        int h = (int)height;
        var image = new RgbImage(w, h);
        stream.Position = dataStart;
        var row = new byte[w * channels * sizeof(float)];
        for (int fileRow = 0; fileRow < h; fileRow++)
        {
            StreamReading.ReadExactly(stream, row, fileName, "the PFM pixels");
            Span<float> dst = image.Row(h - 1 - fileRow); // bottom row first in the file
            if (channels == 3 && littleEndian == BitConverter.IsLittleEndian)
            {
                // Same byte order as the machine: the stored floats are the values.
                MemoryMarshal.Cast<byte, float>(row).CopyTo(dst);
            }
            else if (channels == 3)
            {
                for (int i = 0; i < dst.Length; i++)
                {
                    dst[i] = ReadFloat(row.AsSpan(i * 4), littleEndian);
                }
            }
            else
            {
                for (int x = 0; x < w; x++)
                {
                    float v = ReadFloat(row.AsSpan(x * 4), littleEndian);
                    dst[x * 3] = v;
                    dst[(x * 3) + 1] = v;
                    dst[(x * 3) + 2] = v;
                }
            }
        }

        return new ImageReadResult(image, channels == 3 ? "PFM colour" : "PFM grey", notes);
    }

    /// <summary>Writes a colour ("PF") little-endian PFM file.</summary>
    public static void Write(string path, RgbImage image)
    {
        ImageFile.WriteAtomically(path, stream => Write(stream, image));
    }

    /// <summary>Writes a colour ("PF") little-endian PFM (scale −1.0) to a stream.</summary>
    public static void Write(Stream stream, RgbImage image)
    {
        ArgumentNullException.ThrowIfNull(stream);
        ArgumentNullException.ThrowIfNull(image);
        byte[] header = Encoding.ASCII.GetBytes(FormattableString.Invariant($"PF\n{image.Width} {image.Height}\n-1.0\n"));
        stream.Write(header);
        var row = new byte[image.Width * 3 * sizeof(float)];
        for (int y = image.Height - 1; y >= 0; y--)
        {
            Span<float> src = image.Row(y);
            if (BitConverter.IsLittleEndian)
            {
                MemoryMarshal.AsBytes(src).CopyTo(row);
            }
            else
            {
                for (int i = 0; i < src.Length; i++)
                {
                    BinaryPrimitives.WriteSingleLittleEndian(row.AsSpan(i * 4), src[i]);
                }
            }

            stream.Write(row);
        }
    }

    private static float ReadFloat(ReadOnlySpan<byte> bytes, bool littleEndian) =>
        littleEndian ? BinaryPrimitives.ReadSingleLittleEndian(bytes) : BinaryPrimitives.ReadSingleBigEndian(bytes);

    private static bool IsSpace(byte b) => b is (byte)' ' or (byte)'\n' or (byte)'\r' or (byte)'\t';

    private static string NextToken(byte[] header, ref int pos, string fileName, string what)
    {
        while (pos < header.Length && IsSpace(header[pos]))
        {
            pos++;
        }

        int begin = pos;
        while (pos < header.Length && !IsSpace(header[pos]))
        {
            pos++;
        }

        if (pos == begin)
        {
            throw new ImageFileException(fileName, $"truncated: file ends before the PFM {what}");
        }

        if (pos == header.Length)
        {
            throw new ImageFileException(fileName, $"truncated or malformed PFM header: no whitespace after the {what}");
        }

        return Encoding.ASCII.GetString(header, begin, pos - begin);
    }

    private static long ParseDimension(string token, string what, string fileName)
    {
        if (!long.TryParse(token, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out long value))
        {
            throw new ImageFileException(fileName, $"PFM {what} '{Printable(token)}' is not an integer");
        }

        if (value <= 0 || value > int.MaxValue)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"PFM {what} {value} is out of range (1..{int.MaxValue})"));
        }

        return value;
    }

    private static string Printable(string s)
    {
        var b = new StringBuilder(s.Length);
        foreach (char c in s)
        {
            b.Append(c is >= ' ' and <= '~' ? c : '?');
        }

        return b.ToString();
    }
}
