namespace PathBench.Imaging;

/// <summary>Tone curves applied after exposure when linear values are shown on an 8-bit display.</summary>
public enum ToneCurve
{
    /// <summary>Values above 1 are clipped to 1, negatives to 0.</summary>
    Clamp,

    /// <summary>
    /// The global operator of Reinhard, Stark, Shirley &amp; Ferwerda, "Photographic Tone
    /// Reproduction for Digital Images", ACM TOG 21(3), 2002, eq. 3: L_d = L/(1 + L) applied to the
    /// Rec. 709 luminance, each channel scaled by L_d/L so hue is kept; then clipped to [0, 1].
    /// </summary>
    Reinhard,
}

/// <summary>
/// Linear RGB → 8-bit sRGB: multiply by 2^stops, apply the tone curve, sRGB-encode
/// (IEC 61966-2-1). Non-finite pixels are shown magenta so they cannot pass for image content.
/// </summary>
/// <param name="ExposureStops">Exposure in stops (each stop doubles the values).</param>
/// <param name="Curve">Tone curve.</param>
public sealed record DisplayTransform(double ExposureStops = 0, ToneCurve Curve = ToneCurve.Clamp)
{
    /// <summary>
    /// Largest exposure magnitude accepted, in stops: 2^±32 spans far more than the dynamic range
    /// of any render (common practice), and keeps a float32 image finite and non-zero for every value
    /// between 2^-94 and 2^96, where ±200 stops turns every pixel into infinity or zero.
    /// </summary>
    public const double MaxExposureStops = 32;

    /// <summary>Null when <paramref name="stops"/> is a usable exposure, else why not (one line, for <paramref name="option"/>).</summary>
    public static string? ExposureProblem(string option, double stops) =>
        double.IsFinite(stops) && Math.Abs(stops) <= MaxExposureStops
            ? null
            : FormattableString.Invariant($"{option} must be between -{MaxExposureStops} and {MaxExposureStops} stops (a factor of 2^{MaxExposureStops} either way), got {stops}");

    /// <summary>Writes the 8-bit sRGB code of each channel into <paramref name="rgb"/>.</summary>
    public void Apply(float r, float g, float b, Span<byte> rgb)
    {
        if (!float.IsFinite(r) || !float.IsFinite(g) || !float.IsFinite(b))
        {
            rgb[0] = 255;
            rgb[1] = 0;
            rgb[2] = 255;
            return;
        }

        double scale = Math.Pow(2.0, ExposureStops);
        double lr = r * scale, lg = g * scale, lb = b * scale;
        if (Curve == ToneCurve.Reinhard)
        {
            double l = Luminance.Rec709(lr, lg, lb);
            double k = l > 0 ? 1.0 / (1.0 + l) : 1.0;
            lr *= k;
            lg *= k;
            lb *= k;
        }

        rgb[0] = Srgb.EncodeToByte(lr);
        rgb[1] = Srgb.EncodeToByte(lg);
        rgb[2] = Srgb.EncodeToByte(lb);
    }

    /// <summary>Parses a curve name: "clamp" or "reinhard".</summary>
    /// <exception cref="FormatException">Unknown name.</exception>
    public static ToneCurve ParseCurve(string name) => name switch
    {
        "clamp" => ToneCurve.Clamp,
        "reinhard" => ToneCurve.Reinhard,
        _ => throw new FormatException($"unknown tone curve '{name}' (expected clamp or reinhard)"),
    };
}
