using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Correlated multi-jittered sampling (Kensler 2013, "Correlated Multi-Jittered Sampling",
/// Pixar Technical Memo 13-01): jittered in a grid of c × r cells and Latin in both axes at
/// once, with the sub-strata shuffled by one permutation per column and one per row
/// ("correlated"). The grid is <see cref="StratumGrid"/> so that c·r = n exactly, which keeps
/// the estimator unbiased for any n. Padded per 2-D pair like <see cref="JitteredSampler"/>:
/// each pair draws its own pattern and point order.
/// </summary>
public sealed class MultiJitteredSampler : PairedPointSampler
{
    private readonly StratumGrid _grid;

    /// <summary>Creates the set for <see cref="PointSampler.Count"/> points.</summary>
    public MultiJitteredSampler(SamplerSpec spec) : base(spec) => _grid = StratumGrid.For(spec.Count);

    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    protected override (double X, double Y) SamplePair(ulong pixel, uint index, int pair)
    {
        uint m = (uint)_grid.Columns;
        uint n = (uint)_grid.Rows;
        uint p = SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)pair);
        uint s = KenslerPermutation.Permute(index, (uint)Count, p * 0x51633e2du);
        uint column = s % m;
        uint row = s / m;
        uint sx = KenslerPermutation.Permute(column, m, p * 0x68bc21ebu);
        uint sy = KenslerPermutation.Permute(row, n, p * 0x02e5be93u);
        double jx = SampleHash.Uniform(pixel ^ Salts.Jitter, s, 2 * pair);
        double jy = SampleHash.Uniform(pixel ^ Salts.Jitter, s, 2 * pair + 1);
        double x = (column + (sy + jx) / n) / m;
        double y = (row + (sx + jy) / m) / n;
        return (UnitInterval.Clamp(x), UnitInterval.Clamp(y));
    }
}
