using PathBench.Analysis.Checks;
using PathBench.Imaging;
using PathBench.Rendering;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis.Tests;

/// <summary>
/// <c>pathbench check</c>'s assertions on renders made with deliberately broken samplers
/// (<see cref="BrokenSamplers"/>, test-only, injected as <see cref="PointSampler"/> instances into the
/// renderer) and on an external renderer's images that carry a small bias (an <c>images:</c> case run
/// end to end from files).
/// <para>
/// The scene has a known answer: a diffuse plane (albedo 0.5) under a uniform environment of radiance 1,
/// one bounce, uniform hemisphere sampling, BSDF sampling only. A sample is 1 − u for u the first
/// coordinate of the direction pair, so the exact pixel value is 0.5 and jittered sampling has
/// MSE = 1/(12N²) (see <see cref="StudyTheoryTests"/>): slope −2, the stratified rate for smooth
/// integrands (Pilleboue et al. 2015); independent points give 1/(12N), slope −1.
/// </para>
/// <para>
/// The correct sampler and each broken one render the same <see cref="Sets"/> sets of K = 8 seeds at
/// 4, 16 and 64 spp. Each assertion's false-failure rate is its α = 0.001 (by construction of its test,
/// measured in <see cref="CheckFalseAlarmTests"/>); over 10 sets at most one failure of the correct sampler
/// per assertion is allowed (P(X ≥ 2 | n = 10, p = 0.001) ≈ 4.5e-5). Power is measured over the sets.
/// </para>
/// </summary>
public sealed class CheckBrokenSamplerTests
{
    private const int Size = 32, Replicates = 8, Sets = 10;
    private static readonly int[] SppLadder = [4, 16, 64];

    private static readonly Scene Plane = Scene.Build(SceneLoader.Parse(
        StudyTheoryTests.SceneYaml.Replace("resolution: [64, 64]", "resolution: [32, 32]", StringComparison.Ordinal), "plane.yaml", "."));

    private static PointSampler Jittered(int spp, ulong seed) =>
        SamplerCatalog.Create(new SamplerSpec("jittered", Randomization.None, false, spp, seed), DimensionLayout.Total(1));

    [Fact]
    public void One_seed_in_every_pixel_is_caught_by_the_bias_test()
    {
        // Every pixel repeats pixel (0, 0)'s points, so within a replicate every pixel has the same error.
        // The tile and image z-tests take pixels as independent: the image's summed error is then P = 1024
        // times one pixel's, against a standard error that grows as √P, so z ≈ √1024·t = 32·t with t a
        // Student t(7) draw per spp; a miss needs |t| < 4.5/32 at all three spp (each ≈ 0.1 by the t(7)
        // distribution), power ≈ 1 − 1e-3. Measured: caught in every set.
        (int correct, int caught) = Failures("unbiased", (spp, seed) => new BrokenSamplers.SameSeedInEveryPixel(Jittered(spp, seed)));
        Assert.InRange(correct, 0, 1);
        Assert.Equal(Sets, caught);
    }

    [Fact]
    public void Lost_stratification_is_caught_by_the_slope_and_the_mse_bound()
    {
        // Cells drawn independently: unbiased, but MSE 1/(12N) instead of 1/(12N²). slope_at_most −1.5
        // against a measured slope of −1 whose standard error (1024 pixels, 8 replicates) is about 0.01:
        // z ≈ 50, power 1. mse_at_most 1/(12·64²)·2 at 64 spp against a measured 1/(12·64), 32 times
        // the bound: power 1. Measured: caught in every set, both ways.
        (int correct, int caught) = Failures("slope_at_most", (spp, seed) => new BrokenSamplers.UnstratifiedJittered(new SamplerSpec("jittered", Randomization.None, false, spp, seed)));
        Assert.InRange(correct, 0, 1);
        Assert.Equal(Sets, caught);
        (correct, caught) = Failures("mse_at_most", (spp, seed) => new BrokenSamplers.UnstratifiedJittered(new SamplerSpec("jittered", Randomization.None, false, spp, seed)));
        Assert.InRange(correct, 0, 1);
        Assert.Equal(Sets, caught);
    }

    [Fact]
    public void A_slightly_non_uniform_point_set_is_caught_by_the_bias_test()
    {
        // u → u − 0.02·u(1 − u): the pixel value becomes 0.5 + 0.02/6 ≈ 0.5033, a 0.67 % bias, under a
        // quarter of one pixel's standard deviation at 16 spp (√(1/(12·256)) ≈ 0.018). Over the image at
        // 16 spp: z ≈ 0.0033·√(1024·8)/0.018 ≈ 17, against a Šidák threshold near 4.5: power ≈ 1.
        // Measured: caught in every set.
        (int correct, int caught) = Failures("unbiased", (spp, seed) => new BrokenSamplers.PushedTowardZero(Jittered(spp, seed), 0.02));
        Assert.InRange(correct, 0, 1);
        Assert.Equal(Sets, caught);
    }

