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

    /// <summary>Creates the set for <see cref="PointSampler.Count"/> points.</summary>
    public JitteredSampler(SamplerSpec spec) : base(spec) => _grid = StratumGrid.For(spec.Count);

    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    /// <remarks>Both coordinates of an even-aligned pair come from one cell, the permutation of the point's index.</remarks>
    public override bool PairsShareWork => true;

    /// <inheritdoc/>
    /// <remarks>Eight on the lane forms (<see cref="Lanes.PointsAtOnce"/>).</remarks>
    public override int PointsAtOnce => Lanes.PointsAtOnce(Width);

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension) =>
        Coordinate(JitterHash.Stream(pixel ^ Salts.Jitter, dimension), index, dimension, KenslerPermutation.Permute(index, (uint)Count, PairSeed(pixel, dimension)));

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
        ulong stream = JitterHash.Stream(pixel ^ Salts.Jitter, dimension);
        ulong next = ys.IsEmpty ? 0 : JitterHash.Stream(pixel ^ Salts.Jitter, dimension + 1);
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
    // half the walks of eight-lane steps; the wide form keeps one eight-lane walk a step.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Batch8<TForm, TDoubles>(uint firstIndex, int dimension, uint seed, ulong stream, ulong next, Span<double> xs, Span<double> ys)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        if (typeof(TForm) == typeof(NarrowLanes))
        {
            for (int at = 0; at < xs.Length; at += 16)
            {
                int n = Math.Min(16, xs.Length - at);
                (Vector256<uint> low, Vector256<uint> high) = Lanes.Permute16(firstIndex + (uint)at, n, (uint)Count, seed);
                int run = Math.Min(8, n);
                Points8<TForm, TDoubles>(firstIndex + (uint)at, dimension, stream, next, low, xs.Slice(at, run), ys.IsEmpty ? ys : ys.Slice(at, run));
                if (n > 8)
                {
                    Points8<TForm, TDoubles>(firstIndex + (uint)at + 8, dimension, stream, next, high, xs.Slice(at + 8, n - 8), ys.IsEmpty ? ys : ys.Slice(at + 8, n - 8));
                }
            }

            return;
        }

        for (int at = 0; at < xs.Length; at += 8)
        {
            int n = Math.Min(8, xs.Length - at);
            Vector256<uint> cell = KenslerPermutation.Permute8(Lanes.Run(firstIndex + (uint)at, n), (uint)Count, seed);
            Points8<TForm, TDoubles>(firstIndex + (uint)at, dimension, stream, next, cell, xs.Slice(at, n), ys.IsEmpty ? ys : ys.Slice(at, n));
        }
    }

    // The points first, first + 1, … in the given cells: dimension's coordinates into xs and, when ys is not empty (an
    // even-aligned pair), the next dimension's from the same cells into ys.
    [MethodImpl(InliningOptions.ShortMethod)]
    private void Points8<TForm, TDoubles>(uint first, int dimension, ulong stream, ulong next, Vector256<uint> cell, Span<double> xs, Span<double> ys)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        (Vector256<uint> row, Vector256<uint> column) = TForm.DivRem(cell, _grid.Columns);
        TForm.Store(Coordinates8<TForm, TDoubles>(stream, first, dimension, row, column), xs);
        if (!ys.IsEmpty)
        {
            TForm.Store(Coordinates8<TForm, TDoubles>(next, first, dimension + 1, row, column), ys);
        }
    }

    // Coordinate on eight lanes, given the cell's row and column (TForm.DivRem: the same integers as / and %); the division by TForm.Over.
    [MethodImpl(InliningOptions.ShortMethod)]
    private TDoubles Coordinates8<TForm, TDoubles>(ulong stream, uint first, int dimension, Vector256<uint> row, Vector256<uint> column)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        TDoubles jitter = TForm.JitterRun(stream, first);
        TDoubles x = (dimension & 1) == 0
            ? TForm.Over(TForm.Add(TForm.ToDouble(column), jitter), _grid.Columns)
            : TForm.Over(TForm.Add(TForm.ToDouble(row), jitter), _grid.Rows);
        return TForm.Clamp(x);
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
