using BenchmarkDotNet.Attributes;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Sequences;

namespace PathBench.Benchmarks;

/// <summary>
/// Nanoseconds per 2-D sample (dimensions 2 and 3 of point i) for each generator ×
/// randomization, single-threaded: the cost a renderer pays per bounce, one point at a time
/// and in batches of 4096. Target: Owen-scrambled Sobol at 100 M 2-D samples/s per core, i.e.
/// at most 10 ns per operation.
/// </summary>
public class SamplerBenchmarks
{
    private const int Points = 4096;
    private PointSampler _sampler = null!;
    private ulong _pixel;
    private readonly double[] _xs = new double[Points], _ys = new double[Points];

    [Params(
        "random/none", "jittered/none", "latin-hypercube/none", "multi-jittered/none",
        "halton/none", "halton/cranley-patterson", "halton/digit-permutation",
        "hammersley/none", "sobol/none", "sobol/cranley-patterson", "sobol/digital-shift", "sobol/owen", "sobol/owen+antithetic",
        "pmj02/none", "pmj02/digital-shift", "pmj02/owen", "pmj/owen", "pj/owen", "lattice/none", "lattice/cranley-patterson",
        "bluenoise/none", "bluenoise/owen")]
    public string Case { get; set; } = "sobol/owen";

    [GlobalSetup]
    public void Setup()
    {
        string[] parts = Case.Split('/');
        (Randomization r, bool anti) = SamplerCatalog.ParseRandomization(parts[1]);
        _sampler = SamplerCatalog.Create(new SamplerSpec(parts[0], r, anti, Points, 1), 4);
        _pixel = _sampler.PixelKey(17, 3);
        Sample2D(); // builds any lazily made tables (the pmj family's) outside the measurement
    }

    [Benchmark(OperationsPerInvoke = Points)]
    public double Sample2D()
    {
        double sum = 0;
        for (uint i = 0; i < Points; i++)
        {
            (double x, double y) = _sampler.Sample2D(_pixel, i, 2);
            sum += x + y;
        }

        return sum;
    }

    /// <summary>The same points through <see cref="PointSampler.Sample2DBatch(ulong, uint, int, Span{double}, Span{double})"/> (AVX2 for Owen-scrambled Sobol).</summary>
    [Benchmark(OperationsPerInvoke = Points)]
    public double Sample2DBatch()
    {
        _sampler.Sample2DBatch(_pixel, 0, 2, _xs, _ys);
        return _xs[Points - 1] + _ys[Points - 1];
    }
}

/// <summary>
/// Building one progressive multi-jittered sequence of 2^k points from scratch (what the pmj
/// family pays once per table and process): the construction of Christensen, Kensler &amp;
/// Kilpatrick (2018) with its exhaustive stratum search, <see cref="ProgressiveMultiJittered"/>.
/// The paper's own generation times are not quoted here (not at hand to check). For scale only, as
/// another algorithm and variant: Pharr (2019), "Efficient Generation of Points that Satisfy
/// Two-Dimensional Elementary Intervals", JCGT 8(1), Fig. 1, reports 4,096 pmj02bn points in 5.19 ms
/// on one core of a 4 GHz CPU.
/// </summary>
public class PmjConstructionBenchmarks
{
    [Params(PmjVariant.ProgressiveJittered, PmjVariant.ProgressiveMultiJittered, PmjVariant.ProgressiveMultiJittered02)]
    public PmjVariant Variant { get; set; }

    [Params(10, 12, 14)]
    public int Log2Count { get; set; }

    [Benchmark]
    public int Generate() => ProgressiveMultiJittered.Generate(Variant, Log2Count, 7).Count;
}
