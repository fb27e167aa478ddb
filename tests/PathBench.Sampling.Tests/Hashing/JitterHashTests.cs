using System.Globalization;
using System.Runtime.Intrinsics;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.TestSupport;

namespace PathBench.Sampling.Tests.Hashing;

/// <summary>
/// The jitter hash of the jittered, Latin hypercube and multi-jittered sets (<see cref="JitterHash"/>: the 32-bit
/// "pcg" hash of Jarzynski &amp; Olano 2020, JCGT 9(3), twice, keyed by both halves of a 64-bit stream key, one key a
/// pair of dimensions and the second dimension's the first's ⊕ <see cref="JitterHash.PairOffset"/>) against
/// outside references: Pearson's chi-square goodness-of-fit test (Pearson 1900) of uniformity and of pairwise
/// independence, with critical values from scipy.stats.chi2.ppf (recorded below, checked live against Debian's scipy
/// in <see cref="Recorded_critical_values_are_scipys"/>), and the lane forms bit for bit against the scalar form.
/// </summary>
/// <remarks>
/// Every test uses fixed keys, so each outcome is fixed per commit. The level is α = 10^-6 per statistic: a hash whose
/// values were truly independent uniform draws would fail a given statistic with probability 10^-6 (the stated false
/// failure rate; twelve statistics, so about 1.2·10^-5 for the class), while the defects these tests look for (a
/// stream key half that does not reach the value, correlated neighbours, bits that do not change) give statistics in
/// the tens of thousands.
/// </remarks>
public sealed class JitterHashTests
{
    /// <summary>scipy.stats.chi2.ppf(1 − 10^-6, 4095) (scipy 1.10.1, Debian): 4096 cells, 4095 degrees of freedom.</summary>
    private const double Critical4095 = 4539.664051380456;

    /// <summary>scipy.stats.chi2.ppf(1 − 10^-6, 1023) (scipy 1.10.1, Debian): 1024 cells.</summary>
    private const double Critical1023 = 1252.5812854835813;

    /// <summary>Values per cell in every test: 64 expected, far above the chi-square approximation's usual minimum of 5.</summary>
    private const int PerCell = 64;

    [Fact]
    public void Recorded_critical_values_are_scipys()
    {
        string output = ReferenceTools.RunPython("import scipy.stats as s; print(repr(float(s.chi2.ppf(1 - 1e-6, 4095))), repr(float(s.chi2.ppf(1 - 1e-6, 1023))))");
        double[] live = ReferenceTools.ParseNumbers(output);
        Assert.Equal(Critical4095, live[0], 9);
        Assert.Equal(Critical1023, live[1], 9);
    }

    [Fact]
    public void Values_of_many_short_streams_are_uniform()
    {
        // As the samplers use them: 16 indices each of 16 384 (pixel, dimension) streams, 4096 cells of [0, 1).
        var counts = new long[4096];
        for (int s = 0; s < 16384; s++)
        {
            ulong stream = JitterHash.PixelStream(PixelKey(s % 1024, 0), s / 1024);
            for (uint i = 0; i < 16; i++)
            {
                counts[(int)(JitterHash.Uniform(stream, i) * 4096)]++;
            }
        }

        AssertUniform(counts, Critical4095, "top 12 bits, short streams");
    }

    [Fact]
    public void Low_bits_of_one_long_stream_are_uniform()
    {
        // The jitter uses all 32 bits: the low 12 and the middle 10 of 262 144 consecutive indices of one stream.
        ulong stream = JitterHash.PixelStream(PixelKey(3, 5), 7);
        var low = new long[4096];
        var middle = new long[1024];
        for (uint i = 0; i < 4096 * PerCell; i++)
        {
            uint h = JitterHash.Bits(stream, i);
            low[h & 4095]++;
            if (i < 1024 * PerCell)
            {
                middle[(h >> 11) & 1023]++;
            }
        }

        AssertUniform(low, Critical4095, "low 12 bits");
        AssertUniform(middle, Critical1023, "bits 11-20");
    }

    [Fact]
    public void Consecutive_indices_are_independent()
    {
        // Pairs (u(i), u(i + 1)) of 1024 streams × 256 indices in 64 × 64 cells.
        var counts = new long[4096];
        for (int s = 0; s < 1024; s++)
        {
            ulong stream = JitterHash.PixelStream(PixelKey(s, 9), 2);
            for (uint i = 0; i < 256; i++)
            {
                counts[Cell(JitterHash.Uniform(stream, i), JitterHash.Uniform(stream, i + 1))]++;
            }
        }

        AssertUniform(counts, Critical4095, "consecutive indices");
    }

