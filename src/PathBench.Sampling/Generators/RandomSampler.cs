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
    /// <remarks>Eight in the 512-bit lane form (<see cref="SamplerLanes"/>; the batch's hashes run eight at a time), else 1.</remarks>
    public override int PointsAtOnce => Lanes.Wide512 ? 8 : 1;

    /// <inheritdoc/>
    /// <remarks>Eight coordinates at a time in the 512-bit lane form, four in the 256-bit one (<see cref="SampleHash.UniformRun"/>).</remarks>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs) =>
        SampleHash.UniformRun(pixel ^ Salts.Independent, firstIndex, dimension, xs);

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);
}
