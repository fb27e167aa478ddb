using System.Runtime.Intrinsics;
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
    /// <remarks>Eight without digit permutations on 512-bit lanes (<see cref="RadicalInverse.PlainBatch"/>), else 1.</remarks>
    public override int PointsAtOnce => Spec.Randomize != Randomization.DigitPermutation && Vector512.IsHardwareAccelerated ? 8 : 1;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        int b = RadicalInverse.Primes[dimension];
        switch (Spec.Randomize)
        {
            case Randomization.DigitPermutation:
                return RadicalInverse.Permuted(index, b, SampleHash.Combine(pixel ^ Salts.DigitPermutation, (ulong)dimension));
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
                RadicalInverse.PermutedBatch(firstIndex, b, SampleHash.Combine(pixel ^ Salts.DigitPermutation, (ulong)dimension), xs);
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
    /// <remarks>Eight on 512-bit lanes (<see cref="RadicalInverse.PlainBatch"/>), else 1.</remarks>
    public override int PointsAtOnce => Vector512.IsHardwareAccelerated ? 8 : 1;

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