    [Fact]
    public void Low_bits_of_consecutive_indices_are_independent()
    {
        // The low six bits of u(i) and u(i + 1) over 262 144 consecutive indices of one stream, in 64 × 64 cells: the bits an
        // LCG-like construction leaves periodic (the 32-bit "pcg3d" of the same paper, keyed (i, K_lo, K_hi), fails this
        // with a statistic near 27 000; checked with numpy while choosing the hash).
        ulong stream = JitterHash.PixelStream(PixelKey(6, 2), 5);
        var counts = new long[4096];
        for (uint i = 0; i < 4096 * PerCell; i++)
        {
            counts[(int)(((JitterHash.Bits(stream, i) & 63) * 64) + (JitterHash.Bits(stream, i + 1) & 63))]++;
        }

        AssertUniform(counts, Critical4095, "low six bits of consecutive indices");
    }

    [Fact]
    public void Neighbouring_pixels_are_independent()
    {
        // The same index and dimension in horizontally neighbouring pixels (x, y) and (x + 1, y).
        var counts = new long[4096];
        for (int p = 0; p < 4096 * PerCell / 16; p++)
        {
            ulong a = JitterHash.PixelStream(PixelKey(p % 512, p / 512), 4);
            ulong b = JitterHash.PixelStream(PixelKey((p % 512) + 1, p / 512), 4);
            for (uint i = 0; i < 16; i++)
            {
                counts[Cell(JitterHash.Uniform(a, i), JitterHash.Uniform(b, i))]++;
            }
        }

        AssertUniform(counts, Critical4095, "neighbouring pixels");
    }

    [Fact]
    public void Neighbouring_dimensions_are_independent()
    {
        // The same pixel and index in dimensions d and d + 1: for even d a pair's X and Y streams (Y = X ⊕ PairOffset, one
        // key a pair), for odd d the Y stream of one pair and the X stream of the next (keys from two SplitMix64 rounds).
        foreach (int parity in new[] { 0, 1 })
        {
            var counts = new long[4096];
            for (int p = 0; p < 4096 * PerCell / 16; p++)
            {
                int d = (2 * (p % 8)) + parity;
                ulong a = JitterHash.PixelStream(PixelKey(p % 64, p / 64), d);
                ulong b = JitterHash.PixelStream(PixelKey(p % 64, p / 64), d + 1);
                for (uint i = 0; i < 16; i++)
                {
                    counts[Cell(JitterHash.Uniform(a, i), JitterHash.Uniform(b, i))]++;
                }
            }

            AssertUniform(counts, Critical4095, parity == 0 ? "a pair's two dimensions" : "neighbouring pairs");
        }
    }

    [Fact]
    public void A_pairs_streams_are_its_dimensions_streams()
    {
        for (int pair = 0; pair < 64; pair++)
        {
            ulong pixel = PixelKey(pair, 3);
            (ulong x, ulong y) = JitterHash.PixelPairStreams(pixel, pair);
            Assert.Equal(JitterHash.PixelStream(pixel, 2 * pair), x);
            Assert.Equal(JitterHash.PixelStream(pixel, (2 * pair) + 1), y);
            Assert.Equal(JitterHash.Stream(pixel ^ Salts.Jitter, pair), x);
            Assert.NotEqual(x, y);
        }
    }

    [Fact]
    public void A_pairs_streams_are_independent_at_indices_apart()
    {
        // A pair's X value at index i and its Y value at index (i + δ) mod 16 inside a 16-point set, δ = 1 … 15 fixed per
        // stream (so every value is counted once): a Y stream that were the X stream shifted by a few indices (a key offset
        // changing only the low half by a small amount: the same high half, i + K_lo + δ) would put these on the diagonal.
        // The same-index case is Neighbouring_dimensions_are_independent.
        var counts = new long[4096];
        for (int p = 0; p < 4096 * PerCell / 16; p++)
        {
            (ulong x, ulong y) = JitterHash.PixelPairStreams(PixelKey(p % 64, p / 64), p % 7);
            uint apart = 1 + (uint)(p % 15);
            for (uint i = 0; i < 16; i++)
            {
                counts[Cell(JitterHash.Uniform(x, i), JitterHash.Uniform(y, (i + apart) % 16))]++;
            }
        }

        AssertUniform(counts, Critical4095, "a pair's streams at indices apart");
    }

    [Fact]
    public void Low_bits_of_a_pairs_streams_are_independent()
    {
        // The low six bits of a pair's X and Y values at the same index over 262 144 consecutive indices, in 64 × 64 cells:
        // the bits an xor-related pair of keys would most likely leave related.
        (ulong x, ulong y) = JitterHash.PixelPairStreams(PixelKey(4, 7), 3);
        var counts = new long[4096];
        for (uint i = 0; i < 4096 * PerCell; i++)
        {
            counts[(int)(((JitterHash.Bits(x, i) & 63) * 64) + (JitterHash.Bits(y, i) & 63))]++;
        }

        AssertUniform(counts, Critical4095, "low six bits of a pair's streams");
    }

