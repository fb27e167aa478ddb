using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Jittered (stratified) sampling: one uniformly placed point in each cell of a near-square
/// grid of exactly n cells (<see cref="StratumGrid"/>). Higher dimensions are padded per
/// 2-D pair (2k, 2k+1): each pair has its own random assignment of points to cells (a
/// Kensler permutation seeded by pixel and pair), so pairs are mutually independent.
/// </summary>
public sealed class JitteredSampler : PointSampler
{
    private readonly StratumGrid _grid;

    /// <summary>Creates the set for <see cref="PointSampler.Count"/> points.</summary>
    public JitteredSampler(SamplerSpec spec) : base(spec) => _grid = StratumGrid.For(spec.Count);

    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        uint cell = KenslerPermutation.Permute(index, (uint)Count, SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)(dimension >> 1)));
        double jitter = SampleHash.Uniform(pixel ^ Salts.Jitter, index, dimension);
        double x = (dimension & 1) == 0
            ? (cell % (uint)_grid.Columns + jitter) / _grid.Columns
            : (cell / (uint)_grid.Columns + jitter) / _grid.Rows;
        return UnitInterval.Clamp(x);
    }
}
