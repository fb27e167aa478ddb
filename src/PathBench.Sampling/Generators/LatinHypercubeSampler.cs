using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Latin hypercube sampling (McKay, Beckman &amp; Conover 1979): in every dimension the n
/// points fall one in each of n equal strata, the strata assigned by an independent random
/// permutation per dimension and the position within a stratum uniform.
/// </summary>
public sealed class LatinHypercubeSampler(SamplerSpec spec) : PointSampler(spec)
{
    private readonly LaneDivisor _strata = new(spec.Count);

    /// <inheritdoc/>
    public override int MaxDimensions => int.MaxValue;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        uint stratum = KenslerPermutation.Permute(index, (uint)Count, StratumSeed(pixel, dimension));
        return Coordinate(JitterHash.PixelStream(pixel, dimension), index, stratum);
    }

    /// <inheritdoc/>
    /// <remarks>Eight on the lane forms (<see cref="Lanes.PointsAtOnce"/>).</remarks>
    public override int PointsAtOnce => Lanes.PointsAtOnce(Width);

    /// <inheritdoc/>
    /// <remarks><see cref="Lanes.WholeRuns"/>: true on the lane forms.</remarks>
    public override bool WholeRunsCostLittleMore => Lanes.WholeRuns(Width);

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        uint seed = StratumSeed(pixel, dimension);
        ulong stream = JitterHash.PixelStream(pixel, dimension);
        if (Width != LaneWidth.Scalar && Lanes.Inside(firstIndex, xs.Length, Count))
        {
            // Eight points at a time: the stratum permutation on eight lanes, then the jitter hashes and the doubles on the
            // form's eight lanes, the same operations per lane as below.
            if (Width == LaneWidth.Wide)
            {
                Batch8<WideLanes, Vector512<double>>(firstIndex, seed, stream, xs);
            }
            else
            {
                Batch8<NarrowLanes, Doubles8>(firstIndex, seed, stream, xs);
            }

            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            uint index = firstIndex + (uint)i;
            xs[i] = Coordinate(stream, index, KenslerPermutation.Permute(index, (uint)Count, seed));
        }
    }

    // Not inlined into the caller: inlined, the form's steps exceeded the JIT's inlining budget and some stayed calls. The
    // narrow form (AVX2) permutes up to sixteen points in one walk on 16-bit lanes (Lanes.Permute16: the same integers).
    // The jitter bits come first: they do not depend on the walk, and issued before it they overlap it.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void Batch8<TForm, TDoubles>(uint firstIndex, uint seed, ulong stream, Span<double> xs)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct
    {
        int step = typeof(TForm) == typeof(NarrowLanes) ? 16 : 8;
        for (int at = 0; at < xs.Length; at += step)
        {
            int n = Math.Min(step, xs.Length - at);
            uint first = firstIndex + (uint)at;
            bool order = TForm.Interleaved;
            Vector256<uint> bits = JitterHash.Bits8Run(stream, first, order), more = n > 8 ? JitterHash.Bits8Run(stream, first + 8, order) : default;
            (Vector256<uint> low, Vector256<uint> high) = step == 16
                ? Lanes.Permute16(first, n, (uint)Count, seed, order)
                : (KenslerPermutation.Permute8(Lanes.Run(first, n, order), (uint)Count, seed), default);
            TForm.Store(Points8<TForm, TDoubles>(low, bits), xs.Slice(at, Math.Min(8, n)));
            if (n > 8)
            {
                TForm.Store(Points8<TForm, TDoubles>(high, more), xs.Slice(at + 8, n - 8));
            }
        }
    }

    // The seed of a pixel's dimension's stratum permutation.
    private static uint StratumSeed(ulong pixel, int dimension) => SampleHash.Combine32(pixel ^ Salts.StratumShuffle, (ulong)dimension);

    // The coordinates of the points in the given strata with the given jitter bits.
    [MethodImpl(InliningOptions.ShortMethod)]
    private TDoubles Points8<TForm, TDoubles>(Vector256<uint> stratum, Vector256<uint> bits)
        where TForm : struct, ILaneForm<TDoubles>
        where TDoubles : struct =>
        TForm.JitteredBelowOne(stratum, bits, _strata);

    // The coordinate of the point with this index in this stratum; stream is the dimension's jitter stream.
    private double Coordinate(ulong stream, uint index, uint stratum) =>
        UnitInterval.Clamp((stratum + JitterHash.Uniform(stream, index)) / Count);

    /// <inheritdoc/>
    /// <remarks>
    /// The AVX2 form's usual pair (a run of up to sixteen points of a set of at most 2^15 − 1) walks the two dimensions'
    /// permutations together (<see cref="PairRun"/>); otherwise one dimension after the other.
    /// </remarks>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if (Width == LaneWidth.Narrow && xs.Length == ys.Length && xs.Length is > 0 and <= 16
            && Count <= KenslerPermutation.ShortLength && Lanes.Inside(firstIndex, xs.Length, Count))
        {
            PairRun(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        PairBySingles(pixel, firstIndex, dimension, xs, ys);
    }

    // Dimensions dimension and dimension + 1 of the run: their strata from two 16-bit walks walked together
    // (KenslerPermutation.Permute16Pair, the same integers as Lanes.Permute16), so the two chains overlap.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void PairRun(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        uint l = (uint)Count;
        uint seedX = StratumSeed(pixel, dimension);
        uint seedY = StratumSeed(pixel, dimension + 1);
        (ulong streamX, ulong streamY) = (dimension & 1) == 0
            ? JitterHash.PixelPairStreams(pixel, dimension >> 1)
            : (JitterHash.PixelStream(pixel, dimension), JitterHash.PixelStream(pixel, dimension + 1));
        int run = xs.Length;
        // NarrowLanes' lane order (Lanes.Offsets) for the bits and the indices alike.
        Vector256<uint> x0 = JitterHash.Bits8Run(streamX, firstIndex, NarrowLanes.Interleaved), y0 = JitterHash.Bits8Run(streamY, firstIndex, NarrowLanes.Interleaved);
        Vector256<uint> x1 = run > 8 ? JitterHash.Bits8Run(streamX, firstIndex + 8, NarrowLanes.Interleaved) : default;
        Vector256<uint> y1 = run > 8 ? JitterHash.Bits8Run(streamY, firstIndex + 8, NarrowLanes.Interleaved) : default;
        Vector256<ushort> index = Lanes.Run16(firstIndex, run, NarrowLanes.Interleaved);
        (Vector256<ushort> x, Vector256<ushort> y) = l <= 1
            ? (Vector256<ushort>.Zero, Vector256<ushort>.Zero)
            : KenslerPermutation.Permute16Pair(index, KenslerPermutation.Seeds16.Of(l, seedX), index, KenslerPermutation.Seeds16.Of(l, seedY));
        int low = Math.Min(8, run);
        (Vector256<uint> xLow, Vector256<uint> xHigh) = Lanes.Widen16(x, NarrowLanes.Interleaved);
        (Vector256<uint> yLow, Vector256<uint> yHigh) = Lanes.Widen16(y, NarrowLanes.Interleaved);
        NarrowLanes.Store(Points8<NarrowLanes, Doubles8>(xLow, x0), xs[..low]);
        NarrowLanes.Store(Points8<NarrowLanes, Doubles8>(yLow, y0), ys[..low]);
        if (run > 8)
        {
            NarrowLanes.Store(Points8<NarrowLanes, Doubles8>(xHigh, x1), xs[8..]);
            NarrowLanes.Store(Points8<NarrowLanes, Doubles8>(yHigh, y1), ys[8..]);
        }
    }
}
