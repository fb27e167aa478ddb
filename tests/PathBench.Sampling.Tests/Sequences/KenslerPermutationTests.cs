using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Tests.Sequences;

public sealed class KenslerPermutationTests
{
    public static TheoryData<uint> Lengths => new() { 1, 2, 3, 5, 16, 17, 63, 64, 100, 1000, 4097 };

    [Theory]
    [MemberData(nameof(Lengths))]
    public void Permute_is_a_bijection_of_zero_to_l(uint l)
    {
        // A permutation by definition (Kensler 2013, §3): every image distinct and in range.
        foreach (uint p in new uint[] { 0, 1, 0xdeadbeef, 0x12345678 })
        {
            var seen = new bool[l];
            for (uint i = 0; i < l; i++)
            {
                uint j = KenslerPermutation.Permute(i, l, p);
                Assert.True(j < l);
                Assert.False(seen[j], $"l={l}, p={p:x}: {j} hit twice");
                seen[j] = true;
            }
        }
    }

    [Fact]
    public void Different_patterns_give_different_permutations()
    {
        // A shuffle that ignored its seed would make every pixel's strata line up.
        int[] a = Enumerable.Range(0, 64).Select(i => (int)KenslerPermutation.Permute((uint)i, 64, 1)).ToArray();
        int[] b = Enumerable.Range(0, 64).Select(i => (int)KenslerPermutation.Permute((uint)i, 64, 2)).ToArray();
        Assert.NotEqual(a, b);
    }

    [Fact]
    public void Vector_images_of_zero_equal_the_scalar_permutation()
    {
        // PermuteZeros (eight lanes with Vector256, scalar tail) against Permute one seed at a time:
        // lengths with long cycle walks (just above a power of two), primes and powers of two; seeds from a fixed hash.
        foreach (uint l in new uint[] { 2, 3, 5, 17, 33, 65, 127, 257, 383, 1024, 7919, 65537 })
        {
            var seeds = new uint[37];
            for (int k = 0; k < seeds.Length; k++)
            {
                seeds[k] = (uint)SampleHash.Combine(l, (ulong)k);
            }

            var images = new uint[seeds.Length];
            KenslerPermutation.PermuteZeros(l, seeds, images);
            for (int k = 0; k < seeds.Length; k++)
            {
                Assert.Equal(KenslerPermutation.Permute(0, l, seeds[k]), images[k]);
            }
        }
    }
}
