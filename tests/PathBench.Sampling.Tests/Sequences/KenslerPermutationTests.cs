using System.Runtime.Intrinsics;
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
    public void Vector_lanes_of_their_own_seeds_equal_the_scalar_permutation()
    {
        // PermuteEach (sixteen lanes as two Vector256 walked together, a group of eight, scalar tail) against
        // Permute one lane at a time, for 1 to 37 lanes, each with its own input and seed: lengths with long cycle walks
        // (just above a power of two), primes and powers of two; inputs and seeds from a fixed hash. The reference is the
        // scalar listing (Kensler 2013, "Correlated Multi-Jittered Sampling").
        foreach (uint l in new uint[] { 2, 3, 5, 17, 33, 65, 127, 257, 383, 1024, 7919, 65537, 0x80000001u, 0xfffffffbu })
        {
            var seeds = new uint[37];
            var inputs = new uint[37];
            for (int k = 0; k < seeds.Length; k++)
            {
                ulong h = SampleHash.Combine(l, (ulong)k);
                seeds[k] = (uint)h;
                inputs[k] = k % 3 == 0 ? 0 : (uint)((h >> 32) % l);
            }

            for (int n = 1; n <= seeds.Length; n++)
            {
                var images = new uint[n];
                KenslerPermutation.PermuteEach(l, inputs.AsSpan(0, n), seeds.AsSpan(0, n), images);
                for (int k = 0; k < n; k++)
                {
                    Assert.Equal(KenslerPermutation.Permute(inputs[k], l, seeds[k]), images[k]);
                }
            }
        }
    }

    [Fact]
    public void Lanes_out_of_range_are_refused_as_the_scalar_form_refuses_them()
    {
        // From an input at or above l the cycle walk need not end: the lane forms must throw like Permute, not loop.
        var images = new uint[16];
        var seeds = new uint[16];
        var inputs = new uint[16];
        inputs[11] = 17;
        Assert.Throws<ArgumentOutOfRangeException>(() => KenslerPermutation.PermuteEach(17, inputs, seeds, images));
    }

    [Fact]
    public void Sixteen_bit_lanes_equal_the_scalar_permutation()
    {
        // Permute16 (16-bit lanes, lengths up to 2^15) against Permute index by index, 1,000 (first index, run length,
        // seed) triples per length: length 1, powers of two, one above a power of two (the longest walks), primes, and the
        // longest taken, 2^15 − 1 (where the final offset's sum comes nearest 2^16); 2^15 is refused. The reference is the scalar listing (Kensler 2013).
        uint[] lengths = { 1, 2, 3, 4, 5, 7, 16, 17, 40, 64, 65, 257, 1025, 4097, 16384, 16385, 32767 };
        Assert.Throws<ArgumentOutOfRangeException>(() => KenslerPermutation.Permute16(Vector256<ushort>.Zero, 32768, 1));
        Vector256<ushort> lane = Vector256.Create((ushort)0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15);
        foreach (uint l in lengths)
        {
            for (int trial = 0; trial < 1000; trial++)
            {
                ulong h = SampleHash.Combine(l + 77, (ulong)trial);
                uint seed = trial % 10 == 0 ? uint.MaxValue - (uint)trial : (uint)h;
                int count = (int)Math.Min(1 + trial % 16, l);
                uint first = (uint)((h >> 32) % (l - (uint)count + 1));
                Vector256<ushort> index = Vector256.Create((ushort)first) + Vector256.Min(lane, Vector256.Create((ushort)(count - 1)));
                Vector256<ushort> image = KenslerPermutation.Permute16(index, l, seed);
                for (int k = 0; k < 16; k++)
                {
                    Assert.Equal(KenslerPermutation.Permute(index.GetElement(k), l, seed), image.GetElement(k));
                }
            }
        }
    }

    [Fact]
    public void Vector_runs_equal_the_scalar_permutation()
    {
        // PermuteRun (eight lanes with Vector256 cycle-walking under a mask, scalar tail) against Permute index by
        // index, for 2,000 (first index, length, seed) triples per length: length 1, powers of two (no cycle walk),
        // one above a power of two (the longest walks), primes, and lengths above 2^31 where the final offset's
        // 32-bit sum wraps. The reference is the scalar listing (Kensler 2013, "Correlated Multi-Jittered Sampling").
        uint[] lengths = { 1, 2, 3, 4, 5, 8, 9, 16, 17, 31, 64, 65, 100, 257, 1024, 1025, 4097, 65536, 65537, 0x80000000u, 0x80000001u, 0xfffffffbu };
        var images = new uint[21];
        foreach (uint l in lengths)
        {
            for (int trial = 0; trial < 2000; trial++)
            {
                ulong h = SampleHash.Combine(l, (ulong)trial);
                uint seed = (uint)h;
                // Indices stay below l, as the samplers' do: from an index at or above l the walk need not return.
                int count = (int)Math.Min(1 + trial % images.Length, l);
                uint first = (uint)((h >> 32) % (l - (uint)count + 1));
                KenslerPermutation.PermuteRun(first, l, seed, images.AsSpan(0, count));
                for (int k = 0; k < count; k++)
                {
                    Assert.Equal(KenslerPermutation.Permute(first + (uint)k, l, seed), images[k]);
                }
            }
        }
    }

    [Fact]
    public void Paired_vector_permutations_equal_the_scalar_permutation()
    {
        // Permute8Pair (two sets of eight lanes walked together, each with its own length and seed) against Permute
        // lane by lane: 500 trials per pair of lengths, indices and seeds from a fixed hash (seed written here: 0x5eed).
        (uint, uint)[] lengths = { (2, 2), (4, 4), (3, 5), (5, 8), (17, 2), (64, 65), (1025, 7), (0x80000001u, 3), (0xfffffffbu, 0x80000000u) };
        foreach ((uint la, uint lb) in lengths)
        {
            for (int trial = 0; trial < 500; trial++)
            {
                var a = new uint[8];
                var b = new uint[8];
                for (int k = 0; k < 8; k++)
                {
                    ulong h = SampleHash.Combine(0x5eed ^ la ^ ((ulong)lb << 32), (ulong)(trial * 8 + k));
                    a[k] = (uint)(h % la);
                    b[k] = (uint)((h >> 32) % lb);
                }

                uint pa = (uint)SampleHash.Combine(la, (ulong)trial), pb = (uint)SampleHash.Combine(lb, (ulong)trial + 1);
                (Vector256<uint> ia, Vector256<uint> ib) = KenslerPermutation.Permute8Pair(Vector256.Create(a), la, pa, Vector256.Create(b), lb, pb);
                for (int k = 0; k < 8; k++)
                {
                    Assert.Equal(KenslerPermutation.Permute(a[k], la, pa), ia.GetElement(k));
                    Assert.Equal(KenslerPermutation.Permute(b[k], lb, pb), ib.GetElement(k));
                }
            }
        }
    }

    [Fact]
    public void An_index_at_or_past_the_length_is_refused_rather_than_walked_forever()
    {
        // From an index ≥ l the cycle walk can loop forever (Kensler 2013's walk assumes i < l); it is refused instead.
        Assert.Throws<ArgumentOutOfRangeException>(() => KenslerPermutation.Permute(4, 4, 0x1234));
        Assert.Throws<ArgumentOutOfRangeException>(() => KenslerPermutation.PermuteRun(2, 4, 0x1234, new uint[3]));
        var ok = new uint[2];
        KenslerPermutation.PermuteRun(2, 4, 0x1234, ok);
        Assert.Equal([KenslerPermutation.Permute(2, 4, 0x1234), KenslerPermutation.Permute(3, 4, 0x1234)], ok);
    }
}
