using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;
using PathBench.TestSupport;

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
    /// Runs of several digits in the bases up to 64 (the short form's per-position tables, whose points the vector form
    /// makes with each lane's own digits and carries): from index 0, across digit boundaries (carries into one and several
    /// positions, the length growing inside the run) and deep in the index range (21 positions in base 3), over many keys,
    /// bit for bit against the one-point reference (first indices and counts chosen to reach those cases: common practice).
    /// </summary>
    [Fact]
    public void Small_base_runs_equal_the_one_point_reference_at_every_depth()
    {
        int[] bases = [3, 5, 7, 11, 13, 61];
        uint[] firsts = [0, 1, 7, 118, 1000, 59045, 12345678, 0xFFFFFFEFu];
        int[] counts = [1, 2, 5, 9, 15, 16];
        var xs = new double[16];
        foreach (int b in bases)
        {
            for (ulong k = 0; k < 60; k++)
            {
                ulong key = SampleHash.Mix64(k + ((ulong)b << 24));
                foreach (uint first in firsts)
                {
                    foreach (int n in counts)
                    {
                        RadicalInverse.PermutedBatch(first, b, key, xs.AsSpan(0, n));
                        for (int i = 0; i < n; i++)
                        {
                            double reference = RadicalInverse.Permuted(first + (uint)i, b, key);
                            Assert.True(reference == xs[i], $"b={b} key={key:x} first={first} n={n} i={i}: {xs[i]:R} vs {reference:R}");
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

    /// <summary>
    /// The draws of two digit images from one hash (two 32-bit halves, ⌊v·m / 2^32⌋, Lemire 2019) keep each pixel's
    /// position-0 permutation a uniformly random one, read off a pixel's first 16 points (point i ≤ 15 has the one digit i,
    /// its stratum of 1/b is π0(i)): over 60,000 fixed pixel keys per base, the image of each of the digits 0, 1, 2, 7, 15
    /// is uniform on 0 … b − 1, and the ordered pairs (π0(0), π0(1)) and (π0(1), π0(2)) (digits 1 and 2 draw from the
    /// two halves of one hash on the Fisher–Yates table) are uniform over the b·(b − 1) ordered pairs of distinct values.
    /// The draws' hash has one multiply (<see cref="RadicalInverse.DrawHash"/>; each draw exactly uniform for a uniform key,
    /// but consecutive pairs' hashes are its inputs at a fixed xor apart), so two pairs of digits whose draws come from
    /// different hashes are checked too: (π0(1), π0(3)) (the low halves of pairs 0 and 1 above the table; draws 0 and 2 on
    /// it) and (π0(2), π0(3)) (the high half of pair 0 and the low half of pair 1). Bases on the Fisher–Yates table (17,
    /// 61) and above it (67, 131; pairs only where the expected count of a cell is at least 5, common practice for
    /// Pearson's (1900) χ²). Critical values from scipy.stats.chi2.ppf (Debian's python3-scipy, run live) at level 1e-6 per
    /// statistic; with 32 statistics the false-failure rate of these fixed keys, were they redrawn, is at most 3.2e-5
    /// (Bonferroni). Deterministic: fixed keys. Checked that it fails on a broken hash whose pairs differ by a fixed xor
    /// (the key mixed alone, the pair's product xored in after: every single draw still uniform): (π0(1), π0(3)) gave
    /// χ² = 1,634,148 on 4421 dof for b = 67 (critical 4882.5), 444,045 on 271 dof for b = 17 (critical 396.4).
    /// </summary>
    [Fact]
    public void Digit_images_and_pairs_are_uniform_against_scipy_critical_values()
    {
        const int Keys = 60000;
        const double Level = 1e-6;
        int[] bases = [17, 61, 67, 131];
        int[] digits = [0, 1, 2, 7, 15];
        var statistics = new List<(string What, double Chi2, int Dof)>();
        var xs = new double[16];
        foreach (int b in bases)
        {
            var singles = new long[digits.Length, b];
            bool pairs = Keys / (double)(b * (b - 1)) >= 5;
            var pair01 = new long[b * b];
            var pair12 = new long[b * b];
            var pair13 = new long[b * b];
            var pair23 = new long[b * b];
            for (int k = 0; k < Keys; k++)
            {
                RadicalInverse.PermutedBatch(0, b, SampleHash.PixelKey(k % 300, k / 300, 0x5EED0000UL + (ulong)b), xs);
                var image = new int[16];
                for (int i = 0; i < 16; i++)
                {
                    image[i] = (int)(xs[i] * b);
                }

                for (int d = 0; d < digits.Length; d++)
                {
                    singles[d, image[digits[d]]]++;
                }

                Assert.True(image[0] != image[1] && image[1] != image[2] && image[0] != image[2], $"b={b} key {k}: a repeated image");
                pair01[image[0] * b + image[1]]++;
                pair12[image[1] * b + image[2]]++;
                pair13[image[1] * b + image[3]]++;
                pair23[image[2] * b + image[3]]++;
            }

            double expected = Keys / (double)b;
            for (int d = 0; d < digits.Length; d++)
            {
                double chi2 = 0;
                for (int v = 0; v < b; v++)
                {
                    chi2 += (singles[d, v] - expected) * (singles[d, v] - expected) / expected;
                }

                statistics.Add(($"b={b} π0({digits[d]})", chi2, b - 1));
            }

            if (pairs)
            {
                statistics.Add(($"b={b} (π0(0), π0(1))", PairChi2(pair01, b, Keys), (b * (b - 1)) - 1));
                statistics.Add(($"b={b} (π0(1), π0(2))", PairChi2(pair12, b, Keys), (b * (b - 1)) - 1));
                statistics.Add(($"b={b} (π0(1), π0(3))", PairChi2(pair13, b, Keys), (b * (b - 1)) - 1));
                statistics.Add(($"b={b} (π0(2), π0(3))", PairChi2(pair23, b, Keys), (b * (b - 1)) - 1));
            }
        }

        Assert.Equal(32, statistics.Count);
        AssertBelowScipyCritical(statistics, Level);
    }

    /// <summary>
    /// The whole digit permutation of a small base, not only its pairs: every one of the b! permutations of position 0 is
    /// equally likely over pixel keys. This is what a random digit permutation means (Owen's random digit permutations;
    /// Braaten &amp; Weller 1979 for the digit-permuted radical inverse), and it is the joint law of all b − 1 Fisher–Yates
    /// draws of a position, drawn from several hashes of one position key (<see cref="RadicalInverse.DrawHash"/>, two
    /// draws a hash): base 5 (four draws, two hashes, 120 permutations) and base 7 (six draws, three hashes, 5040
    /// permutations), read off a pixel's first b points (point i &lt; b has the one digit i, its stratum of 1/b is π0(i)).
    /// Pearson's (1900) χ² on 120,000 fixed keys (at least 23.8 expected a cell, over 5, common practice), critical
    /// values from scipy.stats.chi2.ppf (Debian's python3-scipy, run live) at level 1e-6 each; with two statistics the
    /// false-failure rate of these fixed keys, were they redrawn, is at most 2e-6 (Bonferroni). Deterministic: fixed keys.
    /// Checked that it fails with the draws' multiplier set to 1 (each draw still uniform, a position's hashes a fixed xor
    /// apart): χ² = 120,115 on 119 dof (critical 207.2) for b = 5, 1,522,614 on 5039 dof (critical 5530.7) for b = 7.
    /// </summary>
    [Fact]
    public void Whole_digit_permutations_of_small_bases_are_uniform_against_scipy_critical_values()
    {
        const int Keys = 120000;
        const double Level = 1e-6;
        int[] bases = [5, 7];
        var statistics = new List<(string What, double Chi2, int Dof)>();
        var xs = new double[7];
        var seen = new bool[7];
        foreach (int b in bases)
        {
            int factorial = Enumerable.Range(1, b).Aggregate(1, (p, i) => p * i);
            var counts = new long[factorial];
            for (int k = 0; k < Keys; k++)
            {
                RadicalInverse.PermutedBatch(0, b, SampleHash.PixelKey(k % 400, k / 400, 0x9E70000UL + (ulong)b), xs.AsSpan(0, b));

                // The permutation's rank in the factorial number system (Lehmer code): the image of digit i among the
                // images not yet taken.
                Array.Clear(seen);
                int rank = 0;
                for (int i = 0; i < b; i++)
                {
                    int image = (int)(xs[i] * b);
                    Assert.False(seen[image], $"b={b} key {k}: image {image} repeated");
                    int smaller = 0;
                    for (int v = 0; v < image; v++)
                    {
                        smaller += seen[v] ? 0 : 1;
                    }

                    seen[image] = true;
                    rank = (rank * (b - i)) + smaller;
                }

                counts[rank]++;
            }

            double expected = Keys / (double)factorial, chi2 = 0;
            foreach (long c in counts)
            {
                chi2 += (c - expected) * (c - expected) / expected;
            }

            statistics.Add(($"b={b} π0", chi2, factorial - 1));
        }

        AssertBelowScipyCritical(statistics, Level);
    }

    // Every χ² statistic below its critical value chi2.ppf(1 − level, dof), computed live by scipy (Debian's python3-scipy);
    // the message lists every statistic that is not.
    private static void AssertBelowScipyCritical(List<(string What, double Chi2, int Dof)> statistics, double level)
    {
        string script = $"from scipy.stats import chi2\nprint(' '.join(repr(float(chi2.ppf(1 - {level:R}, d))) for d in [{string.Join(", ", statistics.Select(t => t.Dof))}]))";
        double[] critical = ReferenceTools.ParseNumbers(ReferenceTools.RunPython(script));
        Assert.Equal(statistics.Count, critical.Length);
        string[] failures = statistics.Select((t, i) => (t, i)).Where(x => !(x.t.Chi2 < critical[x.i]))
            .Select(x => $"{x.t.What}: χ² = {x.t.Chi2:F1} on {x.t.Dof} dof, critical {critical[x.i]:F1} at {level}").ToArray();
        Assert.True(failures.Length == 0, string.Join("; ", failures));
    }

    // Pearson's χ² of ordered pairs of distinct values against the uniform law on the b·(b − 1) of them (a pair of equal
    // values is a failure: its cell's expected count is 0).
    private static double PairChi2(long[] counts, int b, int keys)
    {
        double expected = keys / (double)(b * (b - 1)), chi2 = 0;
        for (int c = 0; c < counts.Length; c++)
        {
            if (c / b == c % b)
            {
                Assert.Equal(0, counts[c]);
                continue;
            }

            chi2 += (counts[c] - expected) * (counts[c] - expected) / expected;
        }

        return chi2;
    }
}
