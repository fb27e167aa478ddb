using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Generators;

/// <summary>
/// Plug-in generators live in the catalog's scope, never in its static table: what one invocation adds
/// is gone when its scope ends and never seen by another (the tests run invocations in parallel).
/// </summary>
public sealed class CatalogScopeTests
{
    private static GeneratorInfo Half(string name) =>
        new(name, "test only: every coordinate 1/2", false, 2, [Randomization.None, Randomization.CranleyPatterson], Randomization.None, "test only", s => new HalfSampler(s));

    private sealed class HalfSampler(SamplerSpec spec) : PointSampler(spec)
    {
        public override int MaxDimensions => 2;

        public override double Sample(ulong pixel, uint index, int dimension) =>
            PointRandomizations.Apply(Spec.Randomize, 0.5, pixel, dimension);
    }

    [Fact]
    public void A_generator_added_in_a_scope_is_gone_when_the_scope_ends()
    {
        using (SamplerCatalog.OpenScope())
        {
            SamplerCatalog.Add("plug-in test", "test 1", [Half("half")]);
            GeneratorInfo g = SamplerCatalog.Find("half");
            Assert.Equal("plug-in test", g.Origin);
            Assert.Equal("test 1", g.Provenance);
            Assert.Contains(SamplerCatalog.Generators, x => x.Name == "half");
            PointSampler s = SamplerCatalog.Create(new SamplerSpec("half", Randomization.None, false, 4, 0), 2);
            Assert.Equal(0.5, s.Sample(s.PixelKey(1, 2), 3, 1));
            // The rotation the plug-in applies is the built-ins' (Hammersley's point 0 is the origin).
            PointSampler rotated = SamplerCatalog.Create(new SamplerSpec("half", Randomization.CranleyPatterson, false, 4, 9), 2);
            PointSampler hammersley = SamplerCatalog.Create(new SamplerSpec("hammersley", Randomization.CranleyPatterson, false, 4, 9), 2);
            ulong key = rotated.PixelKey(5, 6);
            double offset = hammersley.Sample(key, 0, 1);
            Assert.Equal(offset + 0.5 >= 1 ? offset + 0.5 - 1 : offset + 0.5, rotated.Sample(key, 0, 1));
        }

        Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Find("half"));
        Assert.DoesNotContain(SamplerCatalog.Generators, x => x.Name == "half");
    }

    [Theory]
    [InlineData("sobol", "clashes with the built-in generator")]
    [InlineData("file:x", "is not allowed")]
    [InlineData("two words", "is not allowed")]
    public void A_bad_name_is_refused_with_the_origin(string name, string expected)
    {
        using (SamplerCatalog.OpenScope())
        {
            var e = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Add("plug-in /x/y.dll", "v", [Half(name)]));
            Assert.StartsWith("plug-in /x/y.dll: generator name", e.Message, StringComparison.Ordinal);
            Assert.Contains(expected, e.Message, StringComparison.Ordinal);
        }
    }

    [Fact]
    public void Two_plugins_cannot_give_one_name()
    {
        using (SamplerCatalog.OpenScope())
        {
            SamplerCatalog.Add("plug-in a.dll", "a", [Half("half")]);
            var e = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Add("plug-in b.dll", "b", [Half("half")]));
            Assert.Equal("plug-in b.dll: generator name 'half' clashes with the one from plug-in a.dll", e.Message);
        }
    }

    [Fact]
    public void A_factory_that_throws_is_reported_as_the_plugins()
    {
        using (SamplerCatalog.OpenScope())
        {
            SamplerCatalog.Add("plug-in c.dll", "c", [Half("half") with { Create = _ => throw new InvalidOperationException("invented") }]);
            var e = Assert.Throws<SamplerSpecException>(() => SamplerCatalog.Create(new SamplerSpec("half", Randomization.None, false, 4, 0), 2));
            Assert.Equal("plug-in c.dll: generator 'half' failed to build its sampler: InvalidOperationException: invented", e.Message);
        }
    }
}
