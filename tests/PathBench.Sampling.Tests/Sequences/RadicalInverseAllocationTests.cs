using PathBench.Sampling.Generators;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Sequences;

public sealed class RadicalInverseAllocationTests
{
    [Fact]
    public void Permuted_Halton_allocates_nothing_per_sample()
    {
        // Issue 12's review measured about 111 B per sample from the zero-tail cache's misses.
        // 200 dimensions of 64 samples in each of 16 pixels, after one warm-up pass that creates
        // the per-thread tables: the counter must not move (GC.GetAllocatedBytesForCurrentThread is exact).
        var sampler = SamplerCatalog.Create(new SamplerSpec("halton", Randomization.DigitPermutation, false, 64, 3), 200);
        double sum = Sweep(sampler);
        long[] allocated = Allocations.OfThreePasses(() => sum += Sweep(sampler));

        Assert.True(allocated.Min() == 0, $"{string.Join(", ", allocated)} bytes allocated in three passes of {16 * 64 * 200} coordinates");
        Assert.True(sum > 0);
    }

    [Fact]
    public void Cached_tails_equal_the_direct_sum_for_every_base_slot()
    {
        // Bases 256 primes apart share a cache slot: alternating them must still give the
        // uncached value (to rounding, as the cache's own contract says).
        int[] bases = [3, RadicalInverse.Primes[256 + 1], 5, RadicalInverse.Primes[256 + 2]];
        for (uint i = 0; i < 200; i++)
        {
            foreach (int b in bases)
            {
                ulong key = 0x1234 + (ulong)b;
                // The two sum in different orders with differently rounded weights (a few ulps per
                // digit); a tail taken from the wrong base or key would be off by at least the
                // weight of the deepest digit, b^−K ≥ 1637^−3 ≈ 2e-10 for the largest base here.
                Assert.True(Math.Abs(RadicalInverse.PermutedDirect(i, b, key) - RadicalInverse.Permuted(i, b, key)) < 1e-12, $"base {b}, index {i}");
            }
        }
    }

    [Fact]
    public void Tails_made_ahead_for_the_next_dimensions_give_the_one_at_a_time_bits()
    {
        // A batch's first miss makes the zero tails of the next RadicalInverse dimensions too (their permutations share
        // vector lanes). Reference: Sample, one point at a time, on a thread of its own whose cache never filled ahead;
        // the batches run on another fresh thread, the dimensions in orders that start fills anywhere: ascending,
        // descending, by threes, across the 256th dimension (where cache slots are shared), revisited after another
        // pixel evicted them, and two pixels interleaved.
        var sampler = SamplerCatalog.Create(new SamplerSpec("halton", Randomization.DigitPermutation, false, 16, 11), 300);
        int[] order = [.. Enumerable.Range(0, 40), .. Enumerable.Range(0, 40).Reverse(), .. Enumerable.Range(0, 100).Select(d => d * 3 % 290), .. Enumerable.Range(250, 12), .. Enumerable.Range(0, 20)];
        ulong[] keys = [sampler.PixelKey(0, 0), sampler.PixelKey(5, 3)];
        double[,,] expected = OnFreshThread(() =>
        {
            var values = new double[keys.Length, 300, 16];
            for (int p = 0; p < keys.Length; p++)
            {
                for (int d = 0; d < 300; d++)
                {
                    for (uint i = 0; i < 16; i++)
                    {
                        values[p, d, i] = sampler.Sample(keys[p], i, d);
                    }
                }
            }

            return values;
        });
        string? mismatch = OnFreshThread(() =>
        {
            var xs = new double[16];
            // Each pixel's dimensions in the orders above, then the two pixels interleaved dimension by dimension.
            (int Pixel, int Dimension)[] visits = [.. order.Select(d => (0, d)), .. order.Select(d => (1, d)), .. Enumerable.Range(0, 60).Select(k => (k & 1, k >> 1))];
            foreach ((int p, int d) in visits)
            {
                uint first = (uint)(d % 5);
                sampler.SampleBatch(keys[p], first, d, xs.AsSpan(0, 16 - (int)first));
                for (int i = 0; i < 16 - (int)first; i++)
                {
                    if (BitConverter.DoubleToInt64Bits(xs[i]) != BitConverter.DoubleToInt64Bits(expected[p, d, first + i]))
                    {
                        return $"pixel {p} dimension {d} point {first + i}: {xs[i]:R} vs {expected[p, d, first + i]:R}";
                    }
                }
            }

            return null;
        });
        Assert.Null(mismatch);
    }

    private static T OnFreshThread<T>(Func<T> work)
    {
        T result = default!;
        Exception? failure = null;
        var thread = new Thread(() =>
        {
            try
            {
                result = work();
            }
            catch (Exception e)
            {
                failure = e;
            }
        });
        thread.Start();
        thread.Join();
        return failure is null ? result : throw new InvalidOperationException("the worker thread failed", failure);
    }

    private static double Sweep(PointSampler sampler)
    {
        double sum = 0;
        for (int p = 0; p < 16; p++)
        {
            ulong key = sampler.PixelKey(p, 1);
            for (uint i = 0; i < 64; i++)
            {
                for (int d = 0; d < 200; d++)
                {
                    sum += sampler.Sample(key, i, d);
                }
            }
        }

        return sum;
    }
}
