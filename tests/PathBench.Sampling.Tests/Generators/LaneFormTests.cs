using System.Runtime.Intrinsics;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Generators;

/// <summary>The lane forms' steps against the scalar operations they stand for, bit for bit, at the edges the batches' data rarely reach.</summary>
public sealed class LaneFormTests
{
    [Fact]
    public void Clamp_lanes_equal_the_scalar_clamp()
    {
        // Below, at and past 1 (a jittered coordinate rounds to exactly 1 at most), the signed zeros, NaN and infinities
        // (IEEE 754-2008: the scalar form's x < 1 is false for NaN, so it gives the largest double below 1).
        double[] values = [0.0, -0.0, 0.25, UnitInterval.BelowOne, 1.0, 1.0 + Math.BitIncrement(0.0), 1.5, double.NaN, double.PositiveInfinity, double.NegativeInfinity];
        for (int i = 0; i + 8 <= values.Length + 7; i++)
        {
            double[] lanes = Enumerable.Range(0, 8).Select(k => values[(i + k) % values.Length]).ToArray();
            Doubles8 narrow = NarrowLanes.Clamp(new Doubles8(Vector256.Create(lanes.AsSpan(0, 4)), Vector256.Create(lanes.AsSpan(4, 4))));
            Vector512<double> wide = Lanes.Clamp(Vector512.Create(lanes));
            for (int k = 0; k < 8; k++)
            {
                long expected = BitConverter.DoubleToInt64Bits(UnitInterval.Clamp(lanes[k]));
                Assert.Equal(expected, BitConverter.DoubleToInt64Bits(k < 4 ? narrow.Low.GetElement(k) : narrow.High.GetElement(k - 4)));
                Assert.Equal(expected, BitConverter.DoubleToInt64Bits(wide.GetElement(k)));
            }
        }
    }

    [Fact]
    public void Power_of_two_reciprocals_equal_the_division()
    {
        for (int k = 0; k <= 30; k++)
        {
            Assert.Equal(BitConverter.DoubleToInt64Bits(1.0 / (1 << k)), BitConverter.DoubleToInt64Bits(Lanes.Reciprocal(1 << k)));
        }
    }
}
