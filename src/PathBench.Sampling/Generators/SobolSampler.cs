using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// The Sobol (1967) sequence with Joe–Kuo (2008) direction numbers, in natural index order.
/// Randomizations: Cranley–Patterson rotation, random digital shift, or Owen scrambling
/// (hash-based nested uniform scrambling of each coordinate, plus a nested scramble of the
/// index so that any aligned block of 2^m indices is used, after Burley 2020).
/// </summary>
/// <remarks>
/// Randomized coordinates are placed at the centre of their 2^-32 cell: a digitally shifted
/// or scrambled coordinate is then uniform to within 2^-33, with mean exactly 1/2.
/// </remarks>
public sealed class SobolSampler(SamplerSpec spec) : PointSampler(spec)
{
    private const double Scale = 1.0 / 4294967296.0;
    private readonly SobolMatrices _matrices = SobolMatrices.Default;

    /// <inheritdoc/>
    public override int MaxDimensions => _matrices.Dimensions;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        switch (Spec.Randomize)
        {
            case Randomization.Owen:
                uint shuffled = OwenScrambler.Scramble(index, SampleHash.Combine32(pixel, Salts.OwenIndex));
                return Owen(pixel, shuffled, dimension);
            case Randomization.DigitalShift:
                uint shift = SampleHash.Combine32(pixel ^ Salts.DigitalShift, (ulong)dimension);
                return ((_matrices.Sample(index, dimension) ^ shift) + 0.5) * Scale;
            case Randomization.CranleyPatterson:
                return Rotation.Apply(_matrices.Sample(index, dimension) * Scale, pixel, dimension);
            default:
                return _matrices.Sample(index, dimension) * Scale;
        }
    }

    /// <inheritdoc/>
    public override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension)
    {
        if (Spec.Randomize != Randomization.Owen)
        {
            return base.Sample2D(pixel, index, dimension);
        }

        // The index scramble is shared by every dimension of a point: compute it once.
        uint shuffled = OwenScrambler.Scramble(index, SampleHash.Combine32(pixel, Salts.OwenIndex));
        return (Owen(pixel, shuffled, dimension), Owen(pixel, shuffled, dimension + 1));
    }

    private double Owen(ulong pixel, uint shuffledIndex, int dimension)
    {
        uint seed = SampleHash.Combine32(pixel ^ Salts.OwenDimension, (ulong)dimension);
        return (OwenScrambler.Scramble(_matrices.Sample(shuffledIndex, dimension), seed) + 0.5) * Scale;
    }
}

/// <summary>
/// Antithetic pairing over any sampler: point 2k is point k of the inner sampler (planned
/// for ⌈n/2⌉ points) and point 2k+1 mirrors it, 1 − x in every coordinate.
/// </summary>
public sealed class AntitheticSampler(SamplerSpec spec, PointSampler inner) : PointSampler(spec)
{
    // 1 − x for x = 0 would be 1, outside [0, 1); the largest double below 1 stands in.
    private static readonly double BelowOne = Math.BitDecrement(1.0);

    /// <inheritdoc/>
    public override int MaxDimensions => inner.MaxDimensions;

    /// <summary>The sampler whose points are mirrored.</summary>
    public PointSampler Inner => inner;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        double x = inner.Sample(pixel, index >> 1, dimension);
        return (index & 1) == 0 ? x : Math.Min(1.0 - x, BelowOne);
    }
}
