using System.Runtime.Intrinsics;
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
        uint p = PairSeed(pixel, pair);
        int vectored = Vector256.IsHardwareAccelerated ? xs.Length & ~7 : 0;
        for (int at = 0; at < vectored; at += 8)
        {
            Points8(pixel, pair, p, firstIndex + (uint)at, xs.Slice(at, 8), ys.Slice(at, 8));
        }

        if (vectored == xs.Length)
        {
            return;
        }

        firstIndex += (uint)vectored;
        xs = xs[vectored..];
        ys = ys[vectored..];
        if (m > MaxTabled || n > MaxTabled)
        {
            base.SamplePairBatch(pixel, firstIndex, pair, xs, ys);
            return;
        }

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

    // Eight consecutive points of a pair: the index shuffle and the column and row shuffles each run as one
    // eight-lane permutation (KenslerPermutation.Permute8, the same integers as the scalar form).
    private void Points8(ulong pixel, int pair, uint p, uint first, Span<double> xs, Span<double> ys)
    {
        uint m = (uint)_grid.Columns;
        Vector256<uint> lane = Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
        Vector256<uint> s = KenslerPermutation.Permute8(Vector256.Create(first) + lane, (uint)Count, p * 0x51633e2du);
        Span<uint> columns = stackalloc uint[8];
        Span<uint> rows = stackalloc uint[8];
        for (int k = 0; k < 8; k++)
        {
            uint sk = s.GetElement(k);
            columns[k] = sk % m;
            rows[k] = sk / m;
        }

        Vector256<uint> sx = KenslerPermutation.Permute8(Vector256.Create((ReadOnlySpan<uint>)columns), m, p * 0x68bc21ebu);
        Vector256<uint> sy = KenslerPermutation.Permute8(Vector256.Create((ReadOnlySpan<uint>)rows), (uint)_grid.Rows, p * 0x02e5be93u);
        for (int k = 0; k < 8; k++)
        {
            (xs[k], ys[k]) = Point(pixel, pair, s.GetElement(k), sx.GetElement(k), sy.GetElement(k));
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
