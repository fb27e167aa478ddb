using System.Runtime.Intrinsics;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Independent uniform samples from a counter-based hash: each coordinate is the SplitMix64
/// finaliser (Steele, Lea &amp; Flood 2014) of (pixel key, index, dimension). Unlimited dimensions.
/// </summary>
public sealed class RandomSampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension) =>
        SampleHash.Uniform(pixel ^ Salts.Independent, index, dimension);

    /// <inheritdoc/>
    /// <remarks>Eight on 512-bit lanes (the batch's hashes run eight at a time), else 1.</remarks>
    public override int PointsAtOnce => Vector512.IsHardwareAccelerated ? 8 : 1;

    /// <inheritdoc/>
    /// <remarks>Eight coordinates at a time on 512-bit lanes where the machine has them (<see cref="SampleHash.Uniform8"/>, each
    /// lane the scalar hash's bits), a run's last part-group lane by lane from the vector; a single point by the scalar hash, which
    /// costs less alone.</remarks>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        ulong key = pixel ^ Salts.Independent;
        if (Vector512.IsHardwareAccelerated && xs.Length > 1)
        {
            Vector256<uint> lane = Vector256.Create(0u, 1, 2, 3, 4, 5, 6, 7);
            for (int i = 0; i < xs.Length; i += 8)
            {
                Vector512<double> u = SampleHash.Uniform8(key, Vector256.Create(firstIndex + (uint)i) + lane, dimension);
                Lanes.Store(u, xs.Slice(i, Math.Min(8, xs.Length - i)));
            }

            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = SampleHash.Uniform(key, firstIndex + (uint)i, dimension);
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);
}
