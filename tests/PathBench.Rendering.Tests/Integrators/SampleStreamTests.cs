using PathBench.Rendering.Integrators;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Integrators;

public sealed class SampleStreamTests
{
    [Fact]
    public void Dimensions_within_the_limit_come_from_the_generator()
    {
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("halton", Randomization.DigitPermutation, false, 64, 4), 8);
        ulong key = s.PixelKey(3, 2);
        var stream = new SampleStream(s, key, 17);
        Assert.Equal(s.Sample(key, 17, 5), stream.Get(5));
        Assert.Equal(s.Sample2D(key, 17, 1022), stream.Get2D(1022));
    }

    [Fact]
    public void Padding_past_the_limit_is_uniform_and_differs_per_dimension()
    {
        // Kolmogorov–Smirnov on 4000 samples of one padded dimension, at α = 0.001 (see Uniformity).
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("halton", Randomization.DigitPermutation, false, 4000, 4), 8);
        ulong key = s.PixelKey(0, 0);
        const int n = 4000;
        double[] x = Enumerable.Range(0, n).Select(i => new SampleStream(s, key, (uint)i).Get(2000)).ToArray();
        Assert.All(x, v => Assert.InRange(v, 0.0, Math.BitDecrement(1.0)));
        double ks = Uniformity.KolmogorovSmirnov(x);
        Assert.True(ks < Uniformity.CriticalValue001, $"√N·D = {ks}");
        var stream = new SampleStream(s, key, 3);
        Assert.NotEqual(stream.Get(2000), stream.Get(2001));
        (double a, double b) = stream.Get2D(1023); // straddles the limit: generator for 1023, padding for 1024
        Assert.Equal(s.Sample(key, 3, 1023), a);
        Assert.Equal(stream.Get(1024), b);
    }
}
