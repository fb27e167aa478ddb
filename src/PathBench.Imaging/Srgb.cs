namespace PathBench.Imaging;

/// <summary>
/// The sRGB transfer function of IEC 61966-2-1:1999 (section 4.7 / 5.2): encoding is 12.92·L for
/// L ≤ 0.0031308 and 1.055·L^(1/2.4) − 0.055 above; decoding is V/12.92 for V ≤ 0.04045 and
/// ((V + 0.055)/1.055)^2.4 above.
/// </summary>
public static class Srgb
{
    /// <summary>Linear break point of the encoding.</summary>
    public const double LinearBreak = 0.0031308;

    /// <summary>Encoded break point of the decoding.</summary>
    public const double EncodedBreak = 0.04045;

    private static readonly float[] DecodeTable = BuildDecodeTable();

    // CodeThresholds[k] = smallest linear value whose code is k (index 0 unused).
    private static readonly double[] CodeThresholds = BuildThresholds();

    /// <summary>Linear [0, 1] → encoded [0, 1]; inputs outside [0, 1] are clamped first.</summary>
    public static double Encode(double linear)
    {
        double l = Math.Clamp(linear, 0.0, 1.0);
        return l <= LinearBreak ? 12.92 * l : (1.055 * Math.Pow(l, 1.0 / 2.4)) - 0.055;
    }

    /// <summary>Encoded [0, 1] → linear [0, 1]; inputs outside [0, 1] are clamped first.</summary>
    public static double Decode(double encoded)
    {
        double v = Math.Clamp(encoded, 0.0, 1.0);
        return v <= EncodedBreak ? v / 12.92 : Math.Pow((v + 0.055) / 1.055, 2.4);
    }

    /// <summary>Linear value → nearest 8-bit code: floor(255·Encode(L) + 0.5).</summary>
    /// <remarks>
    /// The encoding is increasing, so the code is the number of thresholds T_k = Decode((k − 0.5)/255),
    /// k = 1..255, that L reaches; a binary search over them replaces a power per value.
    /// </remarks>
    public static byte EncodeToByte(double linear)
    {
        if (!(linear > 0))
        {
            return 0; // also NaN, which clamps to nothing sensible; callers show non-finite pixels apart
        }

        int lo = 0, hi = 255; // answer in [lo, hi]
        while (lo < hi)
        {
            int mid = (lo + hi + 1) >> 1;
            if (linear >= CodeThresholds[mid])
            {
                lo = mid;
            }
            else
            {
                hi = mid - 1;
            }
        }

        return (byte)lo;
    }

    /// <summary>Exact reference for <see cref="EncodeToByte"/>: floor(255·Encode(L) + 0.5) evaluated directly.</summary>
    public static byte EncodeToByteDirect(double linear) => double.IsNaN(linear) ? (byte)0 : (byte)Math.Floor((Encode(linear) * 255.0) + 0.5);

    /// <summary>8-bit code → linear value, as float32 (table of the 256 decoded codes).</summary>
    public static float DecodeByte(byte code) => DecodeTable[code];

    private static double[] BuildThresholds()
    {
        var t = new double[256];
        for (int k = 1; k < 256; k++)
        {
            // Start from the analytic inverse, then settle on the exact boundary of the direct formula
            // by bisection, so both give the same code for every input.
            double lo = Decode((k - 1.5) / 255.0), hi = Decode((k + 0.5) / 255.0);
            for (int i = 0; i < 200 && lo < hi; i++)
            {
                double mid = lo + ((hi - lo) / 2);
                if (mid <= lo || mid >= hi)
                {
                    break;
                }

                if (EncodeToByteDirect(mid) >= k)
                {
                    hi = mid;
                }
                else
                {
                    lo = mid;
                }
            }

            t[k] = hi;
        }

        return t;
    }

    private static float[] BuildDecodeTable()
    {
        var table = new float[256];
        for (int i = 0; i < 256; i++)
        {
            table[i] = (float)Decode(i / 255.0);
        }

        return table;
    }
}
