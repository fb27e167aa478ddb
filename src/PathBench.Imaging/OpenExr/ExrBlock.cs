namespace PathBench.Imaging;

/// <summary>One channel of an OpenEXR part as the chunk codecs see it.</summary>
/// <param name="Name">Full channel name, e.g. "R" or "diffuse.R".</param>
/// <param name="Type">Sample type.</param>
/// <param name="XSampling">Horizontal subsampling: the channel has samples at x with x mod XSampling = 0.</param>
/// <param name="YSampling">Vertical subsampling, likewise for y.</param>
/// <param name="PerceptuallyLinear">The channel's pLinear flag (B44 and DWA code such channels differently).</param>
internal readonly record struct ExrChannelLayout(string Name, ExrPixelType Type, int XSampling, int YSampling, bool PerceptuallyLinear)
{
    /// <summary>Bytes per sample: 2 for HALF, 4 for FLOAT and UINT.</summary>
    public int Size => Type == ExrPixelType.Half ? 2 : 4;
}

/// <summary>
/// The pixel rectangle one chunk covers (a block of scanlines or one tile) and the part's channels in
/// file (alphabetical) order. Its uncompressed form, which every codec decodes to, is the OpenEXR file
/// layout specification's: for each line y of the rectangle, for each channel with samples on that
/// line, that channel's samples of the line, little-endian.
/// </summary>
internal sealed class ExrBlock
{
    /// <summary>Describes the rectangle (<paramref name="x0"/>, <paramref name="y0"/>) + (<paramref name="width"/>, <paramref name="height"/>) in absolute (data window) coordinates.</summary>
    public ExrBlock(ExrChannelLayout[] channels, int x0, int y0, int width, int height)
    {
        ArgumentNullException.ThrowIfNull(channels);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(width);
        ArgumentOutOfRangeException.ThrowIfNegativeOrZero(height);
        Channels = channels;
        X0 = x0;
        Y0 = y0;
        Width = width;
        Height = height;
        long size = 0;
        foreach (ExrChannelLayout c in channels)
        {
            size += (long)SampleCount(x0, width, c.XSampling) * SampleCount(y0, height, c.YSampling) * c.Size;
        }

        RawSize = size;
    }

    /// <summary>The channels in file order.</summary>
    public ExrChannelLayout[] Channels { get; }

    /// <summary>Left column, absolute.</summary>
    public int X0 { get; }

    /// <summary>Top line, absolute.</summary>
    public int Y0 { get; }

    /// <summary>Columns covered.</summary>
    public int Width { get; }

    /// <summary>Lines covered.</summary>
    public int Height { get; }

    /// <summary>Bytes of the uncompressed chunk.</summary>
    public long RawSize { get; }

    /// <summary>Samples channel <paramref name="c"/> has on one of its lines (its samples across the rectangle's width).</summary>
    public int SamplesPerLine(int c) => SampleCount(X0, Width, Channels[c].XSampling);

    /// <summary>Lines of the rectangle on which channel <paramref name="c"/> has samples.</summary>
    public int LineCount(int c) => SampleCount(Y0, Height, Channels[c].YSampling);

    /// <summary>Whether channel <paramref name="c"/> has samples on absolute line <paramref name="y"/>.</summary>
    public bool HasLine(int c, int y) => FloorMod(y, Channels[c].YSampling) == 0;

    /// <summary>How many of the <paramref name="count"/> coordinates starting at <paramref name="start"/> are multiples of <paramref name="sampling"/> (negative coordinates included).</summary>
    public static int SampleCount(int start, int count, int sampling)
    {
        long first = start;
        long last = (long)start + count - 1;
        return (int)(FloorDiv(last, sampling) - FloorDiv(first - 1, sampling));
    }

    private static long FloorDiv(long a, long b) => a >= 0 ? a / b : -((-a + b - 1) / b);

    private static long FloorMod(long a, long b) => a - (FloorDiv(a, b) * b);
}

/// <summary>A chunk whose data breaks its codec's rules; the reader adds the file name and which chunk.</summary>
internal sealed class ExrCodecException : Exception
{
    /// <summary>Creates the exception with what was wrong.</summary>
    public ExrCodecException(string message) : base(message) { }

    /// <summary>Creates the exception with what was wrong and its cause.</summary>
    public ExrCodecException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates an exception with no message.</summary>
    public ExrCodecException() { }
}
