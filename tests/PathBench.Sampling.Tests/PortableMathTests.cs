using System.Globalization;
using System.Numerics;
using System.Security.Cryptography;

namespace PathBench.Sampling.Tests;

/// <summary>
/// <see cref="PortableMath"/>: accuracy against published values and against the platform's
/// library, and its bits recorded, so a machine that computes a different bit fails here.
/// </summary>
public sealed class PortableMathTests
{
    /// <summary>
    /// sin, cos and tan at 1, 2, 0.5, 3, 10 and 100 radians to 30 digits. Source: from memory, the
    /// values tabulated in Abramowitz &amp; Stegun (1964), Handbook of Mathematical Functions,
    /// Table 4.6, for 0.5, 1 and 2; all rechecked against a Taylor series carried to 150 digits in
    /// Python's decimal module (enough that the terms of x = 100, up to 1e42, cancel without loss) (exact rational steps, independent of any C library).
    /// </summary>
    public static TheoryData<double, string, string, string> Published => new()
    {
        { 1, "0.841470984807896506652502321630", "0.540302305868139717400936607443", "1.557407724654902230506974807458" },
        { 2, "0.909297426825681695396019865912", "-0.416146836547142386997568229501", "-2.185039863261518991643306102314" },
        { 0.5, "0.479425538604203000273287935216", "0.877582561890372716116281582604", "0.546302489843790513255179465780" },
        { 3, "0.141120008059867222100744802808", "-0.989992496600445457271572794731", "-0.142546543074277805295635410534" },
        { 10, "-0.544021110889369813404747661851", "-0.839071529076452452258863947824", "0.648360827459086671259124933010" },
        { 100, "-0.506365641109758793656557610460", "0.862318872287683934101938513951", "-0.587213915156929076677809635645" },
    };

    [Theory]
    [MemberData(nameof(Published))]
    public void Matches_published_values_within_one_ulp(double x, string sin, string cos, string tan)
    {
        // double.Parse rounds the 30-digit decimal correctly: the nearest double to the true value.
        (double s, double c) = PortableMath.SinCos(x);
        AssertUlps(double.Parse(sin, CultureInfo.InvariantCulture), s, 1, $"sin {x}");
        AssertUlps(double.Parse(cos, CultureInfo.InvariantCulture), c, 1, $"cos {x}");
        AssertUlps(double.Parse(tan, CultureInfo.InvariantCulture), PortableMath.Tan(x), 2, $"tan {x}");
    }

    /// <summary>
    /// Within 2 ulp of the platform's sine and cosine (glibc's, within 1 ulp of the true value by
    /// its manual) over 200 000 seeded arguments in ranges the renderer uses and beyond; tangent
    /// within 4 ulp where |cos x| ≥ 1e-3 (near a pole the quotient magnifies any last-bit difference).
    /// </summary>
    [Theory]
    [InlineData(0.0, Math.PI / 4)]
    [InlineData(-2 * Math.PI, 2 * Math.PI)]
    [InlineData(-1000.0, 1000.0)]
    [InlineData(-1.6e6, 1.6e6)]
    [InlineData(-1e-6, 1e-6)]
    public void Agrees_with_the_platform_library(double lo, double hi)
    {
        var random = new Random(11);
        for (int i = 0; i < 40_000; i++)
        {
            double x = lo + ((hi - lo) * random.NextDouble());
            (double s, double c) = PortableMath.SinCos(x);
            AssertUlps(Math.Sin(x), s, 2, $"sin {x:R}");
            AssertUlps(Math.Cos(x), c, 2, $"cos {x:R}");
            if (Math.Abs(Math.Cos(x)) >= 1e-3)
            {
                AssertUlps(Math.Tan(x), PortableMath.Tan(x), 4, $"tan {x:R}");
            }
        }
    }