    [Fact]
    public void Streams_sharing_one_key_half_are_independent()
    {
        // The case a 32-bit key would make likely (two keys equal in one half, probability 2^-32 per pair of streams):
        // stream keys equal in their low half and random in the high half, then the reverse. The second round of the hash
        // must decorrelate them (with equal low halves, one round of P would leave the two values' difference a constant).
        foreach (bool shareLow in new[] { true, false })
        {
            var counts = new long[4096];
            for (int p = 0; p < 4096 * PerCell / 16; p++)
            {
                ulong a = SampleHash.Mix64(0x5EEDUL + (ulong)p);
                ulong other = SampleHash.Mix64(0xC0FFEEUL + (ulong)p);
                ulong b = shareLow ? (a & 0xFFFFFFFFUL) | (other & 0xFFFFFFFF00000000UL) : (a & 0xFFFFFFFF00000000UL) | (other & 0xFFFFFFFFUL);
                for (uint i = 0; i < 16; i++)
                {
                    counts[Cell(JitterHash.Uniform(a, i), JitterHash.Uniform(b, i))]++;
                }
            }

            AssertUniform(counts, Critical4095, shareLow ? "equal low halves" : "equal high halves");
        }
    }

    [Fact]
    public void One_stream_is_a_permutation_of_the_indices()
    {
        // Each round is a bijection on 32-bit words (an LCG step with an odd multiplier, xor-shifts, an odd multiply), so
        // within a stream no two indices share their bits: checked on 2^20 indices.
        ulong stream = JitterHash.PixelStream(PixelKey(1, 1), 0);
        var seen = new HashSet<uint>();
        for (uint i = 0; i < 1u << 20; i++)
        {
            Assert.True(seen.Add(JitterHash.Bits(stream, i)), string.Create(CultureInfo.InvariantCulture, $"index {i} repeats a value"));
        }
    }

    [Fact]
    public void Values_are_the_bits_times_two_to_the_minus_32()
    {
        ulong stream = JitterHash.Stream(0x1234, 3);
        for (uint i = 0; i < 10_000; i++)
        {
            double u = JitterHash.Uniform(stream, i);
            Assert.Equal((double)JitterHash.Bits(stream, i), u * 4294967296.0);
            Assert.InRange(u, 0.0, 1.0 - JitterHash.Scale);
        }
    }

    [Avx2Fact]
    public void Eight_lanes_equal_the_scalar_bits()
    {
        // 2,000 stream keys from a fixed hash (seed 0x7A11), index runs near 0, in the middle and wrapping past 2^32 − 1.
        for (int trial = 0; trial < 2000; trial++)
        {
            ulong stream = SampleHash.Mix64(0x7A11UL + (ulong)trial);
            uint first = (trial % 3) switch { 0 => (uint)trial, 1 => (uint)(stream >> 40), _ => uint.MaxValue - 3 };
            Vector256<uint> index = Vector256.Create(first) + Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
            Vector256<uint> scattered = Vector256.Create((uint)stream, (uint)(stream >> 7), 0u, uint.MaxValue, 1u, (uint)trial, (uint)(stream >> 32), 0x80000000u);
            Vector256<uint> lanes = JitterHash.Bits8(stream, index), run = JitterHash.Bits8Run(stream, first), any = JitterHash.Bits8(stream, scattered);
            for (int k = 0; k < 8; k++)
            {
                uint expected = JitterHash.Bits(stream, unchecked(first + (uint)k));
                Assert.Equal(expected, lanes.GetElement(k));
                Assert.Equal(expected, run.GetElement(k));
                Assert.Equal(JitterHash.Bits(stream, scattered.GetElement(k)), any.GetElement(k));
            }
        }
    }

    private static ulong PixelKey(int x, int y) => SampleHash.PixelKey(x, y, 11);

    private static int Cell(double a, double b) => ((int)(a * 64) * 64) + (int)(b * 64);

    // Pearson's statistic against equal expected counts, compared with the recorded critical value.
    private static void AssertUniform(long[] counts, double critical, string what)
    {
        double expected = (double)counts.Sum() / counts.Length;
        Assert.Equal(PerCell, expected);
        double chi2 = counts.Sum(c => (c - expected) * (c - expected) / expected);
        Assert.True(chi2 < critical, string.Create(CultureInfo.InvariantCulture, $"{what}: chi-square {chi2:F1} with {counts.Length - 1} degrees of freedom, critical value {critical:F1} at 10^-6"));
    }
}
