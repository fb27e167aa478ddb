using PathBench.Sampling.Generators;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Tests.Sequences;

public sealed class RadicalInverseAllocationTests
{
    [Fact]
    public void Permuted_Halton_allocates_nothing_per_sample()
    {
        // Issue 12's review measured about 111 B per sample from an earlier zero-tail cache's misses.
        // 200 dimensions of 64 samples in each of 16 pixels, after one warm-up pass that creates
        // the per-thread tables: the counter must not move (GC.GetAllocatedBytesForCurrentThread is exact).
        var sampler = SamplerCatalog.Create(new SamplerSpec("halton", Randomization.DigitPermutation, false, 64, 3), 200);
        double sum = Sweep(sampler);
        long[] allocated = Allocations.OfThreePasses(() => sum += Sweep(sampler));

        Assert.True(allocated.Min() == 0, $"{string.Join(", ", allocated)} bytes allocated in three passes of {16 * 64 * 200} coordinates");
        Assert.True(sum > 0);
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
