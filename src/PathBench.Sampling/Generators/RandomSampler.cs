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
}
