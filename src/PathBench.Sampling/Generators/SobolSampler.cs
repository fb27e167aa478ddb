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
                uint shift = SampleHash.Combine32(pixel ^ Salts.DigitalShift, (ulong)dimension);
                return ((_matrices.Sample(index, dimension) ^ shift) + 0.5) * Scale;
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
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        switch (Spec.Randomize)
        {
            case Randomization.Owen:
                uint seed = (uint)(PairSeeds(pixel, dimension) >> (32 * (dimension & 1)));
                int done = 0;
                if (dimension < Math.Min(_matrices.Dimensions, SobolMatrices.TabulatedDimensions))
                {
                    done = OwenSobolBatch.Run(Tables(dimension), default, firstIndex, (uint)(pixel >> 32), seed, 0, xs, default);
                }

                for (int i = done; i < xs.Length; i++)
                {
                    xs[i] = OwenCoordinate(ReversedShuffledIndex(pixel, firstIndex + (uint)i), dimension, seed);
                }

                return;
            // The unscrambled forms on eight lanes where the dimension is tabled (OwenSobolBatch.PlainRun), the rest (a
            // single point, no AVX2) by the scalar loops: the reference the lanes are tested against.
            case Randomization.DigitalShift:
                uint shift = SampleHash.Combine32(pixel ^ Salts.DigitalShift, (ulong)dimension);
                for (int i = Plain(firstIndex, dimension, OwenSobolBatch.Finish.DigitalShift, shift, 0, xs); i < xs.Length; i++)
                {
                    xs[i] = ((_matrices.Sample(firstIndex + (uint)i, dimension) ^ shift) + 0.5) * Scale;
                }

                return;
            case Randomization.CranleyPatterson:
                double offset = PointRandomizations.RotationOffset(pixel, dimension);
                for (int i = Plain(firstIndex, dimension, OwenSobolBatch.Finish.Rotation, 0, offset, xs); i < xs.Length; i++)
                {
                    xs[i] = PointRandomizations.Rotate(_matrices.Sample(firstIndex + (uint)i, dimension) * Scale, offset);
                }

                return;
            default:
                for (int i = Plain(firstIndex, dimension, OwenSobolBatch.Finish.None, 0, 0, xs); i < xs.Length; i++)
                {
                    xs[i] = _matrices.Sample(firstIndex + (uint)i, dimension) * Scale;
                }

                return;
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if (Spec.Randomize != Randomization.Owen)
        {
            // Sample2D is two single coordinates for these.
            PairBySingles(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        if ((dimension & 1) != 0 || dimension + 1 >= Math.Min(_matrices.Dimensions, SobolMatrices.TabulatedDimensions))
        {
            base.Sample2DBatch(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        RequireSameLength(xs, ys);
        ulong seeds = PairSeeds(pixel, dimension);
        int done = OwenSobolBatch.Run(
            Tables(dimension), Tables(dimension + 1),
            firstIndex, (uint)(pixel >> 32), (uint)seeds, (uint)(seeds >> 32), xs, ys);
        // The scalar form (a one-point run, and the whole batch without AVX2): the reference the vector code is tested against.
        for (int i = done; i < xs.Length; i++)
        {
            uint reversed = ReversedShuffledIndex(pixel, firstIndex + (uint)i);
            xs[i] = OwenCoordinate(reversed, dimension, (uint)seeds);
            ys[i] = OwenCoordinate(reversed, dimension + 1, (uint)(seeds >> 32));
        }
    }

    private OwenSobolBatch.Tables Tables(int dimension) => new(_matrices.ReversedTables(dimension), _matrices.GroupTable(dimension));

    // How many of the run the lanes made (none for an untabled dimension).
    private int Plain(uint firstIndex, int dimension, OwenSobolBatch.Finish finish, uint shift, double offset, Span<double> xs) =>
        dimension < Math.Min(_matrices.Dimensions, SobolMatrices.TabulatedDimensions)
            ? OwenSobolBatch.PlainRun(_matrices.Tables(dimension), firstIndex, finish, shift, offset, xs)
            : 0;

    // The nested scramble of the index (Burley 2020), kept bit-reversed for SampleReversed.
    // Its seed is the pixel key's upper half: the key is already a full-avalanche hash, and
    // the dimension seeds below come from a further mix of it, so the two are unrelated.
    private static uint ReversedShuffledIndex(ulong pixel, uint index) =>
        OwenScrambler.LaineKarrasPermutation(BitReversal.Reverse(index), (uint)(pixel >> 32));

    // One hash gives the scramble seeds of a dimension pair (2k, 2k+1): low and high halves.
    private static ulong PairSeeds(ulong pixel, int dimension) => SampleHash.Combine(pixel ^ Salts.OwenDimension, (ulong)(dimension >> 1));

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
