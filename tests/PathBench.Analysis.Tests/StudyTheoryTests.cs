using PathBench.Analysis;
using PathBench.Imaging;
using PathBench.Rendering;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis.Tests;

/// <summary>
/// A study's numbers against a scene whose estimator variance is known in closed form.
/// <para>
/// The scene: a camera looking down at an infinite-looking diffuse plane (albedo a = 0.5, grey)
/// under a uniform environment of radiance L = 1, one bounce, no roulette, BSDF sampling only. The
/// exact pixel value is a·L = 0.5 everywhere (the whole upper hemisphere sees the environment).
/// With uniform hemisphere sampling (pdf 1/(2π)) one sample is f·cos θ/pdf·L = (a/π)·cos θ·2π·L =
/// 2aL·cos θ, and cos θ of a uniform direction on the hemisphere is uniform on [0, 1] (Archimedes'
/// hat-box theorem), so a sample is U ~ Uniform(0, 1) scaled by 2aL = 1: mean 1/2, variance 1/12.
/// With N independent samples a pixel's variance, and so the expected MSE against the exact value,
/// is 1/(12N). With cosine-weighted sampling (pdf cos θ/π) one sample is exactly a·L: zero variance
/// by construction (common practice; the rendering equation with a constant environment).
/// </para>
/// </summary>
public sealed class StudyTheoryTests
{
    /// <summary>The plane under a uniform environment, 64×64 (also rendered by <see cref="CheckBrokenSamplerTests"/>).</summary>
    internal const string SceneYaml = """
        camera: { position: [0, 1, 1], look_at: [0, 0, 0], fov: 30, resolution: [64, 64] }
        render: { spp: 16, max_depth: 1 }
        environment: { radiance: [1, 1, 1] }
        materials:
          grey: { type: diffuse, albedo: [0.5, 0.5, 0.5] }
        shapes:
          - { type: quad, corner: [-1000, 0, 1000], edge_u: [2000, 0, 0], edge_v: [0, 0, -2000], material: grey }
        """;

    private const double Exact = 0.5;

    private static string StudyYaml(string reference) => $$"""
        scene: scene.yaml
        reference: {{reference}}
        spp: [4, 8, 16]
        replicates: 4
        seed: 11
        configurations:
          - { name: uniform, generator: random, hemisphere: uniform, lights: bsdf, max_depth: 1, roulette: false }
          - { name: cosine, generator: random, hemisphere: cosine, lights: bsdf, max_depth: 1, roulette: false }
        """;

    /// <summary>
    /// Tolerance of an MSE averaged over P = 4096 pixels and K = 4 replicates: the grey channels
    /// move together, so P·K independent squared errors, each with variance ≈ 2σ⁴ (normal
    /// approximation of a mean of N ≥ 4 uniforms); relative standard error √(2/(P·K)) ≈ 1.1 %.
    /// Four standard errors: a false failure about once in 16,000 runs (normal tail), and the seeds are fixed.
    /// </summary>
    private const double RelativeTolerance = 4 * 0.011;

    [Fact]
    public void Mse_and_replicate_variance_match_the_closed_form_and_cosine_sampling_is_exact()
    {
        using var temp = new TempFolder();
        temp.Write("scene.yaml", SceneYaml);
        WriteConstant(temp.File("exact.pfm"), 64, 64, Exact);
        temp.Write("study.yaml", StudyYaml("{ path: exact.pfm }"));

        StudySummary summary = Run(temp);
        ConfigurationSummary uniform = summary.Configurations.Single(c => c.Configuration.Name == "uniform");
        foreach (StudyPoint p in uniform.Points)
        {
            double theory = 1.0 / (12 * p.Spp);
            Assert.InRange(p.Mse / theory, 1 - RelativeTolerance, 1 + RelativeTolerance);

            // The variance across replicates estimates the same σ²/N (here from 4 replicates per pixel,
            // averaged over 4096 pixels: relative standard error √(2/(3·4096)) ≈ 1.3 %).
            Assert.InRange(p.EstimatorVariance!.Value / theory, 1 - (4 * 0.013), 1 + (4 * 0.013));
            Assert.InRange(Math.Abs(p.BiasZ!.Value), 0, 4);
        }

        // MSE ∝ 1/N: the fitted slope is −1 (three points on the line up to the noise above).
        Assert.InRange(uniform.Slope!.Slope, -1.1, -0.9);

        ConfigurationSummary cosine = summary.Configurations.Single(c => c.Configuration.Name == "cosine");
        foreach (StudyPoint p in cosine.Points)
        {
            // Zero variance: what is left is the rounding of f·cos/pdf and of the float image.
            Assert.InRange(p.MseUncorrected, 0, 1e-12);
        }

        // At equal time the zero-variance configuration wins every tile of the image.
        int cosineIndex = summary.Configurations.ToList().IndexOf(cosine);
        Assert.Equal(1.0, summary.WinMap.WinFractions[cosineIndex], 12);
        Assert.Equal(1, summary.EqualTime.Entries[cosineIndex].Rank);
    }

