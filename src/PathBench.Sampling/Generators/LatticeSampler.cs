using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// A rank-1 lattice rule of n points: point k is ({k·z₁/n}, …, {k·z_s/n}) with the generating vector z
/// of <see cref="RankOneLattice"/> (the Fibonacci lattice in the first two dimensions when n is a
/// Fibonacci number, component-by-component otherwise). Randomization: the Cranley–Patterson (1976)
/// rotation, one shift per pixel and dimension — the standard randomization of a lattice rule, which
/// maps the lattice to a shifted copy of itself, keeps its structure and makes every point uniform.
/// </summary>
/// <remarks>Dimensions past <see cref="Dimensions"/> are padded by the path (DimensionLayout).</remarks>
public sealed class LatticeSampler : PointSampler
{
    /// <summary>Components constructed: the camera (pixel, lens) and the first vertex's eight dimensions.</summary>
    public const int Dimensions = 12;

    /// <summary>
    /// The most points: the direct CBC search costs about s·n²/4 multiply-adds, some 0.7·10⁹ for
    /// 2^14 points (about a second, once per process and count); 2^16 would take sixteen times longer.
    /// </summary>
    public const int MaxPoints = 1 << 14;

    private readonly int[] _z;

    /// <summary>Creates the rule for <see cref="PointSampler.Count"/> points.</summary>
    public LatticeSampler(SamplerSpec spec) : base(spec) => _z = RankOneLattice.GeneratingVector(spec.Count, Dimensions).ToArray();

    /// <inheritdoc/>
    public override int MaxDimensions => Dimensions;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        // The exact residue, then one rounding: the same value whatever the platform.
        double x = (double)((ulong)index * (uint)_z[dimension] % (uint)Count) / Count;
        return Spec.Randomize == Randomization.CranleyPatterson ? Rotation.Apply(x, pixel, dimension) : x;
    }

    /// <inheritdoc/>
    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        bool rotate = Spec.Randomize == Randomization.CranleyPatterson;
        double offset = rotate ? PointRandomizations.RotationOffset(pixel, dimension) : 0;
        uint z = (uint)_z[dimension], n = (uint)Count;
        if (firstIndex + (uint)Math.Max(0, xs.Length - 1) < firstIndex)
        {
            // The indices wrap past 2^32 − 1: the residue of each, as Sample takes it.
            for (int i = 0; i < xs.Length; i++)
            {
                double x = (double)((ulong)(firstIndex + (uint)i) * z % n) / Count;
                xs[i] = rotate ? PointRandomizations.Rotate(x, offset) : x;
            }

            return;
        }

        // (i + 1)·z mod n = (i·z mod n) + (z mod n), less n when that reaches n: the same residues with one division a
        // run instead of one a point (a 64-bit division is the loop's slowest instruction).
        uint step = z % n;
        uint residue = (uint)((ulong)firstIndex * z % n);
        for (int i = 0; i < xs.Length; i++)
        {
            double x = (double)residue / Count;
            xs[i] = rotate ? PointRandomizations.Rotate(x, offset) : x;
            residue += step;
            residue -= residue >= n ? n : 0;
        }
    }

    /// <inheritdoc/>
    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys) =>
        PairBySingles(pixel, firstIndex, dimension, xs, ys);
}
