using PathBench.Rendering;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis.Tests;

/// <summary>
/// The study's structure score sees the blue-noise sampler's error distribution (Heitz, Belcour,
/// Ostromoukhov, Coeurjolly &amp; Iehl 2019) on a render, and does not see structure in plain
/// Owen-scrambled Sobol's: the fence yard at 1 and 4 spp and 128x80 pixels, 16 replicates, as in
/// scenes/fence-yard-blue-noise.study.yaml.
/// </summary>
public sealed class BlueNoiseStructureTests(Xunit.Abstractions.ITestOutputHelper output)
{
    [Fact]
    public void Blue_noise_renders_score_as_structured_with_low_frequencies_missing_and_owen_sobol_as_white()
    {
        (StructureScore white, StructureScore blue) = Scores(1);

        // White noise scores below 3 in 99.9 % of cases (StructureScore's own calibration: Fisher's
        // peak test and Gamma-distributed ring means), so this check fails a correct sampler with
        // probability 0.1 % over seeds; the seeds are fixed, so the run is repeatable.
        Assert.InRange(white.Score, 0, 3);

        // Measured with these seeds: lowest ring 0.70, second 0.71, score 129 (Owen-Sobol: 1.02, score
        // 0.3; before the 1-spp ranking table, 0.74 and 91). The lowest ring's mean of Q over about 125 frequencies × 15 degrees of freedom has a
        // standard deviation of about 0.025 under repeated seeds (Gamma(1875, 1/1875)), so 0.85 is
        // more than four of them above what the committed tile gives: a false failure below 1e-5.
        Assert.True(blue.BandRatios[0] < 0.85, $"lowest-frequency ring {blue.BandRatios[0]:F3}");
        Assert.True(blue.Score > 10, $"score {blue.Score:F1}");
    }

    [Fact]
    public void At_four_samples_per_pixel_the_ranking_table_keeps_low_frequencies_below_white()
    {
        // The 4-spp ranking table (Heitz et al. 2019 keep one per count). Measured with these seeds:
        // lowest ring 0.84, the next ones 0.96-1.00, score 11.6 (Owen-Sobol: 0.96, score 1.2; with the
        // seed tile alone the lowest ring was 0.94). Only the lowest ring moves: the tables are
        // optimised pair of dimensions by pair, and at 4 spp much of a path's error comes from how
        // the pairs combine. White: below 3 in 99.9 % of cases, as above. Blue: the ring's standard
        // deviation is about 0.025 (as above), so 0.95 is more than four of them above the measured
        // 0.84: a false failure below 1e-5; the seeds are fixed.
        (StructureScore white, StructureScore blue) = Scores(4);
        Assert.InRange(white.Score, 0, 3);
        Assert.True(blue.BandRatios[0] < 0.95, $"lowest-frequency ring {blue.BandRatios[0]:F3}");
    }

    [Fact]
    public void The_blue_noise_study_file_loads_and_is_what_this_test_renders()
    {
        StudyDefinition study = StudyFile.Load(Path.Combine(RepositoryPaths.Root, "scenes", "fence-yard-blue-noise.study.yaml"));
        Assert.Equal([1, 2, 4], study.Spp);
        Assert.Equal(16, study.Replicates);
        Assert.Equal((128, 80), (study.Resolution!.Value.Width, study.Resolution.Value.Height));
        Assert.Equal(["sobol", "bluenoise"], study.Configurations.Select(c => c.Generator));
    }

    private (StructureScore White, StructureScore Blue) Scores(int spp)
    {
        StructureScore white = Score("sobol", spp);
        StructureScore blue = Score("bluenoise", spp);
        output.WriteLine($"white {white.Score:F1} {string.Join(" ", white.BandRatios.Select(b => b.ToString("F2")))}; blue {blue.Score:F1} {string.Join(" ", blue.BandRatios.Select(b => b.ToString("F2")))}");
        return (white, blue);
    }

    private static StructureScore Score(string generator, int spp)
    {
        const int Width = 128, Height = 80, Replicates = 16;
        SceneDescription description = SceneLoader.Load(Path.Combine(RepositoryPaths.Root, "scenes", "fence-yard.yaml"));
        description = description with { Camera = description.Camera with { Width = Width, Height = Height } };
        Scene scene = Scene.Build(description);
        var options = new PathTracerOptions(HemisphereStrategy.Cosine, LightStrategy.Mis, description.Render.MaxDepth, RussianRoulette: true);
        var images = new List<float[]>();
        for (int k = 0; k < Replicates; k++)
        {
            PointSampler sampler = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.Owen, false, spp, 4242 + (ulong)k), DimensionLayout.Total(options.MaxDepth));
            images.Add(Renderer.Render(new RenderJob(scene, sampler, options, 0, spp, 2)).Film.ToRgb());
        }

        return StructureScore.Measure(images, Width, Height) ?? throw new InvalidOperationException("no score");
    }
}
