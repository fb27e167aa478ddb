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
    public override double Sample(ulong pixel, uint index, int dimension) =>
        Coordinate(pixel, index, dimension, KenslerPermutation.Permute(index, (uint)Count, PairSeed(pixel, dimension)));

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        uint seed = PairSeed(pixel, dimension);
        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            xs[i] = Coordinate(pixel, index, dimension, KenslerPermutation.Permute(index, (uint)Count, seed));
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if ((dimension & 1) != 0)
        {
            PairBySingles(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        // An even-aligned pair shares its cell: one permutation per point for both coordinates.
        RequireSameLength(xs, ys);
        uint seed = PairSeed(pixel, dimension);
        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            uint cell = KenslerPermutation.Permute(index, (uint)Count, seed);
            xs[i] = Coordinate(pixel, index, dimension, cell);
            ys[i] = Coordinate(pixel, index, dimension + 1, cell);
        }
    }

    private static uint PairSeed(ulong pixel, int dimension) => SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)(dimension >> 1));

    private double Coordinate(ulong pixel, uint index, int dimension, uint cell)
    {
        double jitter = SampleHash.Uniform(pixel ^ Salts.Jitter, index, dimension);
        double x = (dimension & 1) == 0
            ? (cell % (uint)_grid.Columns + jitter) / _grid.Columns
            : (cell / (uint)_grid.Columns + jitter) / _grid.Rows;
        return UnitInterval.Clamp(x);
    }
}
