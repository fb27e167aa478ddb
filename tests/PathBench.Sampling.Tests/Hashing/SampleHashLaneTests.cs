using System.Runtime.Intrinsics;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Tests.Hashing;

/// <summary>
/// The lane forms of <see cref="SampleHash"/> against its scalar SplitMix64 form (Steele, Lea &amp; Flood 2014), bit
/// for bit: the samplers' eight-lane batches rely on them giving the scalar values.
/// </summary>
public sealed class SampleHashLaneTests
{
    [Avx2Fact]
    public void Eight_uniforms_equal_the_scalar_uniforms()
    {
        // 2,000 (key, first index, dimension) triples from a fixed hash (seed written here: 0x1A4E), indices that wrap
        // past 2^32 − 1 among them, dimensions up to 2^31 − 1. The 256-bit form needs AVX2 (skipped without it).
        for (int trial = 0; trial < 2000; trial++)
        {
            ulong key = SampleHash.Mix64(0x1A4EUL + (ulong)trial);
            uint first = trial % 7 == 0 ? uint.MaxValue - 3 : (uint)(key >> 40);
            int dimension = trial % 11 == 0 ? int.MaxValue : (int)(key & 0xFF);
            Vector256<uint> index = Vector256.Create(first) + Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
            Vector512<double> lanes = SampleHash.Uniform8(key, index, dimension);

            // The AVX2 form, four lanes at a time (64-bit products from 32-bit ones, the exact two-part conversion).
            Vector512<double> narrow = Vector512.Create(SampleHash.Uniform4(key, index.GetLower(), dimension), SampleHash.Uniform4(key, index.GetUpper(), dimension));
            for (int k = 0; k < 8; k++)
            {
                double expected = SampleHash.Uniform(key, unchecked(first + (uint)k), dimension);
                Assert.Equal(expected, lanes.GetElement(k));
                Assert.Equal(expected, narrow.GetElement(k));
            }
        }
    }

    [Avx2Fact]
    public void Unit_lanes_equal_the_scalar_conversion()
    {
        // The 53 top bits of a hash to [0, 1): hashes with bit 11 (the lowest kept bit) clear and set, zero, all ones, the top
        // bit alone, and from a fixed hash (common practice); the scalar form's conversion is exact, so equal bits are expected.
        ulong[] edge = [0, 0x800, 0x7FF, 0xFFF, ulong.MaxValue, ulong.MaxValue - 0x800, 1UL << 63, (1UL << 63) | 0x800, 0x1000];
        var values = edge.Concat(Enumerable.Range(0, 400).Select(i => SampleHash.Mix64((ulong)i))).ToArray();
        for (int i = 0; i + 4 <= values.Length; i++)
        {
            Vector256<double> unit = SampleHash.Unit4(Vector256.Create(values.AsSpan(i, 4)));
            for (int k = 0; k < 4; k++)
            {
                Assert.Equal(BitConverter.DoubleToInt64Bits(SampleHash.ToUnit(values[i + k])), BitConverter.DoubleToInt64Bits(unit.GetElement(k)));
            }
        }
    }

    [Avx2Fact]
    public void Scaled_unit_lanes_equal_the_scalar_product()
    {
        // unit(h)·m as Halton's digit draws make it (the scalar form: ToUnit(h) · m, one rounding): multipliers 1, 2, small
        // primes, 2^31 and the largest 32-bit values, hashes at the conversion's edges and from a fixed hash (common practice).
        ulong[] edge = [0, 0x800, 0x7FF, 0xFFF, ulong.MaxValue, ulong.MaxValue - 0x800, 1UL << 63, (1UL << 63) | 0x800];
        var hashes = edge.Concat(Enumerable.Range(0, 200).Select(i => SampleHash.Mix64(0x5EEDUL + (ulong)i))).ToArray();
        double[] multipliers = [1, 2, 3, 67, 8161, 2147483648.0, 4294967291.0, 4294967295.0];
        foreach (double m in multipliers)
        {
            for (int i = 0; i + 4 <= hashes.Length; i++)
            {
                Vector256<double> scaled = SampleHash.Unit4Times(Vector256.Create(hashes.AsSpan(i, 4)), Vector256.Create(m));
                for (int k = 0; k < 4; k++)
                {
                    Assert.Equal(BitConverter.DoubleToInt64Bits(SampleHash.ToUnit(hashes[i + k]) * m), BitConverter.DoubleToInt64Bits(scaled.GetElement(k)));
                }
            }
        }
    }

    [Avx2Fact]
    public void Products_on_256_bit_lanes_equal_the_64_bit_products()
    {
        // x·c modulo 2^64 from 32-bit products: operands with every half zero, all ones, or from a fixed hash (common practice).
        ulong[] edge = [0, 1, 0xFFFFFFFF, 0x100000000, ulong.MaxValue, 0xFFFFFFFF00000000, SampleHash.ValueMultiplier];
        var values = edge.Concat(Enumerable.Range(0, 200).Select(i => SampleHash.Mix64((ulong)i))).ToArray();
        foreach (ulong c in values)
        {
            for (int i = 0; i + 4 <= values.Length; i += 4)
            {
                Vector256<ulong> product = SampleHash.MultiplyLow4(Vector256.Create(values.AsSpan(i, 4)), c);
                for (int k = 0; k < 4; k++)
                {
                    Assert.Equal(unchecked(values[i + k] * c), product.GetElement(k));
                }
            }
        }
    }

    [Fact]
    public void Uniform_runs_equal_the_scalar_uniforms()
    {
        // Every length from 0 to 40 (whole groups of eight and every tail), runs that wrap past 2^32 − 1 among them, keys
        // from a fixed hash; the buffer past the run untouched.
        var xs = new double[48];
        for (int n = 0; n <= 40; n++)
        {
            ulong key = SampleHash.Mix64((ulong)n * 1009);
            uint first = n % 3 == 0 ? uint.MaxValue - 5 : (uint)(key >> 40);
            // Each lane form (the machine's own, and AVX2's four lanes where it has them even if it also has 512-bit ones).
            foreach (LaneWidth width in new[] { Lanes.Best, LaneWidth.Narrow, LaneWidth.Scalar })
            {
                xs.AsSpan().Fill(-1);
                SampleHash.UniformRunForm(key, first, n + 7, xs.AsSpan(0, n), width);
                for (int k = 0; k < n; k++)
                {
                    Assert.Equal(SampleHash.Uniform(key, unchecked(first + (uint)k), n + 7), xs[k]);
                }

                Assert.True(xs.AsSpan(n).IndexOfAnyExcept(-1.0) < 0, $"a run of {n} ({width}) wrote past its end");
            }
        }
    }

    [Fact]
    public void Seed_runs_equal_the_scalar_seeds()
    {
        // Every length from 0 to 40 (whole groups of eight and every tail), keys from a fixed hash.
        for (int n = 0; n <= 40; n++)
        {
            ulong key = SampleHash.Mix64((ulong)n * 977);
            var seeds = new uint[n];
            SampleHash.CombineLow32Run(key, seeds);
            for (int k = 0; k < n; k++)
            {
                Assert.Equal((uint)SampleHash.Combine(key, (ulong)k), seeds[k]);
            }
        }
    }
}
