using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Owen-scrambled Sobol points whose per-pixel scramble seeds, for the first
/// <see cref="BlueNoiseSeedTable.Pairs"/> dimension pairs, come from a tile of seeds optimised so
/// that neighbouring pixels' errors are negatively correlated: the error image is blue noise
/// (Heitz, Belcour, Ostromoukhov, Coeurjolly &amp; Iehl 2019; Heitz &amp; Belcour 2019).
/// </summary>
/// <remarks>
/// <para>
/// Coordinate d of point i in the pixel at (x, y): S_d(T_{p,d}(Sobol_d(i))), in natural index order,
/// where T_{p,d} is the hash-based Owen scramble (<see cref="OwenScrambler"/>) seeded from the tile at
/// (x mod 64, y mod 64) and S_d a further Owen scramble common to every pixel, seeded from the global
/// seed (the <c>owen</c> randomization; <c>none</c> leaves it out). Why it stays unbiased: for a
/// uniform seed, x + seed is uniform and the Laine–Karras steps are bijections, so every coordinate
/// of every pixel is uniform whatever the tile holds. Why the blue noise survives S_d: the tile was
/// optimised for integrands seen through random common scrambles of this kind
/// (<c>tools/PathBench.BlueNoise</c>); a nested scramble maps dyadic boxes onto dyadic boxes, so
/// how neighbouring pixels' points share the boxes out between them is the same in every replicate.
/// Each pixel's point set is an Owen-scrambled Sobol net, so the convergence rate is Owen's.
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
    private readonly SobolMatrices _matrices = SobolMatrices.Default;
    private readonly BlueNoiseSeedTable _table = BlueNoiseSeedTable.Default;
    private readonly uint[] _common = new uint[TabledDimensions];
    private readonly bool _scrambleCommon;

    /// <summary>Creates the sampler.</summary>
    public BlueNoiseSobolSampler(SamplerSpec spec) : base(spec)
    {
        _scrambleCommon = spec.Randomize == Randomization.Owen;
        for (int d = 0; d < TabledDimensions; d++)
        {
            _common[d] = CommonSeed(spec.Seed, d);
        }
    }

    /// <inheritdoc/>
    public override int MaxDimensions => _matrices.Dimensions;

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
        uint reversedIndex = BitReversal.Reverse(index);
        if (dimension >= TabledDimensions)
        {
            uint seed = SampleHash.Combine32(pixel ^ Salts.BlueNoisePadding, (ulong)dimension);
            return ToUnit(OwenScrambler.LaineKarrasPermutation(_matrices.SampleReversed(reversedIndex, dimension), seed));
        }

        (uint sx, uint sy) = BlueNoiseSeedTable.ScrambleSeeds(_table.Word(dimension >> 1, (int)(pixel & 0xFFF)));
        return Tabled(reversedIndex, dimension, (dimension & 1) == 0 ? sx : sy);
    }

    /// <inheritdoc/>
    public override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension)
    {
        if ((dimension & 1) != 0 || dimension >= TabledDimensions)
        {
            return base.Sample2D(pixel, index, dimension);
        }

        // The pair shares one table word and one index reversal.
        uint reversedIndex = BitReversal.Reverse(index);
        (uint sx, uint sy) = BlueNoiseSeedTable.ScrambleSeeds(_table.Word(dimension >> 1, (int)(pixel & 0xFFF)));
        return (Tabled(reversedIndex, dimension, sx), Tabled(reversedIndex, dimension + 1, sy));
    }

    /// <inheritdoc/>
    /// <remarks>The dimension's seed (from the tile or the padding hash) is looked up once per batch.</remarks>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        if (dimension >= TabledDimensions)
        {
            uint seed = SampleHash.Combine32(pixel ^ Salts.BlueNoisePadding, (ulong)dimension);
            for (int i = 0; i < xs.Length; i++)
            {
                xs[i] = ToUnit(OwenScrambler.LaineKarrasPermutation(_matrices.SampleReversed(BitReversal.Reverse(firstIndex + (uint)i), dimension), seed));
            }

            return;
        }

        (uint sx, uint sy) = BlueNoiseSeedTable.ScrambleSeeds(_table.Word(dimension >> 1, (int)(pixel & 0xFFF)));
        uint pixelSeed = (dimension & 1) == 0 ? sx : sy;
        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = Tabled(BitReversal.Reverse(firstIndex + (uint)i), dimension, pixelSeed);
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if ((dimension & 1) != 0 || dimension >= TabledDimensions)
        {
            // Sample2D is two single coordinates here.
            PairBySingles(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        RequireSameLength(xs, ys);
        (uint sx, uint sy) = BlueNoiseSeedTable.ScrambleSeeds(_table.Word(dimension >> 1, (int)(pixel & 0xFFF)));
        for (int i = 0; i < xs.Length; i++)
        {
            uint reversedIndex = BitReversal.Reverse(firstIndex + (uint)i);
            xs[i] = Tabled(reversedIndex, dimension, sx);
            ys[i] = Tabled(reversedIndex, dimension + 1, sy);
        }
    }

    private double Tabled(uint reversedIndex, int dimension, uint pixelSeed) =>
        ToUnit(ScrambledReversed(_matrices, reversedIndex, dimension, pixelSeed, _scrambleCommon ? _common[dimension] : null));

    // The centre of the 2^-32 cell, as SobolSampler does for scrambled values.
    private static double ToUnit(uint scrambledReversed) => (BitReversal.Reverse(scrambledReversed) + 0.5) * Scale;
}