    [Fact]
    public void Exact_points_and_special_values()
    {
        Assert.Equal((0.0, 1.0), PortableMath.SinCos(0.0));
        Assert.True(double.IsNaN(PortableMath.Sin(double.NaN)));
        Assert.True(double.IsNaN(PortableMath.Cos(double.PositiveInfinity)));
        // sin(π/6) = 1/2 and cos(π/3) = 1/2: within 1 ulp at the double nearest π/6, π/3 (common practice).
        AssertUlps(0.5, PortableMath.Sin(Math.PI / 6), 1, "sin π/6");
        AssertUlps(0.5, PortableMath.Cos(Math.PI / 3), 1, "cos π/3");
        // Odd and even: exact sign symmetry follows from the polynomials' form.
        Assert.Equal(-PortableMath.Sin(0.7), PortableMath.Sin(-0.7));
        Assert.Equal(PortableMath.Cos(0.7), PortableMath.Cos(-0.7));
    }

    /// <summary>
    /// The shortcuts for arguments near 0 and near π/2 give <see cref="PortableMath.SinCos"/>'s bits
    /// (which the tests above check against published values and the platform's library): 100 000
    /// seeded arguments in each range, the ends of the ranges (±fl(π/4), fl(π/4) and fl(3π/4) where
    /// the general path's quotient rounds to 0.5 and 1.5), both zeros, and outside the range (where
    /// the near-π/2 form must fall back to the general path). The arguments are the concentric map's
    /// (Shirley &amp; Chiu 1997), its only callers, and arbitrary ones.
    /// </summary>
    [Fact]
    public void Range_shortcuts_give_the_general_bits()
    {
        var random = new Random(17);
        var quarter = new List<double> { 0.0, -0.0, Math.PI / 4, -Math.PI / 4, Math.BitDecrement(Math.PI / 4), 1e-300, -5e-324 };
        var half = new List<double> { Math.PI / 4, Math.PI / 2, 3 * Math.PI / 4, Math.BitIncrement(Math.PI / 4), Math.BitDecrement(3 * Math.PI / 4), 0.0, 3.0, -1.0, 1e6 };
        for (int i = 0; i < 100_000; i++)
        {
            double q = (2 * random.NextDouble()) - 1;
            quarter.Add(Math.PI / 4 * q);
            half.Add(Math.PI / 2 - (Math.PI / 4 * q));
            quarter.Add((random.NextDouble() - 0.5) * (Math.PI / 2));
        }

        foreach (double x in quarter)
        {
            Assert.True(SameBits(PortableMath.SinCos(x), PortableMath.SinCosQuarter(x)), $"near 0: {x:R}");
        }

        foreach (double x in half)
        {
            Assert.True(SameBits(PortableMath.SinCos(x), PortableMath.SinCosNearHalfPi(x)), $"near π/2: {x:R}");
        }
    }

    /// <summary>
    /// <see cref="PortableMath.NonNegative"/> is <see cref="Math.Max(double, double)"/>(0, x) bit for bit,
    /// and both are IEEE 754-2019's maximum(+0, x) (§9.6: a NaN operand gives NaN, and −0 ranks below
    /// +0), checked here against that definition written out: on signed zeros, subnormals, infinities,
    /// NaNs with payloads and sign, and 200 000 random bit patterns and near-zero values.
    /// </summary>
    [Fact]
    public void Non_negative_is_the_IEEE_maximum_with_zero()
    {
        var random = new Random(23);
        var values = new List<double>
        {
            0.0, -0.0, double.Epsilon, -double.Epsilon, 1, -1, double.MaxValue, double.MinValue,
            double.PositiveInfinity, double.NegativeInfinity, double.NaN, -double.NaN,
            BitConverter.Int64BitsToDouble(0x7FF0_0000_0000_0001), BitConverter.Int64BitsToDouble(unchecked((long)0xFFF8_0000_0000_1234)),
        };
        for (int i = 0; i < 100_000; i++)
        {
            values.Add(BitConverter.Int64BitsToDouble(random.NextInt64(long.MinValue, long.MaxValue)));
            values.Add((random.NextDouble() - 0.5) * 1e-300);
        }

        foreach (double x in values)
        {
            double expected = double.IsNaN(x) ? x : x > 0 ? x : 0.0;
            long got = BitConverter.DoubleToInt64Bits(PortableMath.NonNegative(x));
            // A NaN comes back as it went in, payload and sign included (IEEE 754-2019 leaves a NaN result's payload open).
            Assert.True(got == BitConverter.DoubleToInt64Bits(expected), $"{x:R}");
            Assert.True(double.IsNaN(x) ? double.IsNaN(Math.Max(0.0, x)) : BitConverter.DoubleToInt64Bits(Math.Max(0.0, x)) == got, $"Math.Max at {x:R}");
        }
    }

