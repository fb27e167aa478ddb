using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Owen-scrambled Sobol points whose per-pixel scramble seeds and sequence blocks, for the first
/// <see cref="BlueNoiseSeedTable.Pairs"/> dimension pairs, come from a tile optimised so that
/// neighbouring pixels' errors are negatively correlated: the error image is blue noise
/// (Heitz, Belcour, Ostromoukhov, Coeurjolly &amp; Iehl 2019; Heitz &amp; Belcour 2019).
/// </summary>
/// <remarks>
/// <para>
/// Coordinate d of point i in the pixel at (x, y): S_d(T_{p,d}(Sobol_d(i XOR k_{p,d}))), where
/// T_{p,d} is the hash-based Owen scramble (<see cref="OwenScrambler"/>) seeded from the seed-tile
/// entry that the ranking key of the planned count's level names at (x mod 64, y mod 64), k_{p,d}
/// that entry's sequence block times 2^level (<see cref="BlueNoiseRankingTable"/>: the table for the
/// largest power of two not above the planned count, 16 above it), and S_d a further Owen scramble
/// common to every pixel, seeded from the global seed (the <c>owen</c> randomization; <c>none</c>
/// leaves it out). The points depend on the planned count, so the generator is not progressive. Why it stays unbiased: for a
/// uniform seed, x + seed is uniform and the Laine–Karras steps are bijections, so every coordinate
/// of every pixel is uniform whatever the tile holds. Why the blue noise survives S_d: the tile was
/// optimised for integrands seen through random common scrambles of this kind
/// (<c>tools/PathBench.BlueNoise</c>); a nested scramble maps dyadic boxes onto dyadic boxes, so
/// how neighbouring pixels' points share the boxes out between them is the same in every replicate.
/// The XOR keeps the first 2^level samples one aligned block of the sequence (a digitally shifted
/// copy of its first block, in every dimension), so each pixel's point set is an Owen-scrambled Sobol
/// net and the convergence rate is Owen's.
/// </para>
/// <para>
/// Dimensions from 2·Pairs on use per-pixel hashed seeds, as plain Owen-scrambled Sobol (without its
/// index shuffle, which would break the tabled pairs' relation between pixels).
/// </para>
/// <para>
/// The pixel key carries the tile position in its low 12 bits (<see cref="PixelKey"/>), above them
/// the usual hash of (x, y, seed).
/// </para>
/// </remarks>
public sealed class BlueNoiseSobolSampler : PointSampler
{
    private const double Scale = 1.0 / 4294967296.0;
    private const int TileBits = 6;
    private const int TileMask = BlueNoiseSeedTable.Tile - 1;
    private const int TabledDimensions = 2 * BlueNoiseSeedTable.Pairs;
    private const int Positions = BlueNoiseSeedTable.Tile * BlueNoiseSeedTable.Tile;
    private readonly SobolMatrices _matrices = SobolMatrices.Default;
    private readonly uint[] _common = new uint[TabledDimensions];
    private readonly bool _scrambleCommon;

    // Per pair and tile position, four words: the level's scramble seeds of the pair's two dimensions
    // (BlueNoiseSeedTable.ScrambleSeeds of its seed word), its block shifted by the level (the index XOR), and one unused,
    // so that a batch reads one entry in one cache line.
    private readonly uint[] _entries = new uint[BlueNoiseSeedTable.Pairs * Positions * EntryWords];
    private const int EntryWords = 4;

    // Dimensions the eight-lane forms can walk (those with byte tables).
    private readonly int _walked;

    /// <summary>Creates the sampler.</summary>
    public BlueNoiseSobolSampler(SamplerSpec spec) : base(spec)
    {
        _scrambleCommon = spec.Randomize == Randomization.Owen;
        for (int d = 0; d < TabledDimensions; d++)
        {
            _common[d] = CommonSeed(spec.Seed, d);
        }

        Level = BlueNoiseRankingTable.LevelFor(spec.Count);
        _walked = Math.Min(_matrices.Dimensions, SobolMatrices.TabulatedDimensions);
        BlueNoiseSeedTable seeds = BlueNoiseSeedTable.Default;
        BlueNoiseRankingTable ranking = BlueNoiseRankingTable.Default;
        for (int pair = 0; pair < BlueNoiseSeedTable.Pairs; pair++)
        {
            for (int q = 0; q < Positions; q++)
            {
                uint word = seeds.Word(pair, ranking.Key(Level, pair, q));
                int at = ((pair * Positions) + q) * EntryWords;
                (_entries[at], _entries[at + 1]) = BlueNoiseSeedTable.ScrambleSeeds(word);
                _entries[at + 2] = BlueNoiseRankingTable.Block(word) << Level;
            }
        }
    }