    [Fact]
    public void An_external_renderers_images_with_a_one_percent_bias_fail_the_check_and_unbiased_ones_pass()
    {
        // An images: case run from files, at the demo settings (80×60, 16 spp, 8 replicates, α = 0.001):
        // "their renderer" is the synthetic estimator of BiasDetectionThresholdTests (each value the mean of
        // 16 uniforms, exact value 0.5), written as PFM. A 1 % multiplicative bias (+0.005) is 2.5 times the
        // smallest bias detected with 90 % power there (≈ 0.0020, BiasDetectionThresholdTests): z ≈ 13.6,
        // power ≈ 1. The unbiased files fail with probability α = 0.001 (fixed seed).
        using var temp = new TempFolder();
        SyntheticRenderer.WriteReference(temp.File("ref.pfm"));
        Directory.CreateDirectory(temp.File("fair"));
        Directory.CreateDirectory(temp.File("biased"));
        for (int k = 0; k < Replicates; k++)
        {
            float[] image = SyntheticRenderer.Image(new Random(900 + k));
            ImageFile.Write(temp.File($"fair/r{k}.pfm"), new RgbImage(SyntheticRenderer.Width, SyntheticRenderer.Height, image));
            ImageFile.Write(temp.File($"biased/r{k}.pfm"), new RgbImage(SyntheticRenderer.Width, SyntheticRenderer.Height, [.. image.Select(v => v * 1.01f)]));
        }

        temp.Write("suite.yaml", """
            reference: { path: ref.pfm }
            cases:
              - { name: fair, images: [ "fair/r*.pfm" ], spp: 16, assert: { unbiased: { alpha: 0.001 } } }
              - { name: biased, images: [ "biased/r*.pfm" ], spp: 16, assert: { unbiased: { alpha: 0.001 } } }
            """);
        CheckResult result = CheckRun.Run(CheckSuiteFile.Load(temp.File("suite.yaml")), temp.File("work"), 2, null);
        Verdict fair = result.Verdicts.Single(v => v.Case == "fair"), biased = result.Verdicts.Single(v => v.Case == "biased");
        Assert.True(fair.Passed, fair.Detail);
        Assert.False(biased.Passed, biased.Detail);
        Assert.Contains("the whole image at 16 spp", biased.Detail, StringComparison.Ordinal);
    }

    /// <summary>How many of the <see cref="Sets"/> seed sets fail <paramref name="kind"/>: the correct jittered sampler's, then the broken one's.</summary>
    private static (int Correct, int Broken) Failures(string kind, Func<int, ulong, PointSampler> broken)
    {
        Assertion assertion = kind switch
        {
            "slope_at_most" => new Assertion(kind, -1.5, CheckSuiteFile.DefaultAlpha),
            "mse_at_most" => new Assertion(kind, 2.0 / (12.0 * 64 * 64), CheckSuiteFile.DefaultAlpha),
            _ => new Assertion(kind, 0, CheckSuiteFile.DefaultAlpha),
        };
        int correct = 0, caught = 0;
        for (int set = 0; set < Sets; set++)
        {
            ulong[] seeds = [.. Enumerable.Range(1, Replicates).Select(k => (ulong)((100 * set) + k))];
            correct += Decide(assertion, seeds, Jittered) ? 0 : 1;
            caught += Decide(assertion, seeds, broken) ? 0 : 1;
        }

        return (correct, caught);
    }

    private static bool Decide(Assertion assertion, ulong[] seeds, Func<int, ulong, PointSampler> make)
    {
        var options = new PathTracerOptions(HemisphereStrategy.Uniform, LightStrategy.Bsdf, 1, RussianRoulette: false);
        var images = SppLadder.ToDictionary(spp => spp, spp => (IReadOnlyList<float[]>)[.. seeds.Select(s => Renderer.Render(new RenderJob(Plane, make(spp, s), options, 0, spp, 2)).Film.ToRgb())]);
        var c = new CheckCase("plane", new ImagesSource(new Dictionary<int, IReadOnlyList<string>>(), "test"), SppLadder, seeds, new ReferenceSource(null, "exact"), [assertion], "test");
        return Verdicts.Decide(c, SyntheticRenderer.Measure(SyntheticRenderer.Exact(Size, Size), images), null).Single().Passed;
    }
}