    [Fact]
    public void A_noisy_reference_is_corrected_for_its_own_variance()
    {
        // The reference: the uniform estimator at 8 spp, so Var(R) = 1/96 per value, twice the MSE
        // of the 16-spp test images (1/192). Uncorrected, the MSE at 16 spp would read about three
        // times too high; corrected it must match 1/(12N). Its noise is shared by all replicates, so
        // the tolerance follows P = 4096 independent pixels: (σx² + σr²)·√2/√P ≈ 0.0156·0.022 ≈ 3.4e-4
        // on the raw squared error, ≈ 7 % of 1/192, plus the variance estimate's own noise (≈ 2 %);
        // four of those, 30 %, still far from the uncorrected error of +200 %.
        using var temp = new TempFolder();
        temp.Write("scene.yaml", SceneYaml);
        WriteNoisyReference(temp, spp: 8);
        temp.Write("study.yaml", StudyYaml("{ path: noisy.exr }"));

        StudySummary summary = Run(temp);
        Assert.True(summary.Result.Reference.HasVariance);
        Assert.InRange(summary.Result.Reference.MeanVariance * 96, 0.9, 1.1);
        StudyPoint at16 = summary.Configurations.Single(c => c.Configuration.Name == "uniform").Points[^1];
        double theory = 1.0 / (12 * 16);
        Assert.InRange(at16.Mse / theory, 0.7, 1.3);
        Assert.InRange(at16.MseUncorrected / theory, 2.5, 3.5);

        // The study says so: the reference's variance is more than 10 % of the measured MSE.
        Assert.Contains(summary.Warnings, w => w.Contains("uniform at 16 spp", StringComparison.Ordinal));
    }

    [Fact]
    public void A_rerun_takes_every_render_from_the_cache_and_gives_the_same_errors()
    {
        using var temp = new TempFolder();
        temp.Write("scene.yaml", SceneYaml);
        WriteConstant(temp.File("exact.pfm"), 64, 64, Exact);
        temp.Write("study.yaml", StudyYaml("{ path: exact.pfm }"));
        StudyDefinition study = StudyFile.Load(temp.File("study.yaml"));
        var options = new StudyRunOptions(temp.File("out"), 2, "test");
        StudyOutcome first = StudyPipeline.Run(study, options);
        StudyOutcome second = StudyPipeline.Run(study, options);

        Assert.Equal(0, first.CachedRenders);
        Assert.Equal(first.Summary.Result.Samples.Count, second.CachedRenders);
        Assert.Equal(first.Summary.Result.Samples.Select(s => s.Error), second.Summary.Result.Samples.Select(s => s.Error));
        foreach (string file in new[] { "results.csv", "summary.json", "mse-vs-spp.png", "mse-vs-spp.svg", "win-map.png", "win-map.svg", "error-uniform.png" })
        {
            Assert.True(File.Exists(Path.Combine(options.OutputDirectory, file)), file);
        }
    }

    [Fact]
    public void Jittered_sampling_of_the_linear_integrand_has_the_closed_form_error_of_stratification()
    {
        // With uniform hemisphere sampling the sample is 2aL·cos θ = 1 − u (cos θ = 1 − u in the
        // warp), linear in the direction pair's first coordinate. Jittered sampling with N = n²
        // puts one point uniformly in each cell of an n×n grid: the estimate's variance is
        // (1/N²)·Σ_cells Var(u within a cell of width 1/n) = (1/N²)·N·(1/(12n²)) = 1/(12N²). So
        // MSE = 1/(12N²) and the slope is −2, the rate of stratified sampling for smooth integrands
        // (Pilleboue et al. 2015, ACM TOG 34(4), for 2-D jittered sampling). Tolerance as above.
        using var temp = new TempFolder();
        temp.Write("scene.yaml", SceneYaml);
        WriteConstant(temp.File("exact.pfm"), 64, 64, Exact);
        temp.Write("study.yaml", """
            scene: scene.yaml
            reference: { path: exact.pfm }
            spp: [4, 16, 64]
            replicates: 4
            seed: 5
            configurations:
              - { name: jittered, generator: jittered, hemisphere: uniform, lights: bsdf, max_depth: 1, roulette: false }
            """);
        ConfigurationSummary jittered = Run(temp).Configurations.Single();
        Assert.False(jittered.Configuration.IsProgressive);
        foreach (StudyPoint p in jittered.Points)
        {
            double theory = 1.0 / (12.0 * p.Spp * p.Spp);
            Assert.InRange(p.Mse / theory, 1 - RelativeTolerance, 1 + RelativeTolerance);
        }

        Assert.InRange(jittered.Slope!.Slope, -2.1, -1.9);
        Assert.Equal(-2, jittered.Theory.Smooth);
    }

    private static StudySummary Run(TempFolder temp)
    {
        StudyDefinition study = StudyFile.Load(temp.File("study.yaml"));
        return StudyPipeline.Run(study, new StudyRunOptions(temp.File("out"), 2, "test")).Summary;
    }

    private static void WriteConstant(string path, int width, int height, double value)
    {
        var data = new float[3 * width * height];
        Array.Fill(data, (float)value);
        ImageFile.Write(path, new RgbImage(width, height, data));
    }

    private static void WriteNoisyReference(TempFolder temp, int spp)
    {
        var description = Rendering.Scenes.SceneLoader.Load(temp.File("scene.yaml"));
        Scene scene = Scene.Build(description);
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("random", Randomization.None, false, spp, 987654), DimensionLayout.Total(1));
        var options = new PathTracerOptions(HemisphereStrategy.Uniform, LightStrategy.Bsdf, 1, RussianRoulette: false);
        Film film = Renderer.Render(new RenderJob(scene, sampler, options, 0, spp, 2)).Film;
        ReferenceImage.FromFilm(film, spp).Write(temp.File("noisy.exr"));
        Assert.True(File.Exists(temp.File("noisy.variance.exr")));
    }
}