    /// <summary>The ranking level the planned count chose: 2^Level samples per pixel (<see cref="BlueNoiseRankingTable.LevelFor"/>).</summary>
    public int Level { get; }

    /// <inheritdoc/>
    public override int MaxDimensions => _matrices.Dimensions;

    /// <inheritdoc/>
    /// <remarks>Eight on AVX2: groups of eight points from neighbouring table entries (<see cref="OwenSobolBatch.BlockLanes"/>; a run's last part-group on all lanes).</remarks>
    public override int PointsAtOnce => Avx2.IsSupported ? 8 : 1;

    /// <summary>
    /// The tile position in the low 12 bits, the pixel hash above. Without randomization the key
    /// ignores the global seed, so the points are a fixed function of the pixel.
    /// </summary>
    public override ulong PixelKey(int x, int y) =>
        (SampleHash.PixelKey(x, y, _scrambleCommon ? Spec.Seed : 0) << (2 * TileBits)) | (uint)(((y & TileMask) << TileBits) | (x & TileMask));

    /// <summary>The seed of the scramble common to all pixels in dimension <paramref name="dimension"/> under global seed <paramref name="seed"/>.</summary>
    public static uint CommonSeed(ulong seed, int dimension) => SampleHash.Combine32(SampleHash.Mix64(seed) ^ Salts.BlueNoiseCommon, (ulong)dimension);

    /// <summary>
    /// The bit-reversed coordinate <paramref name="dimension"/> (a tabled one) of Sobol point with
    /// bit-reversed index <paramref name="reversedIndex"/> under the pixel scramble seed
    /// <paramref name="pixelSeed"/> and, when given, the common scramble seed: what the sampler
    /// returns before the last reversal, and what the table's optimiser evaluates.
    /// </summary>
    public static uint ScrambledReversed(SobolMatrices matrices, uint reversedIndex, int dimension, uint pixelSeed, uint? commonSeed)
    {
        ArgumentNullException.ThrowIfNull(matrices);
        uint r = OwenScrambler.LaineKarrasPermutation(matrices.SampleReversed(reversedIndex, dimension), pixelSeed);
        return commonSeed is uint c ? OwenScrambler.LaineKarrasPermutation(r, c) : r;
    }

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        if (dimension >= TabledDimensions)
        {
            return Padded(index, dimension, PaddingSeed(pixel, dimension));
        }

