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
        uint p = PairSeed(pixel, pair);
        uint s = KenslerPermutation.Permute(index, (uint)Count, p * 0x51633e2du);
        uint column = s % (uint)_grid.Columns;
        uint row = s / (uint)_grid.Columns;
        uint sx = KenslerPermutation.Permute(column, (uint)_grid.Columns, p * 0x68bc21ebu);
        uint sy = KenslerPermutation.Permute(row, (uint)_grid.Rows, p * 0x02e5be93u);
        return Point(pixel, pair, s, sx, sy);
    }

    /// <inheritdoc/>
    /// <remarks>
    /// The sub-stratum shuffles are one permutation of the columns and one of the rows per pixel and pair:
    /// tabled as they are met (grids up to 64 × 64), so each is computed once per batch.
    /// </remarks>
    protected override void SamplePairBatch(ulong pixel, uint firstIndex, int pair, Span<double> xs, Span<double> ys)
    {
        const int MaxTabled = 64;
        uint m = (uint)_grid.Columns;
        uint n = (uint)_grid.Rows;
        if (m > MaxTabled || n > MaxTabled)
        {
            base.SamplePairBatch(pixel, firstIndex, pair, xs, ys);
            return;
        }

        uint p = PairSeed(pixel, pair);
        Span<uint> columnShuffle = stackalloc uint[(int)m];
        Span<uint> rowShuffle = stackalloc uint[(int)n];
        columnShuffle.Fill(uint.MaxValue);
        rowShuffle.Fill(uint.MaxValue);
        for (int i = 0; i < xs.Length; i++)
        {
            uint s = KenslerPermutation.Permute(firstIndex + (uint)i, (uint)Count, p * 0x51633e2du);
            uint column = s % m;
            uint row = s / m;
            ref uint sx = ref columnShuffle[(int)column];
            if (sx == uint.MaxValue)
            {
                sx = KenslerPermutation.Permute(column, m, p * 0x68bc21ebu);
            }

            ref uint sy = ref rowShuffle[(int)row];
            if (sy == uint.MaxValue)
            {
                sy = KenslerPermutation.Permute(row, n, p * 0x02e5be93u);
            }

            (xs[i], ys[i]) = Point(pixel, pair, s, sx, sy);
        }
    }

    private static uint PairSeed(ulong pixel, int pair) => SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)pair);

    private (double X, double Y) Point(ulong pixel, int pair, uint s, uint sx, uint sy)
    {
        uint m = (uint)_grid.Columns;
        uint n = (uint)_grid.Rows;
        uint column = s % m;
        uint row = s / m;
        double jx = SampleHash.Uniform(pixel ^ Salts.Jitter, s, 2 * pair);
        double jy = SampleHash.Uniform(pixel ^ Salts.Jitter, s, 2 * pair + 1);
        double x = (column + (sy + jx) / n) / m;
        double y = (row + (sx + jy) / m) / n;
        return (UnitInterval.Clamp(x), UnitInterval.Clamp(y));
    }
}
