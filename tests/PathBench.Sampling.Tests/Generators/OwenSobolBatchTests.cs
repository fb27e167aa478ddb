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
            // The four-lane form (each word in the low half of a 64-bit lane, the high half anything): the reversed word
            // with the high half cleared, and as a double the scalar code's (v + 0.5) · 2^-32 (an exact value: IEEE 754).
            for (int q = 0; q < 8; q += 4)
            {
                Vector256<ulong> quad = Vector256.Create(
                    words[i + q] | ((ulong)words[i + 7 - q] << 32), words[i + q + 1] | (0xFFFFFFFFUL << 32), words[i + q + 2], words[i + q + 3] | ((ulong)words[i] << 32));
                Vector256<ulong> low = OwenSobolBatch.ReverseLow(quad);
                Vector256<double> centred = OwenSobolBatch.Centred(low);
                for (int k = 0; k < 4; k++)
                {
                    uint expected = BitReversal.Reverse(words[i + q + k]);
                    Assert.Equal(expected, low.GetElement(k));
                    Assert.Equal(BitConverter.DoubleToUInt64Bits((expected + 0.5) * (1.0 / 4294967296.0)), BitConverter.DoubleToUInt64Bits(centred.GetElement(k)));
                }
            }

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
