namespace PathBench.Imaging;

/// <summary>Settings of <see cref="ImageComparison.Compare"/>.</summary>
public sealed record ComparisonOptions
{
    /// <summary>
    /// ε of relMSE and SMAPE: keeps dark reference pixels from dominating. 0.01 as in the
    /// relMSE of Rousselle, Knaus &amp; Zwicker 2011 (from memory).
    /// </summary>
    public double Epsilon { get; init; } = 0.01;

    /// <summary>
    /// Data range L: PSNR peak and SSIM's L in C1 = (K1·L)², C2 = (K2·L)². 1 = display white of a
    /// linear image whose white is 1 (common practice for renders exposed for display).
    /// </summary>
    public double DataRange { get; init; } = 1.0;

    /// <summary>Region every metric is restricted to; null = whole image.</summary>
    public PixelRect? Region { get; init; }

    /// <summary>Throws if a setting is out of range.</summary>
    /// <exception cref="ArgumentOutOfRangeException">ε or L is not positive and finite.</exception>
    public void Validate()
    {
        if (!(Epsilon > 0) || !double.IsFinite(Epsilon))
        {
            throw new ArgumentOutOfRangeException(nameof(Epsilon), Epsilon, "epsilon must be positive and finite");
        }

        if (!(DataRange > 0) || !double.IsFinite(DataRange))
        {
            throw new ArgumentOutOfRangeException(nameof(DataRange), DataRange, "data range must be positive and finite");
        }
    }
}

/// <summary>Error metrics of one channel (or of luminance, or of all three channels pooled).</summary>
/// <param name="Mse">Mean of (x − r)².</param>
/// <param name="Rmse">√MSE.</param>
/// <param name="RelMse">Mean of (x − r)²/(r² + ε).</param>
/// <param name="Smape">Mean of |x − r|/(|x| + |r| + ε).</param>
/// <param name="Psnr">10·log10(L²/MSE) in dB; +∞ when MSE = 0.</param>
/// <param name="Bias">Mean of x − r (test minus reference).</param>
public sealed record ErrorMetrics(double Mse, double Rmse, double RelMse, double Smape, double Psnr, double Bias);

/// <summary>The outcome of comparing a test image against a reference.</summary>
/// <param name="Width">Width of the compared region.</param>
/// <param name="Height">Height of the compared region.</param>
/// <param name="Region">The region, in image coordinates.</param>
/// <param name="ComparedPixels">Pixels that entered the metrics (finite in both images).</param>
/// <param name="NonFinitePixels">Pixels with a NaN or infinite channel in either image: excluded.</param>
/// <param name="All">R, G, B pooled: means over pixels and the three channels.</param>
/// <param name="R">Red channel.</param>
/// <param name="G">Green channel.</param>
/// <param name="B">Blue channel.</param>
/// <param name="Y">Rec. 709 luminance of each image.</param>
/// <param name="Ssim">Mean SSIM on luminance; null when the region is smaller than the 11×11 window.</param>
/// <param name="Options">The settings used.</param>
public sealed record ComparisonReport(
    int Width,
    int Height,
    PixelRect Region,
    long ComparedPixels,
    long NonFinitePixels,
    ErrorMetrics All,
    ErrorMetrics R,
    ErrorMetrics G,
    ErrorMetrics B,
    ErrorMetrics Y,
    double? Ssim,
    ComparisonOptions Options);

/// <summary>The two images cannot be compared (sizes differ, region outside, nothing finite).</summary>
public sealed class ImageComparisonException : Exception
{
    /// <summary>Creates the exception.</summary>
    public ImageComparisonException(string message) : base(message) { }

    /// <summary>Creates an empty exception.</summary>
    public ImageComparisonException() { }

    /// <summary>Creates the exception with a cause.</summary>
    public ImageComparisonException(string message, Exception inner) : base(message, inner) { }
}
