using PathBench.Io;

namespace PathBench.Imaging;

/// <summary>
/// What a reader checks a header against before it allocates anything sized by the file: the
/// memory the decode needs (the reader's own buffers, the decoded RGB float image) plus what the
/// command will spend per pixel afterwards, against the <see cref="MemoryBudget"/>.
/// </summary>
/// <param name="Budget">The budget; null: <see cref="MemoryBudget.Current"/> at the time of the check.</param>
/// <param name="After">
/// Bytes the command needs, given the decoded width and height, once the image is decoded (its other
/// images, metric planes, encoders); it may also refuse a size at once (an output that size could not
/// be written), so a command refuses at the header what it could not finish.
/// </param>
/// <param name="Use">What the command does with the image, for the message ("and comparing them").</param>
public sealed record ImageLimits(MemoryBudget? Budget = null, Func<long, long, Int128>? After = null, string? Use = null)
{
    /// <summary>The current budget, nothing spent after the decode.</summary>
    public static ImageLimits Default { get; } = new();

    /// <summary>Bytes per pixel of the decoded image (<see cref="RgbImage"/>: three float32).</summary>
    public const int DecodedBytesPerPixel = RgbImage.Channels * sizeof(float);

    /// <summary>Throws unless decoding width·height pixels with <paramref name="readerBytes"/> of the reader's own buffers, and what follows, fit the budget.</summary>
    /// <exception cref="ImageFileException">An empty size.</exception>
    /// <exception cref="ImageFileException">Above the budget (the message says what was asked, the budget and how to raise it).</exception>
    internal void Check(string fileName, long width, long height, Int128 readerBytes)
    {
        if (width <= 0 || height <= 0)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"header declares {width}x{height} pixels"));
        }

        // Two dimensions of up to 2^31 and a per-pixel size overflow a long: multiply in 128 bits.
        Int128 bytes = readerBytes + ((Int128)width * height * DecodedBytesPerPixel) + (After?.Invoke(width, height) ?? 0);
        try
        {
            (Budget ?? MemoryBudget.Current).Require(bytes, FormattableString.Invariant($"decoding the {width}x{height} pixels the header declares{(Use is null ? "" : " " + Use)}"));
        }
        catch (MemoryBudgetException e)
        {
            throw new ImageFileException(fileName, e.Message, e);
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
