namespace PathBench.Sampling.Generators;

/// <summary>
/// A plug-in's sampler, held to the contract every built-in keeps: each coordinate it returns lies in
/// [0, 1). A value outside it (1, a negative, NaN, infinity) would bias an image or a measurement
/// without a sign, so the first one stops the command with a <see cref="SamplerSpecException"/> naming
/// the plug-in, the generator and where the value came from. Every call is passed on unchanged, so the
/// values, and images made with them, are the plug-in's own.
/// </summary>
internal sealed class PluginSampler : PointSampler
{
    private readonly PointSampler _inner;
    private readonly GeneratorInfo _generator;

    public PluginSampler(PointSampler inner, GeneratorInfo generator)
        : base(inner.Spec)
    {
        _inner = inner;
        _generator = generator;
    }

    public override int MaxDimensions => _inner.MaxDimensions;

    public override bool PairsShareWork => _inner.PairsShareWork;

    public override bool WholeRunsCostLittleMore => _inner.WholeRunsCostLittleMore;

    public override int PointsAtOnce => _inner.PointsAtOnce;

    public override ulong PixelKey(int x, int y) => _inner.PixelKey(x, y);

    public override double Sample(ulong pixel, uint index, int dimension) =>
        Checked(_inner.Sample(pixel, index, dimension), pixel, index, dimension);

    public override (double X, double Y) Sample2D(ulong pixel, uint index, int dimension)
    {
        (double x, double y) = _inner.Sample2D(pixel, index, dimension);
        return (Checked(x, pixel, index, dimension), Checked(y, pixel, index, dimension + 1));
    }

    public override void SampleBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs)
    {
        _inner.SampleBatch(pixel, firstIndex, dimension, xs);
        CheckAll(xs, pixel, firstIndex, dimension);
    }

    public override void Sample2DBatch(ulong pixel, uint firstIndex, int dimension, Span<double> xs, Span<double> ys)
    {
        RequireSameLength(xs, ys);
        _inner.Sample2DBatch(pixel, firstIndex, dimension, xs, ys);
        CheckAll(xs, pixel, firstIndex, dimension);
        CheckAll(ys, pixel, firstIndex, dimension + 1);
    }

    private void CheckAll(ReadOnlySpan<double> values, ulong pixel, uint firstIndex, int dimension)
    {
        for (int i = 0; i < values.Length; i++)
        {
            Checked(values[i], pixel, firstIndex + (uint)i, dimension);
        }
    }

    private double Checked(double value, ulong pixel, uint index, int dimension) =>
        value is >= 0 and < 1 ? value : throw new SamplerSpecException(FormattableString.Invariant(
            $"{_generator.Origin}: generator '{_generator.Name}' returned {value:R} for dimension {dimension} of point {index} (pixel key 0x{pixel:x16}); every coordinate must lie in [0, 1)"));
}
