using System.Runtime.Intrinsics;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Latin hypercube sampling (McKay, Beckman &amp; Conover 1979): in every dimension the n
/// points fall one in each of n equal strata, the strata assigned by an independent random
/// permutation per dimension and the position within a stratum uniform.
/// </summary>
public sealed class LatinHypercubeSampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        uint stratum = KenslerPermutation.Permute(index, (uint)Count, SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)dimension));
        return UnitInterval.Clamp((stratum + SampleHash.Uniform(pixel ^ Salts.Jitter, index, dimension)) / Count);
    }

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        uint seed = SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)dimension);
        if (Lanes.Accelerated && Lanes.Inside(firstIndex, xs.Length, Count))
        {
            // Eight points at a time: the stratum permutation on eight lanes, the jitter hash on eight 64-bit lanes,
            // the same operations per lane as below.
            for (int at = 0; at < xs.Length; at += 8)
            {
                int n = Math.Min(8, xs.Length - at);
                Vector256<uint> index = Lanes.Run(firstIndex + (uint)at, n);
                Vector512<double> stratum = Lanes.ToDouble(KenslerPermutation.Permute8(index, (uint)Count, seed));
                Lanes.Store(Lanes.Clamp(Lanes.Over(stratum + SampleHash.Uniform8(pixel ^ Salts.Jitter, index, dimension), Count)), xs.Slice(at, n));
            }

            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            uint stratum = KenslerPermutation.Permute(index, (uint)Count, seed);
            xs[i] = UnitInterval.Clamp((stratum + SampleHash.Uniform(pixel ^ Salts.Jitter, index, dimension)) / Count);
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);
}
