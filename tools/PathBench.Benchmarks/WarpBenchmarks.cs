using BenchmarkDotNet.Attributes;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Benchmarks;

/// <summary>
/// Nanoseconds per warp of a point of [0, 1)² to its domain, single-threaded, for each warp of
/// <see cref="Warp"/> the path tracer and the lights use: what one bounce or one light sample pays on top of
/// making its point. The points are fixed hashes (seed 31), made before the measurement.
/// </summary>
public class WarpBenchmarks
{
    private const int Points = 4096;
    private readonly double[] _u = new double[Points], _v = new double[Points];

    /// <summary>Which warp.</summary>
    [Params("uniform-hemisphere", "cosine-hemisphere", "uniform-sphere", "concentric-disk", "uniform-triangle", "uniform-cone")]
    public string Kind { get; set; } = "cosine-hemisphere";

    [GlobalSetup]
    public void Setup()
    {
        for (uint i = 0; i < Points; i++)
        {
            _u[i] = SampleHash.Uniform(31, i, 0);
            _v[i] = SampleHash.Uniform(31, i, 1);
        }
    }

    /// <remarks>
    /// One loop per warp on purpose: a shared loop over a delegate or an interface would add an
    /// indirect call (1–2 ns, not inlined) to kernels of 2–17 ns and measure the call instead. Every
    /// component of each result goes into the sum, so the JIT cannot drop part of the warp as dead code
    /// (a first version that read one component showed 0.8–1 ns).
    /// </remarks>
    [Benchmark(OperationsPerInvoke = Points)]
    public double Warp2D()
    {
        double sum = 0;
        double[] u = _u, v = _v;
        switch (Kind)
        {
            case "uniform-hemisphere":
                for (int i = 0; i < Points; i++)
                {
                    sum += Sum(Warp.UniformHemisphere(u[i], v[i]));
                }

                break;
            case "cosine-hemisphere":
                for (int i = 0; i < Points; i++)
                {
                    sum += Sum(Warp.CosineHemisphere(u[i], v[i]));
                }

                break;
            case "uniform-sphere":
                for (int i = 0; i < Points; i++)
                {
                    sum += Sum(Warp.UniformSphere(u[i], v[i]));
                }

                break;
            case "concentric-disk":
                for (int i = 0; i < Points; i++)
                {
                    (double x, double y) = Warp.ConcentricDisk(u[i], v[i]);
                    sum += x + y;
                }

                break;
            case "uniform-triangle":
                for (int i = 0; i < Points; i++)
                {
                    (double b1, double b2) = Warp.UniformTriangle(u[i], v[i]);
                    sum += b1 + b2;
                }

                break;
            default:
                // A cone of half-angle 30°: cos 30° = √3 / 2.
                for (int i = 0; i < Points; i++)
                {
                    sum += Sum(Warp.UniformCone(u[i], v[i], 0.8660254037844386));
                }

                break;
        }

        return sum;
    }

    // Every component is used, so none of a warp's work can be dropped as dead code.
    private static double Sum(Vec3d w) => w.X + w.Y + w.Z;
}
