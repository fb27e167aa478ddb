using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Sequences;

/// <summary>Random digit permutations of the radical inverse (Braaten &amp; Weller 1979, made random as in Owen's random digit permutations).</summary>
public sealed class PermutedRadicalInverseTests
{
    /// <summary>
    /// The batch form against the one-point reference, bit for bit: small bases (many digit positions, runs that meet
    /// every digit and wrap a position's slots), bases above the run length, the largest base, a base past the cached
    /// powers; first indices at digit boundaries and near 2^32 (runs that wrap to index 0); counts across the
    /// 64-point run length; the short runs (at most 16 indices: one digit, or several in a base up to 64) in each form of a
    /// large base's images (conflict-detection lanes where the machine has AVX-512 CD, the scan, none), so every form is
    /// held to the reference.
    /// </summary>
    [Fact]
    public void Batch_equals_the_one_point_reference_exactly()
    {
        int[] bases = [2, 3, 5, 7, 11, 13, 17, 31, 61, 67, 73, 127, RadicalInverse.Primes[300], 8161];
        uint[] firsts = [0, 1, 2, 3, 5, 8, 12, 15, 26, 50, 60, 80, 242, 243, 1000, 123456, 0xFFFFFFF0u, uint.MaxValue - 70, uint.MaxValue - 15, uint.MaxValue];
        int[] counts = [1, 2, 3, 4, 7, 8, 9, 13, 15, 16, 17, 63, 64, 65, 130, 300];
        var xs = new double[300];
        foreach (int b in bases)
        {
            for (ulong k = 0; k < 3; k++)
            {
                ulong key = SampleHash.Mix64(k * 977 + (ulong)b);
                foreach (uint first in firsts)
                {
                    foreach (int n in counts)
                    {
                        Span<double> run = xs.AsSpan(0, n);
                        foreach (LargeBaseImages form in Enum.GetValues<LargeBaseImages>())
                        {
                            RadicalInverse.PermutedBatchForm(first, b, key, run, form);
                            for (int i = 0; i < n; i++)
                            {
                                uint index = unchecked(first + (uint)i);
                                double reference = RadicalInverse.Permuted(index, b, key);
                                Assert.True(reference == run[i], $"b={b} key={key:x} first={first} n={n} index={index} form {form}: {run[i]:R} vs {reference:R}");
                            }
                        }
                    }
                }
            }
        }
    }

    /// <summary>
    /// A pixel's first 16 indices in the bases just above the Fisher–Yates table (where draws are often redrawn, so the
    /// conflict-detection form runs several rounds) and in the bases the cache meets from 17 on, over many keys: every
    /// form equals the one-point reference bit for bit, for the whole block and for runs starting inside it.
    /// </summary>
    [Fact]
    public void Short_runs_equal_the_one_point_reference_over_many_keys()
    {
        int[] bases = [3, 11, 13, 17, 53, 61, 67, 71, 73, 109, 331];
        var xs = new double[16];
        foreach (int b in bases)
        {
            for (ulong k = 0; k < 1500; k++)
            {
                ulong key = SampleHash.Mix64(k + ((ulong)b << 20));
                foreach ((uint first, int n) in new (uint, int)[] { (0, 16), (12, 4), (5, 11), (15, 1) })
                {
                    foreach (LargeBaseImages form in Enum.GetValues<LargeBaseImages>())
                    {
                        RadicalInverse.PermutedBatchForm(first, b, key, xs.AsSpan(0, n), form);
                        for (int i = 0; i < n; i++)
                        {
                            double reference = RadicalInverse.Permuted(first + (uint)i, b, key);
                            Assert.True(reference == xs[i], $"b={b} key={key:x} first={first} n={n} i={i} form {form}: {xs[i]:R} vs {reference:R}");
                        }
                    }
                }
            }
        }
    }

