using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics.X86;
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
    private readonly Randomization _randomize = spec.Randomize;

    // Dimensions below this have byte tables (the eight-lane forms walk them).
    private readonly int _tabled = Math.Min(SobolMatrices.Default.Dimensions, SobolMatrices.TabulatedDimensions);

    /// <inheritdoc/>
    public override int MaxDimensions => _matrices.Dimensions;

    /// <inheritdoc/>
    /// <remarks>Eight on AVX2: groups of eight points from neighbouring table entries (<see cref="OwenSobolBatch"/>; a run's last part-group on all lanes).</remarks>
    public override int PointsAtOnce => Avx2.IsSupported ? 8 : 1;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        switch (Spec.Randomize)
        {
            case Randomization.Owen:
                return Owen(pixel, ReversedShuffledIndex(pixel, index), dimension);
            case Randomization.DigitalShift:
                return ((_matrices.Sample(index, dimension) ^ DigitalShift(pixel, dimension)) + 0.5) * Scale;
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
        uint reversed = ReversedShuffledIndex(pixel, index);
        if ((dimension & 1) != 0)
        {
            return (Owen(pixel, reversed, dimension), Owen(pixel, reversed, dimension + 1));
        }

        ulong seeds = PairSeeds(pixel, dimension);
        return (OwenCoordinate(reversed, dimension, (uint)seeds), OwenCoordinate(reversed, dimension + 1, (uint)(seeds >> 32)));
    }

    /// <inheritdoc/>
    /// <remarks>A dimension's randomization (seed, shift or offset) is computed once per batch.</remarks>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs) => Batch(pixel, firstIndex, dimension, xs, default, null);

    /// <inheritdoc/>
    /// <remarks>Owen scrambling's memo of the scrambled indices (<see cref="OwenSobolBatch.IndexMemo"/>), without the thread-static access.</remarks>
    public override BatchScratch? NewBatchScratch() => _randomize == Randomization.Owen ? OwenSobolBatch.NewIndexMemo() : null;

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, BatchScratch scratch) =>
        Batch(pixel, firstIndex, dimension, xs, default, scratch as OwenSobolBatch.IndexMemo);

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys, BatchScratch scratch)
    {
        RequireSameLength(xs, ys);
        if (!xs.IsEmpty)
        {
            Batch(pixel, firstIndex, dimension, xs, ys, scratch as OwenSobolBatch.IndexMemo);
        }
    }

    /// <inheritdoc/>
    /// <remarks>Without Owen scrambling Sample2D is two single coordinates: both dimensions by one kernel, which shares the index's bytes between them.</remarks>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        RequireSameLength(xs, ys);
        if (!xs.IsEmpty)
        {
            Batch(pixel, firstIndex, dimension, xs, ys, null);
        }
    }

    // Dimension d into xs and, when ys is not empty, d + 1 into ys, by one kernel per randomization (each with its own
    // code and dynamic-PGO profile: a batch method shared by the four was compiled by the profile of whichever the
    // process ran first, the others' branches laid out as cold).
    [MethodImpl(InliningOptions.ShortMethod)]
    private void Batch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys, OwenSobolBatch.IndexMemo? memo)
    {
        switch (_randomize)
        {
            case Randomization.Owen:
                OwenBatch(pixel, firstIndex, dimension, xs, ys, memo);
                return;
            case Randomization.DigitalShift:
                PlainBatch<OwenSobolBatch.Shifted>(pixel, firstIndex, dimension, xs, ys);
                return;
            case Randomization.CranleyPatterson:
                PlainBatch<OwenSobolBatch.Rotated>(pixel, firstIndex, dimension, xs, ys);
                return;
            default:
                PlainBatch<OwenSobolBatch.Bare>(pixel, firstIndex, dimension, xs, ys);
                return;
        }
    }

    // Dimension d of the run into xs and, when ys is not empty, dimension d + 1 into ys (as many): the unscrambled forms
    // (TFinish: OwenSobolBatch.Bare, Shifted or Rotated) on eight lanes where the dimensions are tabled
    // (OwenSobolBatch.PlainLanes), the rest (a single point, no AVX2, an untabled dimension) by the scalar loops: the
    // reference the lanes are tested against.
    [MethodImpl(InliningOptions.Kernel)]
    private void PlainBatch<TFinish>(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
        where TFinish : struct
    {
        bool pair = !ys.IsEmpty;
        uint shiftX = 0, shiftY = 0;
        double offsetX = 0, offsetY = 0;
        if (typeof(TFinish) == typeof(OwenSobolBatch.Shifted))
        {
            shiftX = DigitalShift(pixel, dimension);
            shiftY = pair ? DigitalShift(pixel, dimension + 1) : 0;
        }
        else if (typeof(TFinish) == typeof(OwenSobolBatch.Rotated))
        {
            offsetX = PointRandomizations.RotationOffset(pixel, dimension);
            offsetY = pair ? PointRandomizations.RotationOffset(pixel, dimension + 1) : 0;
        }

        int count = pair ? 2 : 1;
        if (Avx2.IsSupported && xs.Length >= 2 && (uint)(dimension + count) <= (uint)_tabled)
        {
            OwenSobolBatch.PlainLanes<TFinish>(_matrices.Tables(dimension, count), firstIndex, shiftX, offsetX, shiftY, offsetY, xs, ys);
            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = Finished<TFinish>(_matrices.Sample(firstIndex + (uint)i, dimension), shiftX, offsetX);
        }

        for (int i = 0; i < ys.Length; i++)
        {
            ys[i] = Finished<TFinish>(_matrices.Sample(firstIndex + (uint)i, dimension + 1), shiftY, offsetY);
        }
    }

    // The scalar finish of a Sobol word: Sample's arithmetic for each unscrambled randomization.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static double Finished<TFinish>(uint v, uint shift, double offset)
        where TFinish : struct
    {
        if (typeof(TFinish) == typeof(OwenSobolBatch.Shifted))
        {
            return ((v ^ shift) + 0.5) * Scale;
        }

        return typeof(TFinish) == typeof(OwenSobolBatch.Rotated) ? PointRandomizations.Rotate(v * Scale, offset) : v * Scale;
    }

    // Owen-scrambled dimension d of the run into xs and, when ys is not empty, d + 1 into ys: the pair on eight lanes
    // (OwenSobolBatch.Run) where d is even and both are tabled, one dimension where it is tabled; the rest (a
    // single point, no AVX2, an untabled dimension) by the scalar form, the reference the vector code is tested against.
    // The other forms are calls of their own at the end, so nothing of theirs is kept across the lanes' path.
    [MethodImpl(InliningOptions.ShortMethod)]
    private void OwenBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys, OwenSobolBatch.IndexMemo? memo)
    {
        if (!ys.IsEmpty && (dimension & 1) != 0)
        {
            OddOwenPair(pixel, firstIndex, dimension, xs, ys, memo);
            return;
        }

        int count = ys.IsEmpty ? 1 : 2;
        if (Avx2.IsSupported && xs.Length >= 2 && (uint)(dimension + count) <= (uint)_tabled)
        {
            // The matrices rather than the table slice: as many arguments as the callers', so the call can be a jump.
            OwenSobolBatch.Run(memo, _matrices, pixel, dimension, firstIndex, xs, ys);
            return;
        }

        OwenPoints(pixel, firstIndex, dimension, xs, ys);
    }

    // An odd pair straddles two seed pairs: two single dimensions (Sample2D's values, which are Sample's).
    [MethodImpl(InliningOptions.ColdPath)]
    private void OddOwenPair(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys, OwenSobolBatch.IndexMemo? memo)
    {
        OwenBatch(pixel, firstIndex, dimension, xs, default, memo);
        OwenBatch(pixel, firstIndex, dimension + 1, ys, default, memo);
    }

    // OwenBatch's scalar form, one point at a time.
    [MethodImpl(InliningOptions.ColdPath)]
    private void OwenPoints(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        ulong seeds = PairSeeds(pixel, dimension);
        uint seedX = (uint)(seeds >> (32 * (dimension & 1))), seedY = (uint)(seeds >> 32);
        for (int i = 0; i < xs.Length; i++)
        {
            uint reversed = ReversedShuffledIndex(pixel, firstIndex + (uint)i);
            xs[i] = OwenCoordinate(reversed, dimension, seedX);
            if (!ys.IsEmpty)
            {
                ys[i] = OwenCoordinate(reversed, dimension + 1, seedY);
            }
        }
    }

    private static uint DigitalShift(ulong pixel, int dimension) => SampleHash.Combine32(pixel ^ Salts.DigitalShift, (ulong)dimension);

    // The nested scramble of the index (Burley 2020), kept bit-reversed for SampleReversed.
    // Its seed is the pixel key's upper half: the key is already a full-avalanche hash, and
    // the dimension seeds below come from a further mix of it, so the two are unrelated.
    private static uint ReversedShuffledIndex(ulong pixel, uint index) =>
        OwenScrambler.LaineKarrasPermutation(BitReversal.Reverse(index), (uint)(pixel >> 32));

    // One hash gives the scramble seeds of a dimension pair (2k, 2k+1): low and high halves.
    [MethodImpl(InliningOptions.ShortMethod)]
    internal static ulong PairSeeds(ulong pixel, int dimension) => SampleHash.Combine(pixel ^ Salts.OwenDimension, (ulong)(dimension >> 1));

    private double Owen(ulong pixel, uint reversedShuffledIndex, int dimension)
    {
        uint seed = (uint)(PairSeeds(pixel, dimension) >> (32 * (dimension & 1)));
        return OwenCoordinate(reversedShuffledIndex, dimension, seed);
    }

    // Scramble(Sample(shuffled)) = Reverse(LK(Reverse(Sample(shuffled)))), and the inner
    // Reverse(Sample(Reverse(r))) is one table walk.
    private double OwenCoordinate(uint reversedShuffledIndex, int dimension, uint seed)
    {
        uint scrambledReversed = OwenScrambler.LaineKarrasPermutation(_matrices.SampleReversed(reversedShuffledIndex, dimension), seed);
        return (BitReversal.Reverse(scrambledReversed) + 0.5) * Scale;
    }
}

/// <summary>
/// Antithetic pairing over any sampler: point 2k is point k of the inner sampler (planned
/// for ⌈n/2⌉ points) and point 2k+1 mirrors it, 1 − x in every coordinate.
/// </summary>
public sealed class AntitheticSampler(SamplerSpec spec, PointSampler inner) : PointSampler(spec)
{

    /// <inheritdoc/>
    public override int MaxDimensions => inner.MaxDimensions;

    /// <summary>The sampler whose points are mirrored.</summary>
    public PointSampler Inner => inner;

    /// <inheritdoc/>
    /// <remarks>The inner sampler's key (the same hash for every generator that does not override it).</remarks>
    public override ulong PixelKey(int x, int y) => inner.PixelKey(x, y);

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        double x = inner.Sample(pixel, index >> 1, dimension);
        // 1 − x for x = 0 would be 1, outside [0, 1): the clamp keeps the interval half-open.
        return (index & 1) == 0 ? x : UnitInterval.Clamp(1.0 - x);
    }
}
