using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;

namespace PathBench.Analysis.Tests;

/// <summary>
/// Deliberately broken samplers, for tests only (never in the catalog): each carries one defect a
/// change to sampling code can introduce, and the self-test and the check must catch it. Each keeps
/// the spec of the correct sampler it breaks, so the renderer accepts it where that one goes.
/// </summary>
internal static class BrokenSamplers
{
    /// <summary>Salt of the test samplers' own hashes (any constant unlike the library's).</summary>
    private const ulong Salt = 0x42524F4B454E0001UL;

    /// <summary>Keeps a coordinate in [0, 1): rounding can carry (c + j)/n up to 1.</summary>
    private static double BelowOne(double x) => x < 1.0 ? x : Math.BitDecrement(1.0);

    /// <summary>Every pixel gets the points of pixel (0, 0): the seed is reused instead of hashed with the pixel.</summary>
    public sealed class SameSeedInEveryPixel(PointSampler inner) : PointSampler(inner.Spec)
    {
        private readonly ulong _key = SampleHash.PixelKey(0, 0, inner.Spec.Seed);

        /// <inheritdoc/>
        public override int MaxDimensions => inner.MaxDimensions;

        /// <inheritdoc/>
        public override double Sample(ulong pixel, uint index, int dimension) => inner.Sample(_key, index, dimension);

        /// <inheritdoc/>
        public override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension) => inner.Sample2D(_key, index, dimension);
    }

    /// <summary>
    /// Claims jittered sampling but draws each point's cell independently (with replacement) instead
    /// of from a permutation: every point is still uniform on the square, so estimates stay unbiased,
    /// but cells repeat and others stay empty: the stratification is lost and the error falls as N^-1/2.
    /// </summary>
    public sealed class UnstratifiedJittered(SamplerSpec spec) : PointSampler(spec)
    {
        private readonly StratumGrid _grid = StratumGrid.For(spec.Count);

        /// <inheritdoc/>
        public override int MaxDimensions => int.MaxValue;

        /// <inheritdoc/>
        public override double Sample(ulong pixel, uint index, int dimension)
        {
            uint cell = (uint)(SampleHash.Combine(pixel ^ Salt, ((ulong)index << 20) | (uint)(dimension >> 1)) % (ulong)Count);
            double jitter = SampleHash.Uniform(pixel ^ (Salt + 1), index, dimension);
            double x = (dimension & 1) == 0
                ? ((cell % (uint)_grid.Columns) + jitter) / _grid.Columns
                : ((cell / (uint)_grid.Columns) + jitter) / _grid.Rows;
            return BelowOne(x);
        }
    }

    /// <summary>
    /// A point set that is not uniform: every coordinate x of a correct sampler moved to
    /// x − ε·x·(1 − x), slightly toward 0 (the map keeps [0, 1) and the order of points, so strata
    /// keep their points). A uniform x then has mean 1/2 − ε/6: every estimate is biased.
    /// </summary>
    public sealed class PushedTowardZero(PointSampler inner, double epsilon) : PointSampler(inner.Spec)
    {
        /// <inheritdoc/>
        public override int MaxDimensions => inner.MaxDimensions;

        /// <inheritdoc/>
        public override double Sample(ulong pixel, uint index, int dimension) => Push(inner.Sample(pixel, index, dimension));

        /// <inheritdoc/>
        public override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension)
        {
            (double x, double y) = inner.Sample2D(pixel, index, dimension);
            return (Push(x), Push(y));
        }

        private double Push(double x) => x - (epsilon * x * (1 - x));
    }
}
