using PathBench.Rendering.Benchmarking;
using PathBench.Rendering.Geometry;
using PathBench.Sampling.Warps;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Benchmarking;

public sealed class ThroughputBenchTests
{
    [Fact]
    public void Sampler_shares_cover_every_combination_and_count_what_the_renderer_asked_for()
    {
        // Tiny sizes (the figures themselves are measured by `pathbench bench`, never asserted here):
        // one share per generator × randomization, each with the batches its recorded frame asked for.
        BenchReport report = ThroughputBench.Run("furnished-room", 1, new BenchSizes(8, 6, 1, 8, 4, 1), samplerShares: true);
        Assert.Equal(ThroughputBench.Combinations().Count(), report.SamplerShares.Count);
        int combinations = SamplerCatalog.Generators.Sum(g => g.Randomizations.Count);
        Assert.Equal(combinations, report.SamplerShares.Count);
        Assert.All(report.SamplerShares, s =>
        {
            // Every sample asks at least for its film position, one pair per sample of the 8 × 6 × 4 frame.
            Assert.True(s.Calls > 0 && s.Coordinates >= 2 * 8 * 6 * 4, $"{s.Generator}/{s.Randomize}: {s.Calls} batches, {s.Coordinates} coordinates");
            Assert.True(s.FrameSeconds > 0 && s.SamplerSeconds > 0);
        });
    }

    [Fact]
    public void Thread_use_is_measured_for_every_all_threads_figure()
    {
        // The figures themselves vary with the machine and are never asserted; what is checked is that
        // each all-threads figure carries the process CPU time of its runs (not the NaN of no measurement),
        // and that the two ratios follow their definitions on that data.
        BenchReport report = ThroughputBench.Run("furnished-room", 2, new BenchSizes(16, 12, 2, 8, 4, 1), samplerShares: false);
        foreach ((string what, ThreadUse use) in new[] { ("primary", report.Primary.Use), ("incoherent", report.Incoherent.Use), ("render", report.Render.Use) })
        {
            Assert.True(use.Threads == 2, what);
            Assert.True(use.WallOne > 0 && use.WallAll > 0 && use.CpuOne >= 0 && use.CpuAll >= 0, $"{what}: {use}");
            Assert.Equal(use.CpuAll / use.CpuOne, use.CpuRatio);
            Assert.Equal(use.CpuAll / (2 * use.WallAll), use.Busy);
        }
    }

    [Fact]
    public void Thread_use_ratios_on_a_worked_example()
    {
        // Worked example (by hand): one thread 10 s wall and 10 s CPU; two threads 5.5 s wall and
        // 10.5 s CPU. The pair did 5 % more CPU work (ratio 1.05) and kept the two processors busy
        // 10.5 / 11 = 95.45 % of the time; scaling 10 / 5.5 = 1.818 = 2 × 0.9545 × 1 / 1.05.
        var use = new ThreadUse(2, 10, 10, 5.5, 10.5);
        Assert.Equal(1.05, use.CpuRatio, 12);
        Assert.Equal(10.5 / 11, use.Busy, 12);
        Assert.Equal(10 / 5.5, 2 * use.Busy * (use.CpuOne / use.WallOne) / use.CpuRatio, 12);
        Assert.True(double.IsNaN(ThreadUse.Unmeasured.CpuRatio));
    }

    [Fact]
    public void Sampler_shares_of_a_selection_are_those_only_in_its_order()
    {
        // `pathbench bench --share-of`: the named combinations and nothing else (tiny sizes, as above).
        (string, string)[] chosen = [("halton", "digit-permutation"), ("random", "none")];
        BenchReport report = ThroughputBench.Run("furnished-room", 1, new BenchSizes(8, 6, 1, 8, 4, 1), chosen);
        Assert.Equal(chosen, report.SamplerShares.Select(s => (s.Generator, s.Randomize)).ToArray());
        Assert.Empty(ThroughputBench.Run("furnished-room", 1, new BenchSizes(8, 6, 1, 8, 4, 1), Array.Empty<(string, string)>()).SamplerShares);
    }

    [Theory]
    [InlineData(4)]
    [InlineData(10)]
    [InlineData(32)]
    public void The_tessellated_spheres_are_closed_meshes_of_the_stated_size(int slices)
    {
        // Euler's polyhedron formula V − E + F = 2 for each closed surface of sphere topology, so 128 for
        // the room's 64 spheres, with every edge shared by exactly two triangles (a closed, manifold mesh).
        // Vertices are identified by their exact coordinates: the mesh repeats a shared vertex bit for bit.
        Scene scene = BenchScenes.Create(BenchScenes.TessellatedRoom, 8, 6, slices);
        var triangles = scene.Bvh.Primitives.ToArray().Where(p => p.Kind == PrimitiveKind.Triangle).ToList();
        Assert.Equal(BenchScenes.TessellatedTriangles(slices), triangles.Count);
        var ids = new Dictionary<Vec3d, int>();
        var edges = new Dictionary<(int, int), int>();
        foreach (Primitive t in triangles)
        {
            int[] v = [Id(t.A), Id(t.B), Id(t.C)];
            for (int k = 0; k < 3; k++)
            {
                (int a, int b) = (v[k], v[(k + 1) % 3]);
                var key = a < b ? (a, b) : (b, a);
                edges[key] = edges.GetValueOrDefault(key) + 1;
            }
        }

        Assert.All(edges, e => Assert.Equal(2, e.Value));
        Assert.Equal(2 * 64, ids.Count - edges.Count + triangles.Count);

        int Id(Vec3d p) => ids.TryGetValue(p, out int id) ? id : ids[p] = ids.Count;
    }

    [Theory]
    [InlineData(3)]
    [InlineData(2)]
    [InlineData(2050)]
    public void Sphere_slices_outside_the_range_or_odd_are_refused(int slices) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => BenchScenes.Create(BenchScenes.TessellatedRoom, 8, 6, slices));
}
