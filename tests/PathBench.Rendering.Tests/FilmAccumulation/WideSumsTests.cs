using System.Numerics;

namespace PathBench.Rendering.Tests.FilmAccumulation;

/// <summary>
/// The film's wide sums against .NET's arbitrary-size <see cref="BigInteger"/> as the reference:
/// q = v · 2^32 is exact for |v| ≥ 2^32 (IEEE 754 binary64: such a double's last bit is worth at
/// least 2^-20), so Σq and Σq² are plain integer sums whatever the order; the words must hold them
/// exactly, in any order and merge split, and never take more than the stated worst case.
/// </summary>
public sealed class WideSumsTests
{
    /// <summary>Values from 2^32 to the largest double, both signs, with a fixed seed (common practice).</summary>
    private static double[] Values(int count, int seed)
    {
        var random = new Random(seed);
        var values = new double[count];
        for (int i = 0; i < count; i++)
        {
            double magnitude = Math.ScaleB(1 + random.NextDouble(), 32 + random.Next(0, 992));
            values[i] = random.Next(4) == 0 ? -magnitude : magnitude;
        }

        values[0] = double.MaxValue;
        values[1] = 4294967296.0;
        values[2] = -double.MaxValue;
        return values;
    }

    private static (BigInteger Sum, BigInteger Squares) Reference(IEnumerable<double> values)
    {
        BigInteger sum = 0, squares = 0;
        foreach (double v in values)
        {
            // v · 2^32 exactly, from the IEEE 754 binary64 fields: significand (with its hidden bit) · 2^(exponent − 1075 + 32).
            long bits = BitConverter.DoubleToInt64Bits(v);
            BigInteger q = new BigInteger((bits & ((1L << 52) - 1)) | (1L << 52)) << (int)(((bits >> 52) & 0x7FF) - 1075 + 32);
            q = bits < 0 ? -q : q;
            sum += q;
            squares += q * q;
        }

        return (sum, squares);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void Sums_equal_the_arbitrary_size_reference_in_any_order_and_split(int seed)
    {
        double[] values = Values(400, seed);
        (BigInteger sum, BigInteger squares) = Reference(values);

        var forward = new WideSums();
        foreach (double v in values)
        {
            forward.Add(1, v);
        }

        // Reverse order, split in three parts merged in another order.
        var parts = new[] { new WideSums(), new WideSums(), new WideSums() };
        for (int i = values.Length - 1; i >= 0; i--)
        {
            parts[i % 3].Add(1, values[i]);
        }

        var merged = new WideSums();
        merged.Add(parts[2]);
        merged.Add(parts[0]);
        merged.Add(parts[1]);

        foreach (WideSums s in new[] { forward, merged })
        {
            Assert.Equal(sum, s.SumOf(1));
            Assert.Equal(squares, s.SquaresOf(1));
            Assert.Equal(BigInteger.Zero, s.SumOf(0));
            Assert.Equal(BigInteger.Zero, s.SquaresOf(2));
            Assert.True(s.Bytes + 8 <= WideSums.MaxBytesPerPixel, $"{s.Bytes} bytes");
        }
    }

    [Fact]
    public void Sums_that_cancel_to_small_or_negative_values_stay_exact()
    {
        var s = new WideSums();
        s.Add(0, 1e300);
        s.Add(0, -1e300);
        s.Add(0, -4294967296.0);
        Assert.Equal(-(BigInteger.One << 64), s.SumOf(0));
        (_, BigInteger squares) = Reference([1e300, -1e300, -4294967296.0]);
        Assert.Equal(squares, s.SquaresOf(0));
    }

    /// <summary>The worst case the film budgets for: many samples of the largest double in every channel.</summary>
    [Fact]
    public void The_largest_doubles_stay_within_the_stated_bytes_per_pixel()
    {
        var s = new WideSums();
        var other = new WideSums();
        for (int i = 0; i < 1000; i++)
        {
            for (int c = 0; c < 3; c++)
            {
                s.Add(c, double.MaxValue);
                other.Add(c, double.MaxValue);
            }
        }

        s.Add(other);
        (BigInteger sum, BigInteger squares) = Reference(Enumerable.Repeat(double.MaxValue, 2000));
        Assert.Equal(sum, s.SumOf(2));
        Assert.Equal(squares, s.SquaresOf(2));
        Assert.True(s.Bytes + 8 <= WideSums.MaxBytesPerPixel, $"{s.Bytes} bytes");
        Assert.Equal(1312, WideSums.MaxBytesPerPixel);
    }

    /// <summary>The accumulation file keeps BigInteger's shortest signed bytes (tools/accumulation-format.md); the words must write the same.</summary>
    [Theory]
    [InlineData(4)]
    [InlineData(5)]
    public void Minimal_bytes_are_those_of_the_reference_and_read_back(int seed)
    {
        double[] values = Values(50, seed);
        var buffer = new byte[(WideSums.MaxSquareWords * 8) + 8];
        for (int k = 1; k <= values.Length; k++)
        {
            var s = new WideSums();
            foreach (double v in values.Take(k))
            {
                s.Add(0, v);
            }

            (BigInteger sum, BigInteger squares) = Reference(values.Take(k));
            int n = s.WriteMinimal(0, squares: false, buffer);
            Assert.Equal(sum.ToByteArray(isUnsigned: false, isBigEndian: false), buffer[..n]);
            n = s.WriteMinimal(0, squares: true, buffer);
            Assert.Equal(squares.ToByteArray(isUnsigned: false, isBigEndian: false), buffer[..n]);
            n = s.WriteMinimal(1, squares: false, buffer);
            Assert.Equal(BigInteger.Zero.ToByteArray(), buffer[..n]);

            WideSums back = WideSums.FromIntegers([sum, 0, 0], [squares, 0, 0])!;
            Assert.True(back.SameValues(s));
        }
    }
}
