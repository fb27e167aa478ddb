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
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = SampleHash.Uniform(pixel ^ Salts.Independent, firstIndex + (uint)i, dimension);
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);
}
