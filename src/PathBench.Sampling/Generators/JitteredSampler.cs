using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
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
    private readonly LaneDivisor _columns, _rows;

    /// <summary>Creates the set for <see cref="PointSampler.Count"/> points.</summary>
    public JitteredSampler(SamplerSpec spec) : base(spec)
    {
        _grid = StratumGrid.For(spec.Count);
        (_columns, _rows) = (new LaneDivisor(_grid.Columns), new LaneDivisor(_grid.Rows));
    }

    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    /// <remarks>Both coordinates of an even-aligned pair come from one cell, the permutation of the point's index.</remarks>
    public override bool PairsShareWork => true;

    /// <inheritdoc/>
    /// <remarks>Eight on the lane forms (<see cref="Lanes.PointsAtOnce"/>).</remarks>
    public override int PointsAtOnce => Lanes.PointsAtOnce(Width);

    /// <inheritdoc/>
    /// <remarks><see cref="Lanes.WholeRuns"/>: true on the lane forms.</remarks>
    public override bool WholeRunsCostLittleMore => Lanes.WholeRuns(Width);

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension) =>
        Coordinate(JitterHash.PixelStream(pixel, dimension), index, dimension, KenslerPermutation.Permute(index, (uint)Count, PairSeed(pixel, dimension)));

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs) =>
        Fill(pixel, firstIndex, dimension, xs, default);

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
        Fill(pixel, firstIndex, dimension, xs, ys);
    }

    // Dimension's coordinates into xs and, when ys is not empty (an even-aligned pair), the next dimension's from the
    // same cells into ys: eight points at a time where the run allows, else one permutation per point.
    private void Fill(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        uint seed = PairSeed(pixel, dimension);
        // Fill's pairs are even-aligned: dimension's and the next's streams are its pair's two (one SplitMix64 round).
        (ulong stream, ulong next) = JitterHash.PixelPairStreams(pixel, dimension >> 1);
        if ((dimension & 1) != 0)
        {
            stream = next;
        }
        if (Width != LaneWidth.Scalar && Lanes.Inside(firstIndex, xs.Length, Count))
        {
            Batch8(firstIndex, dimension, seed, stream, next, xs, ys);
            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            uint cell = KenslerPermutation.Permute(index, (uint)Count, seed);
            xs[i] = Coordinate(stream, index, dimension, cell);
            if (!ys.IsEmpty)
            {
                ys[i] = Coordinate(next, index, dimension + 1, cell);
            }
        }
    }

    private static uint PairSeed(ulong pixel, int dimension) => SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)(dimension >> 1));

    // Eight points at a time: the cell permutation on eight lanes, then dimension's coordinates into xs and, when ys is
    // not empty (an even-aligned pair), the next dimension's from the same cells into ys, on eight lanes of the form's
    // doubles (one 512-bit vector on Wide, two 256-bit halves on Narrow).
    private void Batch8(uint firstIndex, int dimension, uint seed, ulong stream, ulong next, Span<double> xs, Span<double> ys)
    {
        if (Width == LaneWidth.Wide)
        {
            Batch8<WideLanes, Vector512<double>>(firstIndex, dimension, seed, stream, next, xs, ys);
        }
        else
        {
            Batch8<NarrowLanes, Doubles8>(firstIndex, dimension, seed, stream, next, xs, ys);
        }
    }

    // Not inlined into the caller: inlined, the form's steps exceeded the JIT's inlining budget and some stayed calls. The
    // narrow form (AVX2) permutes up to sixteen points in one walk on 16-bit lanes (Lanes.Permute16: the same integers),
    // half the walks of eight-lane steps; the wide form keeps one eight-lane walk a step. The jitter bits come first: they
    // do not depend on the walk, and issued before it they overlap it (issued after, they measured as waiting on it).
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Batch8<TForm, TDoubles>(uint firstIndex, int dimension, uint seed, ulong stream, ulong next, Span<double> xs, Span<double> ys)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        int step = typeof(TForm) == typeof(NarrowLanes) ? 16 : 8;
        bool pair = !ys.IsEmpty;
        for (int at = 0; at < xs.Length; at += step)
        {
            int n = Math.Min(step, xs.Length - at);
            uint first = firstIndex + (uint)at;
            bool order = TForm.Interleaved;
            Vector256<uint> x0 = JitterHash.Bits8Run(stream, first, order), y0 = pair ? JitterHash.Bits8Run(next, first, order) : default;
            Vector256<uint> x1 = n > 8 ? JitterHash.Bits8Run(stream, first + 8, order) : default;
            Vector256<uint> y1 = pair && n > 8 ? JitterHash.Bits8Run(next, first + 8, order) : default;
            (Vector256<uint> low, Vector256<uint> high) = step == 16
                ? Lanes.Permute16(first, n, (uint)Count, seed, order)
                : (KenslerPermutation.Permute8(Lanes.Run(first, n, order), (uint)Count, seed), default);
            int run = Math.Min(8, n);
            Points8<TForm, TDoubles>(dimension, low, x0, y0, xs.Slice(at, run), pair ? ys.Slice(at, run) : ys);
            if (n > 8)
            {
                Points8<TForm, TDoubles>(dimension, high, x1, y1, xs.Slice(at + 8, n - 8), pair ? ys.Slice(at + 8, n - 8) : ys);
            }
        }
    }

    // The points in the given cells with the given jitter bits: dimension's coordinates into xs and, when ys is not empty
    // (an even-aligned pair), the next dimension's from the same cells into ys.
    [MethodImpl(InliningOptions.ShortMethod)]
    private void Points8<TForm, TDoubles>(int dimension, Vector256<uint> cell, Vector256<uint> xBits, Vector256<uint> yBits, Span<double> xs, Span<double> ys)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        (Vector256<uint> row, Vector256<uint> column) = TForm.DivRem(cell, _grid.Columns);
        TForm.Store(Coordinates8<TForm, TDoubles>(xBits, dimension, row, column), xs);
        if (!ys.IsEmpty)
        {
            TForm.Store(Coordinates8<TForm, TDoubles>(yBits, dimension + 1, row, column), ys);
        }
    }

    // Coordinate on eight lanes, given the cell's row and column (TForm.DivRem: the same integers as / and %) and the
    // jitter bits; the sum and the division by TForm.JitteredOver.
    [MethodImpl(InliningOptions.ShortMethod)]
    private TDoubles Coordinates8<TForm, TDoubles>(Vector256<uint> bits, int dimension, Vector256<uint> row, Vector256<uint> column)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        bool even = (dimension & 1) == 0;
        return TForm.JitteredBelowOne(even ? column : row, bits, even ? _columns : _rows);
    }

    // The coordinate in dimension of the point with this index in this cell; stream is the dimension's jitter stream.
    private double Coordinate(ulong stream, uint index, int dimension, uint cell)
    {
        double jitter = JitterHash.Uniform(stream, index);
        double x = (dimension & 1) == 0
            ? (cell % (uint)_grid.Columns + jitter) / _grid.Columns
            : (cell / (uint)_grid.Columns + jitter) / _grid.Rows;
        return UnitInterval.Clamp(x);
    }
}
