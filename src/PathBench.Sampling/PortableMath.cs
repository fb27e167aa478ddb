using System.Runtime.CompilerServices;

namespace PathBench.Sampling;

/// <summary>
/// Sine, cosine, tangent and negative integer powers built from IEEE-754 basic operations only
/// (+, −, ×, ÷, round-to-integer), each correctly rounded by the standard, so the result is the
/// same bits on every CPU, C library and runtime. The platform's <see cref="Math.Sin(double)"/>
/// and friends may differ in the last bit between machines; anything that feeds a sample uses
/// these instead (DESIGN.md decision 1), so shards rendered on different machines merge into the
/// single-machine image bit for bit.
/// </summary>
/// <remarks>
/// Method: Cody–Waite reduction by π/2 with π/2 split into two 33-bit parts and a 53-bit tail
/// (k·P1 and k·P2 are exact for |k| &lt; 2^20, so the reduced argument carries about 119 bits of
/// π/2), then Taylor polynomials on |r| ≤ π/4 — sine to r^17, cosine to r^18, whose first omitted
/// terms are below 8.3e-20 and 3.3e-21 — evaluated by Horner's rule in r². The constants are the
/// correctly rounded values of 1/n! and of the π/2 split, computed in exact rational arithmetic
/// (π by Machin's formula). Measured accuracy (PortableMathTests): within 2 ulp of a correctly
/// rounded sine and cosine for |x| ≤ 2^20·π/2 ≈ 1.6e6; tangent, the rounded quotient, within
/// 4 ulp away from its poles. Larger arguments still give machine-independent results, with
/// less accuracy. Relies on the JIT not fusing a multiply and an add into one rounding, which
/// RyuJIT does not do on its own (only <see cref="Math.FusedMultiplyAdd"/> fuses).
/// </remarks>
public static class PortableMath
{
    // π/2 = P1 + P2 + P3: P1 and P2 hold 33 significant bits each, so k·P1 and k·P2 are exact for |k| < 2^20.
    private const double P1 = 1.5707963267341256;     // 0x1.921fb544p+0
    private const double P2 = 6.077100506303966e-11;  // 0x1.0b4611a6p-34
    private const double P3 = 2.0222662487959506e-21; // 0x1.3198a2e037073p-69
    private const double TwoOverPi = 0.6366197723675814;

    // 1/n!, correctly rounded.
    private const double F3 = 0.16666666666666666;
    private const double F4 = 0.041666666666666664;
    private const double F5 = 0.008333333333333333;
    private const double F6 = 0.001388888888888889;
    private const double F7 = 0.0001984126984126984;
    private const double F8 = 2.48015873015873e-05;
    private const double F9 = 2.7557319223985893e-06;
    private const double F10 = 2.755731922398589e-07;
    private const double F11 = 2.505210838544172e-08;
    private const double F12 = 2.08767569878681e-09;
    private const double F13 = 1.6059043836821613e-10;
    private const double F14 = 1.1470745597729725e-11;
    private const double F15 = 7.647163731819816e-13;
    private const double F16 = 4.779477332387385e-14;
    private const double F17 = 2.8114572543455206e-15;
    private const double F18 = 1.5619206968586225e-16;

    /// <summary>
    /// <see cref="Math.Max(double, double)"/> of 0 and <paramref name="x"/>, bit for bit: <paramref name="x"/>
    /// when it is above 0 or NaN, +0 otherwise (−0 included, as IEEE 754-2019 maximum ranks −0 below +0).
    /// </summary>
    /// <remarks>
    /// Math.Max keeps IEEE 754-2019's NaN and signed-zero rules, which x86 without AVX-512 has no
    /// instruction for: the JIT emits six dependent vector operations (two compares, an integer
    /// compare and three logical ones) before the square root that usually follows, on the sample's
    /// dependency chain. Here it is one compare and a branch that nearly always goes the same way,
    /// so the value goes on at once; the result is the same for every input, NaN included.
    /// </remarks>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double NonNegative(double x) => !(x <= 0) ? x : 0.0;

