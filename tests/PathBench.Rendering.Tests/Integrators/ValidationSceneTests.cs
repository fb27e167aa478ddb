using System.Globalization;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;
using static PathBench.Rendering.Tests.Integrators.RenderFixtures;

namespace PathBench.Rendering.Tests.Integrators;

/// <summary>
/// Every scene in scenes/validation states its expected image mean and the source in its
/// comments (<c># expected: V</c>, <c># source: …</c>). Each is loaded from its YAML file,
/// rendered with each light strategy as K = 8 independent replicates, and compared at z = 4.5
/// (false-failure probability about 3e-3 per check with Student's t on 7 dof).
/// </summary>
public sealed class ValidationSceneTests
{
    private static string Folder => Path.Combine(RepositoryPaths.Scenes, "validation");

    public static TheoryData<string> Scenes => new(Directory.GetFiles(Folder, "*.yaml").Select(Path.GetFileName).Order(StringComparer.Ordinal)!);

    [Theory]
    [MemberData(nameof(Scenes))]
    public void Rendered_mean_matches_the_stated_expectation(string file)
    {
        string path = Path.Combine(Folder, file);
        string[] lines = File.ReadAllLines(path);
        string? expectedLine = lines.FirstOrDefault(l => l.StartsWith("# expected:", StringComparison.Ordinal));
        Assert.True(expectedLine is not null, $"{file} states no '# expected:' value");
        Assert.Contains(lines, l => l.StartsWith("# source:", StringComparison.Ordinal));
        double expected = double.Parse(expectedLine!["# expected:".Length..], NumberStyles.Float, CultureInfo.InvariantCulture);

        SceneDescription description = SceneLoader.Load(path);
        Scene scene = Scene.Build(description);
        foreach (LightStrategy l in new[] { LightStrategy.Bsdf, LightStrategy.Nee, LightStrategy.Mis })
        {
            var options = new PathTracerOptions(HemisphereStrategy.Cosine, l, description.Render.MaxDepth, RussianRoulette: true);
            var estimate = Replicated(seed => Render(scene, "sobol", "owen", description.Render.Spp, seed, options), 8);
            AssertWithin(estimate, expected, 4.5, 1e-4 * expected, $"{file} {l}");
        }
    }
}