    private static bool SameBits((double Sin, double Cos) a, (double Sin, double Cos) b) =>
        BitConverter.DoubleToInt64Bits(a.Sin) == BitConverter.DoubleToInt64Bits(b.Sin)
        && BitConverter.DoubleToInt64Bits(a.Cos) == BitConverter.DoubleToInt64Bits(b.Cos);

    /// <summary>b^−k is the correctly rounded 1 / b^k while b^k is exact (IEEE-754 division rounds correctly), and within 2 ulp of the platform's pow beyond.</summary>
    [Theory]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(5)]
    [InlineData(7)]
    [InlineData(31)]
    [InlineData(173)]
    public void Inverse_powers_are_correctly_rounded_while_exact(int b)
    {
        for (int k = 0; k <= 40; k++)
        {
            BigInteger power = BigInteger.Pow(b, k);
            if (power < (BigInteger.One << 53))
            {
                Assert.Equal(1.0 / (double)power, PortableMath.InversePower(b, k));
            }
            else
            {
                AssertUlps(Math.Pow(b, -k), PortableMath.InversePower(b, k), 2, $"{b}^-{k}");
            }
        }
    }

    /// <summary>
    /// The bits of 10 000 seeded sines, cosines and tangents, hashed with SHA-256 (FIPS 180-4) and
    /// recorded on x86-64 Linux: any machine that runs this suite must reproduce them. Recorded
    /// here, not derived: it is the cross-machine guarantee itself.
    /// </summary>
    [Fact]
    public void Bits_are_the_recorded_ones()
    {
        var random = new Random(5);
        var bytes = new List<byte>();
        for (int i = 0; i < 10_000; i++)
        {
            double x = (random.NextDouble() - 0.5) * 20;
            (double s, double c) = PortableMath.SinCos(x);
            bytes.AddRange(BitConverter.GetBytes(s));
            bytes.AddRange(BitConverter.GetBytes(c));
            bytes.AddRange(BitConverter.GetBytes(PortableMath.Tan(x)));
            bytes.AddRange(BitConverter.GetBytes(PortableMath.InversePower(2 + (i % 50), i % 30)));
        }

        string actual = Convert.ToHexStringLower(SHA256.HashData(bytes.ToArray()));
        Assert.True(actual == RecordedBits, $"the bits differ from the recorded ones: SHA-256 {actual}");
    }

    private const string RecordedBits = "57bebe85b40824dd1490b0fee1f814baf1f99890aafd6b4ee4a0d08e1525bb29";

    private static void AssertUlps(double expected, double actual, long ulps, string what)
    {
        long a = BitConverter.DoubleToInt64Bits(expected), b = BitConverter.DoubleToInt64Bits(actual);
        // Signed magnitudes map to a monotone integer line, so ±0 and sign changes count right.
        long ia = a < 0 ? long.MinValue - a : a, ib = b < 0 ? long.MinValue - b : b;
        long distance = Math.Abs(ia - ib);
        Assert.True(distance <= ulps, $"{what}: expected {expected:R}, got {actual:R}, {distance} ulp apart (allowed {ulps})");
    }
}
