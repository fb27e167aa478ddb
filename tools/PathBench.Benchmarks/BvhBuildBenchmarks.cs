using BenchmarkDotNet.Attributes;
using PathBench.Rendering.Benchmarking;
using PathBench.Rendering.Geometry;

namespace PathBench.Benchmarks;

/// <summary>
/// The BVH build on <c>pathbench bench</c>'s 1 032 192-triangle room (binned SAH, Wald 2007, collapsed to
/// eight-wide nodes, with the triangles' hit records), on one thread and on all cores; the memory
/// diagnoser shows what one build allocates. Target (issue 12): at least 2 M triangles/s, about 0.52 s
/// a build of this room.
/// </summary>
public class BvhBuildBenchmarks
{
    private Primitive[] _primitives = null!;

    /// <summary>Build threads (0: all cores).</summary>
    [Params(1, 0)]
    public int Threads { get; set; }

    [GlobalSetup]
    public void Setup() => _primitives = BenchScenes.Create(BenchScenes.TessellatedRoom, 16, 16).Bvh.Primitives.ToArray();

    [Benchmark]
    public int Build() => new Bvh(_primitives, Threads).NodeCount;
}
