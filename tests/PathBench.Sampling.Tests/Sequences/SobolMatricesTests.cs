using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Sequences;

public sealed class SobolMatricesTests
{
    [Fact]
    public void Tabulated_and_reversed_lookups_equal_the_bit_loop()
    {
        // The byte tables are a speed-up only: they must agree with the definition
        // (XOR of the direction numbers of the index's set bits), here recomputed from scratch.
        SobolMatrices m = SobolMatrices.Default;
        uint[] indices = [0, 1, 2, 3, 255, 256, 0x12345678, 0xFFFFFFFF, 0x80000000, 1023];
        foreach (int d in new[] { 0, 1, 2, 7, 100, 1023, 1024, 5000, 21200 })
        {
            foreach (uint i in indices)
            {
                uint expected = 0;
                for (int k = 0; k < 32; k++)
                {
                    if (((i >> k) & 1) != 0)
                    {
                        expected ^= m.Sample(1u << k, d);
                    }
                }

                Assert.Equal(expected, m.Sample(i, d));
                Assert.Equal(BitReversal.Reverse(expected), m.SampleReversed(BitReversal.Reverse(i), d));
            }
        }
    }

    [Fact]
    public void Bit_reversal_reverses()
    {
        Assert.Equal(0x80000000u, BitReversal.Reverse(1));
        Assert.Equal(0x1E6A2C48u, BitReversal.Reverse(0x12345678));
        Assert.Equal(0u, BitReversal.Reverse(0));
    }
}
