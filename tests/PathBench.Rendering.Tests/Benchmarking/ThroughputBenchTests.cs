using PathBench.Rendering.Benchmarking;
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
    public void Sampler_shares_of_a_selection_are_those_only_in_its_order()
    {
        // `pathbench bench --share-of`: the named combinations and nothing else (tiny sizes, as above).
        (string, string)[] chosen = [("halton", "digit-permutation"), ("random", "none")];
        BenchReport report = ThroughputBench.Run("furnished-room", 1, new BenchSizes(8, 6, 1, 8, 4, 1), chosen);
        Assert.Equal(chosen, report.SamplerShares.Select(s => (s.Generator, s.Randomize)).ToArray());
        Assert.Empty(ThroughputBench.Run("furnished-room", 1, new BenchSizes(8, 6, 1, 8, 4, 1), Array.Empty<(string, string)>()).SamplerShares);
    }
}