    /// <summary>Sine and cosine of <paramref name="x"/> radians; NaN for NaN or infinite input.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static (double Sin, double Cos) SinCos(double x)
    {
        if (!double.IsFinite(x))
        {
            return (double.NaN, double.NaN);
        }

        double k = Math.Round(x * TwoOverPi, MidpointRounding.ToEven);
        (double s, double c) = Kernel(((x - (k * P1)) - (k * P2)) - (k * P3));

        // The quadrant: k mod 4, taken on the double so arguments past 2^63 stay defined.
        double q = k - (4.0 * Math.Floor(k * 0.25));
        return q switch
        {
            0.0 => (s, c),
            1.0 => (c, -s),
            2.0 => (-s, -c),
            _ => (-c, s),
        };
    }

    /// <summary>
    /// <see cref="SinCos"/> of an <paramref name="x"/> the caller knows to lie in [−fl(π/4), fl(π/4)]:
    /// the same bits, without the reduction. There x·fl(2/π) rounds to at most 0.5 in magnitude, so
    /// <see cref="SinCos"/> takes k = ±0, whose reduced argument is x itself (x − (±0) is x, except
    /// −0 − (−0) = +0, and the kernel gives (+0, 1) for both zeros) and whose quadrant is 0.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static (double Sin, double Cos) SinCosQuarter(double x)
    {
        System.Diagnostics.Debug.Assert(Math.Abs(x) <= Math.PI / 4, "SinCosQuarter needs |x| <= fl(pi/4)");
        return Kernel(x);
    }

    /// <summary>
    /// <see cref="SinCos"/> for an <paramref name="x"/> expected in [π/4, 3π/4] (the same bits for
    /// any x): where x·fl(2/π) lies strictly between 0.5 and 1.5, k is 1, so k·P1, k·P2 and k·P3 are
    /// the constants themselves and the quadrant is 1; elsewhere (and for NaN) the general path.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static (double Sin, double Cos) SinCosNearHalfPi(double x)
    {
        double t = x * TwoOverPi;
        if (t > 0.5 && t < 1.5)
        {
            (double s, double c) = Kernel(((x - P1) - P2) - P3);
            return (c, -s);
        }

        return SinCos(x);
    }

    // The Taylor polynomials on the reduced argument r, |r| ≤ π/4 (see the type's remarks).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (double Sin, double Cos) Kernel(double r)
    {
        double z = r * r;
        // Horner's rule in z = r², innermost (smallest) term first; the leading r and 1 − z/2 added last.
        double ps = -F15 + (z * F17);
        ps = F13 + (z * ps);
        ps = -F11 + (z * ps);
        ps = F9 + (z * ps);
        ps = -F7 + (z * ps);
        ps = F5 + (z * ps);
        ps = -F3 + (z * ps);
        double s = r + (r * z * ps);
        double pc = F16 - (z * F18);
        pc = -F14 + (z * pc);
        pc = F12 + (z * pc);
        pc = -F10 + (z * pc);
        pc = F8 + (z * pc);
        pc = -F6 + (z * pc);
        pc = F4 + (z * pc);
        double c = (1.0 - (0.5 * z)) + (z * z * pc);
        return (s, c);
    }

    /// <summary>Sine of <paramref name="x"/> radians.</summary>
    public static double Sin(double x) => SinCos(x).Sin;

    /// <summary>Cosine of <paramref name="x"/> radians.</summary>
    public static double Cos(double x) => SinCos(x).Cos;

    /// <summary>Tangent of <paramref name="x"/> radians: the rounded quotient of <see cref="SinCos"/>.</summary>
    public static double Tan(double x)
    {
        (double s, double c) = SinCos(x);
        return s / c;
    }

    /// <summary>
    /// b^−k for an integer base b ≥ 2 and k ≥ 0: b^k by repeated multiplication, exact while it
    /// stays below 2^53, then one correctly rounded division, so the result is the correctly
    /// rounded b^−k whenever b^k &lt; 2^53; past that, products of such factors (deterministic,
    /// within a few ulp).
    /// </summary>
    public static double InversePower(int b, int k)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(b, 2);
        ArgumentOutOfRangeException.ThrowIfNegative(k);
        const double Exact = 9007199254740992.0; // 2^53
        double result = 1.0;
        double power = 1.0;
        for (int i = 0; i < k; i++)
        {
            if (power * b > Exact)
            {
                result /= power;
                power = 1.0;
            }

            power *= b;
        }

        return result / power;
    }
}
