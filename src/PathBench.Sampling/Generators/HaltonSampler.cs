using System.Runtime.CompilerServices;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// The Halton (1960) sequence: coordinate d of point i is the radical inverse of i in the
/// (d+1)-th prime. Randomizations: Cranley–Patterson rotation, or random digit permutations
/// (an independent permutation per dimension and digit position, seeded per pixel).
/// </summary>
public sealed class HaltonSampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <inheritdoc/>
    public override int MaxDimensions => RadicalInverse.PrimeCount;

    /// <inheritdoc/>
    /// <remarks>With digit permutations: a run draws each digit position's permutation as far as its digits reach (in the
    /// bases from 17 on, a pixel's first 16 indices are one digit each, and a run of 4 costs most of what 16 cost).</remarks>
    public override bool WholeRunsCostLittleMore => Spec.Randomize == Randomization.DigitPermutation;

    /// <inheritdoc/>
    /// <remarks>Eight without digit permutations in the 512-bit lane form (<see cref="SamplerLanes"/>, <see cref="RadicalInverse.PlainBatch"/>), else 1.</remarks>
    public override int PointsAtOnce => Spec.Randomize != Randomization.DigitPermutation && Lanes.Wide512 ? 8 : 1;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        int b = RadicalInverse.Primes[dimension];
        switch (Spec.Randomize)
        {
            case Randomization.DigitPermutation:
                return RadicalInverse.Permuted(index, b, PermutationKey(pixel, dimension));
            case Randomization.CranleyPatterson:
                return Rotation.Apply(RadicalInverse.Plain(index, b), pixel, dimension);
            default:
                return RadicalInverse.Plain(index, b);
        }
    }

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        int b = RadicalInverse.Primes[dimension];
        switch (Spec.Randomize)
        {
            case Randomization.DigitPermutation:
                RadicalInverse.PermutedBatch(firstIndex, b, PermutationKey(pixel, dimension), xs);
                return;
            case Randomization.CranleyPatterson:
                RadicalInverse.PlainBatchForm(firstIndex, b, xs, true, PointRandomizations.RotationOffset(pixel, dimension), Width);
                return;
            default:
                RadicalInverse.PlainBatchForm(firstIndex, b, xs, false, 0, Width);
                return;
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);

    /// <summary>The key of a pixel's dimension whose digit permutations <see cref="RadicalInverse.Permuted"/> draws.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    internal static ulong PermutationKey(ulong pixel, int dimension) => SampleHash.Combine(pixel ^ Salts.DigitPermutation, (ulong)dimension);
}

/// <summary>
/// <see cref="HaltonSampler"/> with random digit permutations, the same points: the catalog's sampler for that
/// randomization. A class of its own so that its pair batch can make both dimensions in one call
/// (<see cref="RadicalInverse.PermutedPairBatch"/>) while the other randomizations keep their code: with the branch in
/// <see cref="HaltonSampler"/>'s shared pair batch, halton/none lost 12.4 → 13.0 ms a frame and cranley-patterson
/// 7.4 → 7.7 (three alternated pairs; the shared method compiled with the profile of whichever ran first).
/// </summary>
internal sealed class PermutedHaltonSampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <inheritdoc/>
    public override int MaxDimensions => RadicalInverse.PrimeCount;

    /// <inheritdoc/>
    /// <remarks>As <see cref="HaltonSampler.WholeRunsCostLittleMore"/> with digit permutations.</remarks>
    public override bool WholeRunsCostLittleMore => true;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension) =>
        RadicalInverse.Permuted(index, RadicalInverse.Primes[dimension], Key(pixel, dimension));

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs) =>
        RadicalInverse.PermutedBatch(firstIndex, RadicalInverse.Primes[dimension], Key(pixel, dimension), xs);

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        if ((uint)(dimension + 1) >= (uint)RadicalInverse.PrimeCount)
        {
            PairBySingles(pixel, firstIndex, dimension, xs, ys);
            return;
        }

        RequireSameLength(xs, ys);
        RadicalInverse.PermutedPairBatch(firstIndex, RadicalInverse.Primes[dimension], RadicalInverse.Primes[dimension + 1],
            Key(pixel, dimension), Key(pixel, dimension + 1), xs, ys);
    }

    // The key of a pixel's dimension, as HaltonSampler's.
    private static ulong Key(ulong pixel, int dimension) => HaltonSampler.PermutationKey(pixel, dimension);
}

/// <summary>
/// The Hammersley point set for n points: (i/n, φ₂(i), φ₃(i), …) with φ_b the radical
/// inverse in base b (Hammersley &amp; Handscomb 1964). Randomization: Cranley–Patterson rotation.
/// </summary>
public sealed class HammersleySampler(SamplerSpec spec) : PointSampler(spec)
{
    /// <inheritdoc/>
    public override int MaxDimensions => RadicalInverse.PrimeCount + 1;

    /// <inheritdoc/>
    /// <remarks>Eight in the 512-bit lane form (<see cref="SamplerLanes"/>, <see cref="RadicalInverse.PlainBatch"/>), else 1.</remarks>
    public override int PointsAtOnce => Lanes.Wide512 ? 8 : 1;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        double x = dimension == 0 ? (double)index / Count : RadicalInverse.Plain(index, RadicalInverse.Primes[dimension - 1]);
        return Spec.Randomize == Randomization.CranleyPatterson ? Rotation.Apply(x, pixel, dimension) : x;
    }

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        bool rotate = Spec.Randomize == Randomization.CranleyPatterson;
        double offset = rotate ? PointRandomizations.RotationOffset(pixel, dimension) : 0;
        if (dimension != 0)
        {
            RadicalInverse.PlainBatchForm(firstIndex, RadicalInverse.Primes[dimension - 1], xs, rotate, offset, Width);
            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            double x = (double)(firstIndex + (uint)i) / Count;
            xs[i] = rotate ? PointRandomizations.Rotate(x, offset) : x;
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);
}

/// <summary>The Cranley–Patterson (1976) rotation: a random toroidal shift, one offset per pixel and dimension.</summary>
internal static class Rotation
{
    public static double Apply(double x, ulong pixel, int dimension) => PointRandomizations.CranleyPatterson(x, pixel, dimension);
}