    /// <summary>
    /// The digit draws (⌊unit(h)·m⌋ of the position's hashes, <c>DigitMap.Fill</c>) on each lane form equal the scalar
    /// loop's: Fisher–Yates tables (m = b − n, then 1) and plain draws (m = b), bases from 3 to the largest, draw numbers
    /// from 0 and far along, lengths with and without a part-group; keys from a fixed hash (common practice).
    /// </summary>
    [Fact]
    public void Digit_draws_equal_the_scalar_draws_on_every_lane_form()
    {
        int[] bases = [3, 17, 61, 64, 67, 331, 8161];
        var expected = new uint[21];
        var actual = new uint[21];
        foreach (int b in bases)
        {
            for (ulong k = 0; k < 200; k++)
            {
                ulong key = SampleHash.Mix64(k + ((ulong)b << 24));
                ulong first = k % 3 == 0 ? 0 : k % 3 == 1 ? 1 : (ulong)b - 5;
                int n = 8 + (int)(k % 14);
                foreach (bool table in new[] { true, false })
                {
                    RadicalInverse.DigitMap.FillForm(key, (uint)b, table, first, expected.AsSpan(0, n), LaneWidth.Scalar);
                    foreach (LaneWidth width in new[] { LaneWidth.Wide, LaneWidth.Narrow })
                    {
                        RadicalInverse.DigitMap.FillForm(key, (uint)b, table, first, actual.AsSpan(0, n), width);
                        Assert.True(expected.AsSpan(0, n).SequenceEqual(actual.AsSpan(0, n)), $"b={b} key={key:x} first={first} n={n} table={table} {width}");
                    }
                }
            }
        }
    }

    /// <summary>
    /// A large base's drawn images as the short runs make them without conflict detection (<c>ScanImagesForm</c>: on the
    /// AVX2 forms the first sixteen draws checked at once and the later ones against the images held in two registers;
    /// the scalar bit set) equal the one-point reference's (<c>DigitMap.Image</c>: redraw while taken), for every last
    /// digit 1 … 15: bases just above the Fisher–Yates table (many redraws), around 256 (251, 257, 263), a base whose
    /// draws repeat often (1031) and the largest; keys from a fixed hash (common practice).
    /// </summary>
    [Fact]
    public void Large_base_images_equal_the_reference_on_every_lane_form()
    {
        int[] bases = [67, 71, 131, 251, 257, 263, 1031, 8161];
        Span<uint> storage = stackalloc uint[RadicalInverse.DigitMap.StorageLength];
        var images = new uint[RadicalInverse.FullTableBase];
        foreach (int b in bases)
        {
            for (ulong k = 0; k < 400; k++)
            {
                ulong positionKey = SampleHash.Mix64(k + ((ulong)b << 28));
                uint zero = (uint)(SampleHash.Mix64(positionKey) % (ulong)b);
                uint last = 1 + (uint)(k % 15);
                var map = new RadicalInverse.DigitMap((uint)b, positionKey, zero, storage);
                foreach (LaneWidth width in new[] { LaneWidth.Scalar, LaneWidth.Narrow, LaneWidth.Wide })
                {
                    Array.Fill(images, uint.MaxValue);
                    RadicalInverse.ScanImagesForm((uint)b, positionKey, zero, last, images, width);
                    for (uint j = 0; j <= last; j++)
                    {
                        Assert.True(map.Image(j) == images[j], $"b={b} key={positionKey:x} last={last} digit {j} {width}: {images[j]} vs {map.Image(j)}");
                    }
                }
            }
        }
    }

    /// <summary>
    /// The first b^m points fall one in each interval [j·b^−m, (j+1)·b^−m): each position's digit map is a bijection and
    /// the zeros above an index's leading digit go through the same maps (Braaten &amp; Weller 1979; Owen 1995, the
    /// stratification that random digit permutations keep). Checked through the batch form.
    /// </summary>
    [Theory]
    [InlineData(3, 4)]
    [InlineData(5, 3)]
    [InlineData(7, 2)]
    [InlineData(31, 1)]
    [InlineData(127, 1)]
    public void First_b_to_the_m_points_stratify(int b, int m)
    {
        int n = (int)Math.Pow(b, m);
        var xs = new double[n];
        for (ulong k = 0; k < 20; k++)
        {
            RadicalInverse.PermutedBatch(0, b, SampleHash.Mix64(k), xs);
            var hit = new bool[n];
            foreach (double x in xs)
            {
                int j = (int)(x * n);
                Assert.False(hit[j], $"b={b}, key {k}: stratum {j} of {n} twice");
                hit[j] = true;
            }
        }
    }