        int entry = Entry(pixel, dimension);
        return Tabled(BitReversal.Reverse(index ^ _entries[entry + 2]), dimension, _entries[entry + (dimension & 1)]);
    }

    /// <inheritdoc/>
    public override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension)
    {
        if ((dimension & 1) != 0 || dimension >= TabledDimensions)
        {
            return base.Sample2D(pixel, index, dimension);
        }

        // The pair shares one table entry and one index reversal.
        int entry = Entry(pixel, dimension);
        uint reversedIndex = BitReversal.Reverse(index ^ _entries[entry + 2]);
        return (Tabled(reversedIndex, dimension, _entries[entry]), Tabled(reversedIndex, dimension + 1, _entries[entry + 1]));
    }

    /// <inheritdoc/>
    /// <remarks>The dimension's seed and block (from the tile through the ranking table, or the padding hash) are looked up once per batch.</remarks>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        if (dimension >= TabledDimensions)
        {
            PaddedBatch(pixel, firstIndex, dimension, xs, default);
            return;
        }

        Batch(pixel, firstIndex, dimension, xs, default);
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        RequireSameLength(xs, ys);
        if (dimension >= TabledDimensions)
        {
            // Two single coordinates (Sample2D's), both by one kernel, which shares the index's bytes between them.
            PaddedBatch(pixel, firstIndex, dimension, xs, ys);
        }
        else if ((dimension & 1) != 0)
        {
            // Two single coordinates of two tabled pairs, or of the last tabled pair and the first hashed dimension.
            PairBySingles(pixel, firstIndex, dimension, xs, ys);
        }
        else
        {
            Batch(pixel, firstIndex, dimension, xs, ys);
        }
    }

    // A dimension past the tabled pairs (seeded by the padding hash of the pixel key and the dimension, no index XOR)
    // into xs and, when ys is not empty, the next into ys.
    [MethodImpl(InliningOptions.Kernel)]
    private void PaddedBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        bool pair = !ys.IsEmpty;
        uint seedX = PaddingSeed(pixel, dimension), seedY = pair ? PaddingSeed(pixel, dimension + 1) : 0;
        int count = pair ? 2 : 1;
        if (Avx2.IsSupported && xs.Length >= 2 && dimension + count <= _walked)
        {
            OwenSobolBatch.BlockLanes<OwenSobolBatch.Once>(_matrices.ReversedValueTables(dimension, count), firstIndex, 0, seedX, 0, seedY, 0, xs, ys);
            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = Padded(firstIndex + (uint)i, dimension, seedX);
        }

        for (int i = 0; i < ys.Length; i++)
        {
            ys[i] = Padded(firstIndex + (uint)i, dimension + 1, seedY);
        }
    }

    private static uint PaddingSeed(ulong pixel, int dimension) => SampleHash.Combine32(pixel ^ Salts.BlueNoisePadding, (ulong)dimension);

    private double Padded(uint index, int dimension, uint seed) =>
        ToUnit(OwenScrambler.LaineKarrasPermutation(_matrices.SampleReversed(BitReversal.Reverse(index), dimension), seed));

    // A tabled dimension d into xs and, when ys is not empty (d even), d + 1 into ys: one kernel for each randomization
    // (with and without the common scramble), each with its own code and dynamic-PGO profile.
    [MethodImpl(InliningOptions.ShortMethod)]
    private void Batch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if (_scrambleCommon)
        {
            TabledBatch<OwenSobolBatch.Twice>(pixel, firstIndex, dimension, xs, ys);
        }
        else
        {
            TabledBatch<OwenSobolBatch.Once>(pixel, firstIndex, dimension, xs, ys);
        }
    }

    [MethodImpl(InliningOptions.Kernel)]
    private void TabledBatch<TCommon>(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
        where TCommon : struct
    {
        bool pair = !ys.IsEmpty;
        int entry = Entry(pixel, dimension);
        uint seedX = _entries[entry + (dimension & 1)], seedY = _entries[entry + 1], block = _entries[entry + 2];
        uint commonX = 0, commonY = 0;
        if (typeof(TCommon) == typeof(OwenSobolBatch.Twice))
        {
            commonX = _common[dimension];
            commonY = pair ? _common[dimension + 1] : 0;
        }

        int count = pair ? 2 : 1;
        if (Avx2.IsSupported && xs.Length >= 2 && dimension + count <= _walked)
        {
            OwenSobolBatch.BlockLanes<TCommon>(_matrices.ReversedValueTables(dimension, count), firstIndex, block, seedX, commonX, seedY, commonY, xs, ys);
            return;
        }

        // The scalar form (a one-point run, and the whole batch without AVX2): the reference the eight-lane form is tested against.
        for (int i = 0; i < xs.Length; i++)
        {
            uint reversedIndex = BitReversal.Reverse((firstIndex + (uint)i) ^ block);
            xs[i] = Tabled(reversedIndex, dimension, seedX);
            if (pair)
            {
                ys[i] = Tabled(reversedIndex, dimension + 1, seedY);
            }
        }
    }

    // The first word of a tabled dimension's entry for the pixel's tile position (the key's low 12 bits).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static int Entry(ulong pixel, int dimension) => (((dimension >> 1) * Positions) + (int)(pixel & 0xFFF)) * EntryWords;

    private double Tabled(uint reversedIndex, int dimension, uint pixelSeed) =>
        ToUnit(ScrambledReversed(_matrices, reversedIndex, dimension, pixelSeed, _scrambleCommon ? _common[dimension] : null));

    // The centre of the 2^-32 cell, as SobolSampler does for scrambled values.
    private static double ToUnit(uint scrambledReversed) => (BitReversal.Reverse(scrambledReversed) + 0.5) * Scale;
}
