using BenchmarkDotNet.Attributes;
using PathBench.Imaging;

namespace PathBench.Benchmarks;

/// <summary>
/// `compare` of two 4096×4096 RGB float images in memory, every metric including SSIM (no file
/// I/O). Target: under 2 s on the project's 2-core machines. The images are invented data: a
/// smooth gradient and the same with uniform noise from a fixed seed.
/// </summary>
public class CompareBenchmarks
{
    private const int Size = 4096;
    private RgbImage _reference = null!;
    private RgbImage _test = null!;

    [GlobalSetup]
    public void Setup()
    {
        _reference = new RgbImage(Size, Size);
        _test = new RgbImage(Size, Size);
        var rng = new Random(1);
        for (int y = 0; y < Size; y++)
        {
            for (int x = 0; x < Size; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    float v = (float)((x + (2 * y) + (c * 1000)) / (3.0 * Size));
                    _reference.At(x, y, c) = v;
                    _test.At(x, y, c) = v + (float)(0.1 * (rng.NextDouble() - 0.5));
                }
            }
        }
    }

    [Benchmark]
    public double CompareAllMetrics()
    {
        ComparisonReport report = ImageComparison.Compare(_reference, _test);
        return report.All.Mse + report.Ssim!.Value;
    }
}
