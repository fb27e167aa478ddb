using PathBench.Sampling.Generators;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Sequences;

/// <summary>The batch form of the plain radical inverse against the one-point form.</summary>
public sealed class PlainRadicalInverseTests
{
    [Fact]
    public void Plain_radical_inverse_has_the_published_first_values()
    {
        // Halton (1960): φ_b(i) mirrors i's base-b digits about the radix point; in base 3, 1 → 1/3, 2 → 2/3, 3 = 10₃ → 1/9,
        // 4 = 11₃ → 4/9, 5 = 12₃ → 7/9 (from memory of the definition).
        var xs = new double[6];
        RadicalInverse.PlainBatch(0, 3, xs);
        Assert.Equal([0, 1 / 3.0, 2 / 3.0, 1 / 9.0, 4 / 9.0, 7 / 9.0], xs);
    }

    [Fact]
    public void Batch_equals_the_one_point_form_bit_for_bit()
    {
        // The lanes hold the scalar loop's integers in doubles and divide once: every value the same double, for short
        // and long runs, first indices with many digits and runs that wrap past 2^32 − 1, with and without a rotation;
        // the buffer past the run untouched; on every lane form (the 512-bit one runs in software where the machine lacks it).
        var xs = new double[24];
        foreach (int b in new[] { 2, 3, 5, 7, 13, 31, 127, 1021, 8161 })
        {
            foreach (uint first in new[] { 0u, 5u, 16u, 1_000_003u, 0x7FFFFFFDu, 0xFFFFFFF0u, 0xFFFFFFFFu })
            {
                for (int n = 1; n <= 20; n++)
                {
                    foreach ((bool rotate, LaneWidth width) in new[] { false, true }.SelectMany(r => Enum.GetValues<LaneWidth>().Select(w => (r, w))))
                    {
                        xs.AsSpan().Fill(-1);
                        RadicalInverse.PlainBatchForm(first, b, xs.AsSpan(0, n), rotate, 0.6180339887, width);
                        for (int i = 0; i < n; i++)
                        {
                            double x = RadicalInverse.Plain(unchecked(first + (uint)i), b);
                            double expected = rotate ? PointRandomizations.Rotate(x, 0.6180339887) : x;
                            Assert.True(expected == xs[i], $"base {b}, index {unchecked(first + (uint)i)}, rotate {rotate}, {width}: {xs[i]:R} against {expected:R}");
                        }

                        Assert.True(xs.AsSpan(n).IndexOfAnyExcept(-1.0) < 0, $"base {b}: a batch of {n} wrote past its run");
                    }
                }
            }
        }
    }
}
