using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Generators;

/// <summary>The eight-lane Owen-Sobol helpers' bit reversals against the scalar one.</summary>
public sealed class OwenSobolBatchTests
{
    [Avx2Fact]
    public void Both_lane_bit_reversals_are_the_scalar_one()
    {
        // The scalar reversal is itself checked on fixed words (SobolMatricesTests.Bit_reversal_reverses); here every
        // lane form must give its bits for words from a fixed hash, the edges 0, 1 and 2^32 − 1 and single bits.
        var words = new List<uint> { 0, 1, uint.MaxValue, 0x12345678, 0x80000000 };
        for (int b = 0; b < 32; b++)
        {
            words.Add(1u << b);
        }

        for (ulong k = 0; k < 4000; k++)
        {
            words.Add((uint)SampleHash.Combine(0x5245564552534531UL, k));
        }

        while (words.Count % 8 != 0)
        {
            words.Add((uint)words.Count);
        }

        for (int i = 0; i < words.Count; i += 8)
        {
            Vector256<uint> v = Vector256.Create(words.GetRange(i, 8).ToArray());
            Vector256<uint> nibbles = OwenSobolBatch.ReverseNibbles(v);
            Vector256<uint>? galois = Gfni.V256.IsSupported ? OwenSobolBatch.ReverseGalois(v) : null;
            for (int k = 0; k < 8; k++)
            {
                uint expected = BitReversal.Reverse(words[i + k]);
                Assert.Equal(expected, nibbles.GetElement(k));
                if (galois is { } g)
                {
                    Assert.Equal(expected, g.GetElement(k));
                }
            }
        }
    }
}
