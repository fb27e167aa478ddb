namespace PathBench.Imaging;

/// <summary>Relative luminance of linear Rec. 709 RGB.</summary>
public static class Luminance
{
    /// <summary>Weight of R: ITU-R BT.709-6, item 3.3 (derivation of the luminance signal).</summary>
    public const double WeightR = 0.2126;

    /// <summary>Weight of G: ITU-R BT.709-6, item 3.3.</summary>
    public const double WeightG = 0.7152;

    /// <summary>Weight of B: ITU-R BT.709-6, item 3.3.</summary>
    public const double WeightB = 0.0722;

    /// <summary>Y = 0.2126 R + 0.7152 G + 0.0722 B, in double precision.</summary>
    public static double Rec709(double r, double g, double b) => (WeightR * r) + (WeightG * g) + (WeightB * b);
}
