using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Correlated multi-jittered sampling (Kensler 2013, "Correlated Multi-Jittered Sampling",
/// Pixar Technical Memo 13-01): jittered in a grid of c × r cells and Latin in both axes at
/// once, with the sub-strata shuffled by one permutation per column and one per row
/// ("correlated"). The grid is <see cref="StratumGrid"/> so that c·r = n exactly, which keeps
/// the estimator unbiased for any n. Padded per 2-D pair like <see cref="JitteredSampler"/>:
/// each pair draws its own pattern and point order. The jitters (<see cref="JitterHash"/>) are keyed by the
/// point's index, where Kensler's listing keys them by its stratum: the index → stratum map is a bijection per
/// pixel and pair, so they are the same family of independent uniform values relabelled (the same distribution
/// of point sets), and they need not wait for the permutation.
/// </summary>
public sealed class MultiJitteredSampler : PairedPointSampler
{
    private readonly StratumGrid _grid;
    private readonly LaneDivisor _columns, _rows, _cells;

    // Both grid sides powers of two and the set at most 2^20 points: a coordinate is one JitteredOver of the set's count
    // (Points8 with WholeCells; SplitCells otherwise). The batches are specialised per case, so each has one path (with both
    // in one method it went past the JIT's budget: stack spills and a zeroed frame, 69 -> 85 ns a call).
    private readonly bool _wholeCells;

    private readonly struct WholeCells;

    private readonly struct SplitCells;

    /// <inheritdoc/>
    /// <remarks>Eight on the lane forms (<see cref="Lanes.PointsAtOnce"/>).</remarks>
    public override int PointsAtOnce => Lanes.PointsAtOnce(Width);

    /// <inheritdoc/>
    /// <remarks><see cref="Lanes.WholeRuns"/>: true on the lane forms.</remarks>
    public override bool WholeRunsCostLittleMore => Lanes.WholeRuns(Width);

    /// <summary>Creates the set for <see cref="PointSampler.Count"/> points.</summary>
    public MultiJitteredSampler(SamplerSpec spec) : base(spec)
    {
        _grid = StratumGrid.For(spec.Count);
        (_columns, _rows, _cells) = (new LaneDivisor(_grid.Columns), new LaneDivisor(_grid.Rows), new LaneDivisor(spec.Count));
        _wholeCells = _columns.PowerOfTwo && _rows.PowerOfTwo && _cells.Packed;
    }

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
        (ulong xStream, ulong yStream) = JitterHash.PixelPairStreams(pixel, pair);
        return Point(xStream, yStream, index, s, sx, sy);
    }

    /// <inheritdoc/>
    /// <remarks>
    /// Eight points at a time where the machine has the vectors (<see cref="Points8"/>); otherwise the sub-stratum
    /// shuffles, one permutation of the columns and one of the rows per pixel and pair, are tabled as they are met
    /// (grids up to 64 × 64), so each is computed once per batch.
    /// </remarks>
    protected override void SamplePairBatch(ulong pixel, uint firstIndex, int pair, Span<double> xs, Span<double> ys)
    {
        const int MaxTabled = 64;
        uint m = (uint)_grid.Columns;
        uint n = (uint)_grid.Rows;
        uint p = PairSeed(pixel, pair);
        if (Width != LaneWidth.Scalar && Lanes.Inside(firstIndex, xs.Length, Count))
        {
            // The column and row shuffles of grids up to 8 × 8, whole, once per batch: permutations of the lanes 0 … m − 1
            // and 0 … n − 1 (padded with their last), looked up per point by lane permutes; larger grids permute per point.
            bool tabled = m <= 8 && n <= 8 && Avx2.IsSupported;
            (ulong X, ulong Y) streams = JitterHash.PixelPairStreams(pixel, pair);
            if (Width == LaneWidth.Wide && _wholeCells)
            {
                WideBatch<WholeCells>(streams, firstIndex, p, tabled, xs, ys);
            }
            else if (Width == LaneWidth.Wide)
            {
                WideBatch<SplitCells>(streams, firstIndex, p, tabled, xs, ys);
            }
            else if (_wholeCells)
            {
                NarrowBatch<WholeCells>(streams, firstIndex, p, tabled, xs, ys);
            }
            else
            {
                NarrowBatch<SplitCells>(streams, firstIndex, p, tabled, xs, ys);
            }

            return;
        }

        if (m > MaxTabled || n > MaxTabled)
        {
            base.SamplePairBatch(pixel, firstIndex, pair, xs, ys);
            return;
        }

        TabledPairs(pixel, firstIndex, pair, p, xs, ys);
    }

    // The scalar form with the shuffles tabled as they are met. A method of its own: its stack tables would otherwise keep
    // SamplePairBatch from tiered compilation (a method with stackalloc is compiled once, fully optimised but without the
    // profile, and there the seed hash and the jitter table's constructor stayed calls).
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void TabledPairs(ulong pixel, uint firstIndex, int pair, uint p, Span<double> xs, Span<double> ys)
    {
        uint m = (uint)_grid.Columns;
        uint n = (uint)_grid.Rows;
        Span<uint> columnShuffle = stackalloc uint[(int)m];
        Span<uint> rowShuffle = stackalloc uint[(int)n];
        columnShuffle.Fill(uint.MaxValue);
        rowShuffle.Fill(uint.MaxValue);
        (ulong xStream, ulong yStream) = JitterHash.PixelPairStreams(pixel, pair);
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

            (xs[i], ys[i]) = Point(xStream, yStream, firstIndex + (uint)i, s, sx, sy);
        }
    }

    // The AVX-512 form: the strata of eight points a walk. The jitter bits of each step come before its walks (the shuffle
    // tables' and the index's): they do not depend on them, and issued first they overlap them.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void WideBatch<TCells>((ulong X, ulong Y) streams, uint firstIndex, uint p, bool tabled, Span<double> xs, Span<double> ys)
        where TCells : struct
    {
        Vector256<uint> columnTable = default, rowTable = default;
        for (int at = 0; at < xs.Length; at += 8)
        {
            int run = Math.Min(8, xs.Length - at);
            uint first = firstIndex + (uint)at;
            (Vector256<uint> jx, Vector256<uint> jy) = (JitterHash.Bits8Run(streams.X, first), JitterHash.Bits8Run(streams.Y, first));
            if (at == 0 && tabled)
            {
                (columnTable, rowTable) = Tables(p);
            }

            Vector256<uint> s = KenslerPermutation.Permute8(Lanes.Run(first, run), (uint)Count, p * 0x51633e2du);
            Points8<WideLanes, Vector512<double>, TCells>(jx, jy, p, s, tabled, columnTable, rowTable, xs.Slice(at, run), ys.Slice(at, run));
        }
    }

    // The AVX2 form: the strata of up to sixteen points from one permutation walk (Lanes.Permute16), the jitter bits first
    // as in WideBatch.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void NarrowBatch<TCells>((ulong X, ulong Y) streams, uint firstIndex, uint p, bool tabled, Span<double> xs, Span<double> ys)
        where TCells : struct
    {
        Vector256<uint> columnTable = default, rowTable = default;
        for (int at = 0; at < xs.Length; at += 16)
        {
            int n = Math.Min(16, xs.Length - at);
            uint first = firstIndex + (uint)at;
            // NarrowLanes' lane order (Lanes.Offsets) for the bits and the indices alike; the shuffles are per lane.
            bool order = NarrowLanes.Interleaved;
            (Vector256<uint> x0, Vector256<uint> y0) = (JitterHash.Bits8Run(streams.X, first, order), JitterHash.Bits8Run(streams.Y, first, order));
            (Vector256<uint> x1, Vector256<uint> y1) = n > 8 ? (JitterHash.Bits8Run(streams.X, first + 8, order), JitterHash.Bits8Run(streams.Y, first + 8, order)) : default;
            if (at == 0 && tabled)
            {
                (columnTable, rowTable) = Tables(p);
            }

            (Vector256<uint> low, Vector256<uint> high) = Lanes.Permute16(first, n, (uint)Count, p * 0x51633e2du, order);
            int run = Math.Min(8, n);
            Points8<NarrowLanes, Doubles8, TCells>(x0, y0, p, low, tabled, columnTable, rowTable, xs.Slice(at, run), ys.Slice(at, run));
            if (n > 8)
            {
                Points8<NarrowLanes, Doubles8, TCells>(x1, y1, p, high, tabled, columnTable, rowTable, xs.Slice(at + 8, n - 8), ys.Slice(at + 8, n - 8));
            }
        }
    }

    // Point for eight indices at once (their images s under the index shuffle, the column and row shuffles from the batch's
    // tables or by Permute8Pair, the jitters from the bits of the indices in the pair's two streams (keyed by the index,
    // so they do not wait for the permutation), TForm.DivRem for the column and row, TForm.Over for the divisions): the
    // same integers and the same IEEE-754
    // results in the same order per lane as the scalar form; only the first xs.Length lanes are stored. Inlined into the
    // batches (the JIT's output keeps only the untabled shuffles a call): a call of its own twice a batch measured about
    // 1 ms of multi-jittered's 16 ms replay.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private void Points8<TForm, TDoubles, TCells>(Vector256<uint> xBits, Vector256<uint> yBits, uint p, Vector256<uint> s, bool tabled, Vector256<uint> columnTable, Vector256<uint> rowTable, Span<double> xs, Span<double> ys)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
        where TCells : struct
    {
        (Vector256<uint> row, Vector256<uint> column) = TForm.DivRem(s, _grid.Columns);
        (Vector256<uint> columnShuffle, Vector256<uint> rowShuffle) = tabled
            ? (Avx2.PermuteVar8x32(columnTable, column), Avx2.PermuteVar8x32(rowTable, row))
            : Shuffles(column, row, p);
        if (typeof(TCells) == typeof(WholeCells))
        {
            // (column + (sy + jx)/n)/m = (column·n + sy + jx)/(m·n) exactly for powers of two m and n with m·n ≤ 2^20: every
            // step of the scalar form is exact there (sy + jx and column + (sy + jx)/n have at most 52 significant bits, the
            // divisions only rescale), so both are the exact value, and JitteredOver of the whole column·n + sy < m·n gives it.
            TForm.Store(TForm.JitteredBelowOne((column << _rows.Log2) | rowShuffle, xBits, _cells), xs);
            TForm.Store(TForm.JitteredBelowOne((row << _columns.Log2) | columnShuffle, yBits, _cells), ys);
            return;
        }

        TForm.Store(TForm.Clamp(TForm.Over(TForm.Add(TForm.ToDouble(column), TForm.JitteredOver(rowShuffle, xBits, _rows)), _columns)), xs);
        TForm.Store(TForm.Clamp(TForm.Over(TForm.Add(TForm.ToDouble(row), TForm.JitteredOver(columnShuffle, yBits, _columns)), _rows)), ys);
    }

    // The column and row shuffles of a grid of at most 8 × 8, whole: the column shuffle of 0 … m − 1 in the first table's
    // lanes and the row shuffle of 0 … n − 1 in the second's (each padded with its last), from one walk of sixteen 16-bit
    // lanes, the columns in its low half and the rows in its high half (KenslerPermutation.Seeds16: the same integers).
    private (Vector256<uint> Columns, Vector256<uint> Rows) Tables(uint p)
    {
        uint m = (uint)_grid.Columns, n = (uint)_grid.Rows;
        Vector256<ushort> lanes = Vector256.Min(
            Vector256.Create((ushort)0, 1, 2, 3, 4, 5, 6, 7, 0, 1, 2, 3, 4, 5, 6, 7),
            Vector256.Create(Vector128.Create((ushort)(m - 1)), Vector128.Create((ushort)(n - 1))));
        Vector256<ushort> image = KenslerPermutation.Permute16(lanes, new KenslerPermutation.Seeds16(m, p * 0x68bc21ebu, n, p * 0x02e5be93u));
        return (Vector256.WidenLower(image), Vector256.WidenUpper(image));
    }

    // The column shuffle of the column lanes and the row shuffle of the row lanes (each below its length), walked
    // together where both lengths exceed 1 (a length of 1 maps everything to 0).
    private (Vector256<uint> Columns, Vector256<uint> Rows) Shuffles(Vector256<uint> column, Vector256<uint> row, uint p)
    {
        uint m = (uint)_grid.Columns, n = (uint)_grid.Rows;
        return m > 1 && n > 1
            ? KenslerPermutation.Permute8Pair(column, m, p * 0x68bc21ebu, row, n, p * 0x02e5be93u)
            : (KenslerPermutation.Permute8(column, m, p * 0x68bc21ebu), KenslerPermutation.Permute8(row, n, p * 0x02e5be93u));
    }

    private static uint PairSeed(ulong pixel, int pair) => SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)pair);

    // The point with this index in stratum s (its column and row) at sub-strata sx, sy, jittered by the index in the two streams.
    private (double X, double Y) Point(ulong xStream, ulong yStream, uint index, uint s, uint sx, uint sy)
    {
        uint m = (uint)_grid.Columns;
        uint n = (uint)_grid.Rows;
        uint column = s % m;
        uint row = s / m;
        double jx = JitterHash.Uniform(xStream, index);
        double jy = JitterHash.Uniform(yStream, index);
        double x = (column + (sy + jx) / n) / m;
        double y = (row + (sx + jy) / m) / n;
        return (UnitInterval.Clamp(x), UnitInterval.Clamp(y));
    }
}
