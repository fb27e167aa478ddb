using BenchmarkDotNet.Attributes;
using PathBench.Analysis;

namespace PathBench.Benchmarks;

/// <summary>
/// What a study spends measuring replicate images of 1024×1024, per replicate image: its error
/// against the reference (one pass), its share of the structure score (the standardisation and a
/// 2-D Fourier transform) and of the win map (tile errors and a Welch test per tile). Target: small
/// against rendering the same image (under 5 % of a render). Images are invented data: a gradient
/// reference and Gaussian noise from fixed seeds.
/// </summary>
public class StudyAnalysisBenchmarks
{
    private const int Size = 1024;
    private const int Replicates = 8;
    private ReferenceImage _reference = null!;
    private List<float[]> _a = null!;
    private List<float[]> _b = null!;

    [GlobalSetup]
    public void Setup()
    {
        int n = 3 * Size * Size;
        var value = new double[n];
        for (int i = 0; i < n; i++)
        {
            value[i] = (i % (3 * Size)) / (3.0 * Size);
        }

        _reference = new ReferenceImage(Size, Size, value, new double[n], 4096);
        _a = Noisy(1, 0.05);
        _b = Noisy(2, 0.07);
    }

    /// <summary>MSE, corrected MSE and relMSE of one replicate image.</summary>
    [Benchmark]
    public double ErrorOfOneImage() => ReplicateError.Measure(_a[0], _reference).Mse;

    /// <summary>The structure score of eight replicates (divide by 8 for one image's share).</summary>
    [Benchmark]
    public double StructureScoreOfEightReplicates() => StructureScore.Measure(_a, Size, Size)!.Score;

    /// <summary>The win map of two configurations of eight replicates each (divide by 16 for one image's share).</summary>
    [Benchmark]
    public double WinMapOfTwoConfigurations() => WinMap.Build(_reference, [_a, _b], [1.0, 1.0]).NoDifferenceFraction;

    private List<float[]> Noisy(int seed, double sigma)
    {
        var rng = new Random(seed);
        var list = new List<float[]>();
        for (int r = 0; r < Replicates; r++)
        {
            var image = new float[_reference.Value.Length];
            for (int i = 0; i < image.Length; i++)
            {
                double g = Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble());
                image[i] = (float)(_reference.Value[i] + (sigma * g));
            }

            list.Add(image);
        }

        return list;
    }
}
