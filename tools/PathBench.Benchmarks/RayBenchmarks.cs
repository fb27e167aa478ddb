using BenchmarkDotNet.Attributes;
using PathBench.Rendering.Benchmarking;
using PathBench.Rendering.Geometry;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Benchmarks;

/// <summary>
/// Nanoseconds per ray of the tracing kernels, single-threaded, on <c>pathbench bench</c>'s
/// 1 032 192-triangle room: one watertight ray/triangle test (Woop, Benthin &amp; Wald 2013),
/// and closest-hit and any-hit traversal of the eight-wide BVH (256-bit single-precision slab tests, and its
/// scalar fallback) against the binary reference tree. The rays are incoherent: uniform
/// directions from points spread through the room (fixed hash, seed 21). Target (issue 12):
/// 12 M incoherent rays/s per core, about 83 ns per closest-hit query.
/// </summary>
public class RayBenchmarks
{
    private const int Rays = 4096;
    private readonly Ray[] _rays = new Ray[Rays];
    private Bvh _bvh = null!;
    private ReferenceBvh _reference = null!;
    private Primitive _triangle;

    /// <summary>Which traversal.</summary>
    [Params("wide-vector", "wide-scalar", "reference")]
    public string Traversal { get; set; } = "wide-vector";

    [GlobalSetup]
    public void Setup()
    {
        Primitive[] prims = BenchScenes.Create(BenchScenes.TessellatedRoom, 16, 16).Bvh.Primitives.ToArray();
        _bvh = new Bvh(prims) { Vectorised = Traversal == "wide-vector" };
        _reference = Traversal == "reference" ? new ReferenceBvh(prims) : null!;
        for (uint i = 0; i < Rays; i++)
        {
            var origin = new Vec3d((SampleHash.Uniform(21, i, 0) * 7.8) - 3.9, SampleHash.Uniform(21, i, 1) * 4.8 + 0.1, (SampleHash.Uniform(21, i, 2) * 7.8) - 3.9);
            _rays[i] = new Ray(origin, Warp.UniformSphere(SampleHash.Uniform(21, i, 3), SampleHash.Uniform(21, i, 4)), double.PositiveInfinity);
        }

        _triangle = Primitive.Triangle(new(-1, -1, 0), new(1, -1, 0), new(0, 1, 0), 0, -1);
    }

    [Benchmark(OperationsPerInvoke = Rays)]
    public int ClosestHit()
    {
        int hits = 0;
        foreach (Ray r in _rays)
        {
            hits += (Traversal == "reference" ? _reference.Intersect(r, out _) : _bvh.Intersect(r, out _)) ? 1 : 0;
        }

        return hits;
    }

    [Benchmark(OperationsPerInvoke = Rays)]
    public int AnyHit()
    {
        int hits = 0;
        foreach (Ray r in _rays)
        {
            hits += (Traversal == "reference" ? _reference.Occluded(r, 2.0) : _bvh.Occluded(r, 2.0)) ? 1 : 0;
        }

        return hits;
    }

    [Benchmark(OperationsPerInvoke = Rays)]
    public double RayTriangle()
    {
        double sum = 0;
        foreach (Ray r in _rays)
        {
            sum += _triangle.Intersect(r with { Origin = new Vec3d(r.Origin.X * 0.1, r.Origin.Y * 0.1, 1) }, double.PositiveInfinity) < 10 ? 1 : 0;
        }

        return sum;
    }
}