    /// <summary>
    /// Every digit position's map is a bijection of 0..b−1 (Braaten &amp; Weller 1979: a permutation per position), read
    /// off the one-point reference: the indices h·b^(k+1) + d·b^k + r for d = 0 … b−1 (as far as 32 bits reach) differ
    /// only in digit k, so their points must fall in b different intervals of width b^−(k+1). Every position up to the
    /// top one of a 32-bit index, lower digits zero or not, a higher digit or none; bases at and past the Fisher–Yates
    /// table's limit (61, 67), a large base's drawn digits and the rest mapped by Kensler's permutation onto the values
    /// left (67 … 8161), and a base past the cached powers. Deterministic: fixed keys, no statistics.
    /// </summary>
    [Fact]
    public void Every_digit_position_maps_its_digits_one_to_one()
    {
        var primes = RadicalInverse.Primes;
        int[] bases = [3, 5, 31, 61, 67, 71, 127, primes[255], primes[256], primes[1023]];
        foreach (int b in bases)
        {
            for (ulong keyNumber = 0; keyNumber < 4; keyNumber++)
            {
                ulong key = SampleHash.Mix64(keyNumber * 7919 + (ulong)b);
                ulong power = 1; // b^k
                for (int k = 0; k < RadicalInverse.DigitsFor(b); k++, power *= (ulong)b)
                {
                    foreach (ulong low in new ulong[] { 0, SampleHash.Mix64(keyNumber) % power })
                    {
                        foreach (ulong high in new ulong[] { 0, power * (ulong)b })
                        {
                            var seen = new HashSet<ulong>();
                            for (ulong d = 0; d < (ulong)b && high + d * power + low <= uint.MaxValue; d++)
                            {
                                uint index = (uint)(high + d * power + low);
                                double x = RadicalInverse.Permuted(index, b, key);
                                ulong interval = (ulong)Math.Floor(x * power * b);
                                Assert.True(seen.Add(interval), $"b={b} k={k} key={key:x} index={index}: interval {interval} twice");
                            }
                        }
                    }
                }
            }
        }
    }

    /// <summary>
    /// The construction's claim: the map of position 0 is a uniformly random permutation, so the ordered pair of the
    /// images of digits 0 and 1 (read off points 0 and 1 as the stratum of 1/b they fall in) is uniform over the
    /// b·(b − 1) ordered pairs of distinct digits, and the image of 0 of position 1 (point 1's second digit) is uniform
    /// and independent of them. χ² (Pearson 1900) on 40,000 fixed keys in base 5: 20 and 100 cells; the level 1e-4
    /// per test is the false-failure rate of these fixed seeds were they redrawn (common practice: far in the tail).
    /// </summary>
    [Fact]
    public void Digit_maps_are_uniform_random_permutations()
    {
        const int b = 5;
        const int Keys = 40000;
        var pairs = new double[b * b];
        var triples = new double[b * b * b];
        Span<double> xs = stackalloc double[2];
        for (int k = 0; k < Keys; k++)
        {
            RadicalInverse.PermutedBatch(0, b, SampleHash.Mix64((ulong)k + 0x51ED), xs);
            int z0 = (int)(xs[0] * b), p1 = (int)(xs[1] * b), z1 = (int)(xs[1] * b * b) % b;
            Assert.NotEqual(z0, p1);
            pairs[z0 * b + p1]++;
            triples[(z0 * b + p1) * b + z1]++;
        }

        double[] expectedPairs = Enumerable.Range(0, b * b).Select(c => c / b == c % b ? 0.0 : Keys / (double)(b * (b - 1))).ToArray();
        double[] expectedTriples = Enumerable.Range(0, b * b * b).Select(c => (c / b) / b == (c / b) % b ? 0.0 : Keys / (double)(b * (b - 1) * b)).ToArray();
        ChiSquareResult first = ChiSquareWarpTest.Evaluate("pairs", pairs, expectedPairs);
        ChiSquareResult second = ChiSquareWarpTest.Evaluate("triples", triples, expectedTriples);
        Assert.True(first.PValue > 1e-4, $"(π0(0), π0(1)): χ² = {first.Statistic:F1} on {first.DegreesOfFreedom} dof, p = {first.PValue:E2}");
        Assert.True(second.PValue > 1e-4, $"with π1(0): χ² = {second.Statistic:F1} on {second.DegreesOfFreedom} dof, p = {second.PValue:E2}");
    }
}
