namespace PathBench.Imaging;

/// <summary>
/// Bounds a reader checks against the header before it allocates anything sized by the file.
/// </summary>
/// <param name="MaxValues">
/// Largest width·height·channels a file may declare (channels as stored, and at least the three
/// of the decoded image). The default 2^28 values is 1 GiB of float32, a 9459² RGB image:
/// far above any render a user compares, far below what would exhaust memory on the 24 GiB
/// machines this runs on (common practice: a fixed decoder budget).
/// </param>
public sealed record ImageLimits(long MaxValues)
{
    /// <summary>2^28 values.</summary>
    public static ImageLimits Default { get; } = new(1L << 28);

    /// <summary>Throws unless width·height·channels is within the budget.</summary>
    internal void Check(string fileName, long width, long height, int channels)
    {
        // Two dimensions of up to 2^31 and a channel count overflow a long: multiply in 128 bits.
        Int128 values = (Int128)width * height * Math.Max(channels, RgbImage.Channels);
        if (width <= 0 || height <= 0 || values > MaxValues)
        {
            throw new ImageFileException(
                fileName,
                FormattableString.Invariant(
                    $"header declares {width}x{height} pixels with {channels} channels = {values} values, above the limit of {MaxValues}"));
        }
    }
}

/// <summary>A decoded image with the reader's notes (what was ignored or converted).</summary>
/// <param name="Image">The linear RGB pixels.</param>
/// <param name="Format">What the file was, e.g. "OpenEXR HALF ZIP" or "PFM colour".</param>
/// <param name="Notes">One line each: channels ignored, conversions applied.</param>
public sealed record ImageReadResult(RgbImage Image, string Format, IReadOnlyList<string> Notes)
{
    /// <summary>Where the image sits in its file's coordinates (an OpenEXR display window); null for formats without one (origin 0,0).</summary>
    public PixelRect? DisplayWindow { get; init; }
}
