namespace PathBench.Imaging;

/// <summary>
/// A linear float32 RGB image: pixels stored row by row, top row first, each pixel as three
/// interleaved values R, G, B. Values are scene-linear (no transfer curve); whatever a file
/// stored beyond R, G, B (alpha, depth, extra layers) is not kept.
/// </summary>
public sealed class RgbImage
{
    /// <summary>Values per pixel.</summary>
    public const int Channels = 3;

    /// <summary>Creates a black image.</summary>
    /// <exception cref="ArgumentOutOfRangeException">A dimension is not positive or the image exceeds an array's length.</exception>
    public RgbImage(int width, int height)
    {
        Data = new float[CheckedLength(width, height)];
        Width = width;
        Height = height;
    }

    /// <summary>Wraps existing interleaved RGB values (not copied).</summary>
    /// <exception cref="ArgumentException"><paramref name="data"/> does not hold exactly width·height·3 values.</exception>
    public RgbImage(int width, int height, float[] data)
    {
        ArgumentNullException.ThrowIfNull(data);
        long length = CheckedLength(width, height);
        if (data.LongLength != length)
        {
            throw new ArgumentException(
                FormattableString.Invariant($"a {width}x{height} RGB image needs {length} values, got {data.LongLength}"),
                nameof(data));
        }

        Data = data;
        Width = width;
        Height = height;
    }

    /// <summary>Width in pixels.</summary>
    public int Width { get; }

    /// <summary>Height in pixels.</summary>
    public int Height { get; }

    /// <summary>Interleaved RGB values, row-major, top row first: index (y·Width + x)·3 + channel.</summary>
    public float[] Data { get; }

    /// <summary>Number of pixels.</summary>
    public long PixelCount => (long)Width * Height;

    /// <summary>The value of one channel of one pixel.</summary>
    public ref float At(int x, int y, int channel)
    {
        if ((uint)x >= (uint)Width || (uint)y >= (uint)Height || (uint)channel >= Channels)
        {
            throw new ArgumentOutOfRangeException(
                nameof(x), FormattableString.Invariant($"pixel ({x},{y}) channel {channel} is outside a {Width}x{Height} RGB image"));
        }

        return ref Data[(((long)y * Width) + x) * Channels + channel];
    }

    /// <summary>The interleaved values of row <paramref name="y"/>.</summary>
    public Span<float> Row(int y)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(y);
        ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(y, Height);
        return Data.AsSpan(y * Width * Channels, Width * Channels);
    }

    /// <summary>A copy of the pixels inside <paramref name="region"/>.</summary>
    public RgbImage Crop(PixelRect region)
    {
        region.ThrowIfOutside(Width, Height);
        var result = new RgbImage(region.Width, region.Height);
        for (int y = 0; y < region.Height; y++)
        {
            Data.AsSpan((((region.Y + y) * Width) + region.X) * Channels, region.Width * Channels)
                .CopyTo(result.Row(y));
        }

        return result;
    }

    /// <summary>A deep copy.</summary>
    public RgbImage Clone() => new(Width, Height, (float[])Data.Clone());

    private static long CheckedLength(int width, int height)
    {
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(width);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(height);
        long length = (long)width * height * Channels;

        // Row() and the codecs index rows with int arithmetic; Array.MaxLength bounds a single array anyway.
        if (length > Array.MaxLength)
        {
            throw new ArgumentOutOfRangeException(
                nameof(width), FormattableString.Invariant($"a {width}x{height} RGB image needs {length} values, more than one array holds"));
        }

        return length;
    }
}
