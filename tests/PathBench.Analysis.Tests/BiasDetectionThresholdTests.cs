using PathBench.Analysis.Checks;
using Xunit.Abstractions;

namespace PathBench.Analysis.Tests;

/// <summary>
/// The smallest bias <c>unbiased</c> detects at the demo settings of scenes/checks.md — an <c>images:</c>
/// case of 8 replicates at 16 spp, 80×60 pixels, α = 0.001 — measured by sweeping an additive bias over
/// the images of <see cref="SyntheticRenderer"/> (exact value 0.5; for this constant image a
/// multiplicative bias b is the additive 0.5·b). The figure is in scenes/checks.md; this test prints the
/// power curve (run it with <c>--logger "console;verbosity=detailed"</c>).
/// <para>
/// Prediction (normal approximation): the whole-image z has standard error se = σ/√(P·K) with
/// σ = √(1/(12·16)), P = 4800 pixels, K = 8, so se ≈ 3.68e-4; the test rejects when the smallest of
/// 21 p-values (20 tiles of 16×16 and the image) is below the Šidák level 1 − 0.999^(1/21) ≈ 4.8e-5,
/// |z| > 4.07; 90 % power needs a mean z of 4.07 + 1.28 (the normal quantile) = 5.35, δ₉₀ ≈ 5.35·se ≈
/// 0.00197 (0.39 % of the value). The tiles add a little power, Student's t takes a little away.
/// </para>
/// </summary>
public sealed class BiasDetectionThresholdTests(ITestOutputHelper output)
{
    private const int Runs = 200, Replicates = 8;

    [Fact]
    public void The_smallest_bias_detected_with_ninety_percent_power_is_the_predicted_one()
    {
        // No bias, then 0.0010 … 0.0025 in steps of 0.0001 (0.2 … 0.5 % of the value).
        double[] biases = [0, .. Enumerable.Range(10, 16).Select(i => i * 0.0001)];
        int[] caught = new int[biases.Length];
        ReferenceImage exact = SyntheticRenderer.Exact(SyntheticRenderer.Width, SyntheticRenderer.Height);
        var c = new CheckCase("demo", new ImagesSource(new Dictionary<int, IReadOnlyList<string>>(), "test"), [SyntheticRenderer.Spp],
            [.. Enumerable.Range(1, Replicates).Select(k => (ulong)k)], new ReferenceSource(null, "exact"), [new Assertion("unbiased", 0, CheckSuiteFile.DefaultAlpha)], "test");
        for (int run = 0; run < Runs; run++)
        {
            float[][] images = [.. Enumerable.Range(0, Replicates).Select(k => SyntheticRenderer.Image(new Random((run * Replicates) + k + 31)))];
            for (int b = 0; b < biases.Length; b++)
            {
                float shift = (float)biases[b];
                IReadOnlyList<float[]> shifted = [.. images.Select(i => i.Select(v => v + shift).ToArray())];
                var m = SyntheticRenderer.Measure(exact, new Dictionary<int, IReadOnlyList<float[]>> { [SyntheticRenderer.Spp] = shifted });
                caught[b] += Verdicts.Decide(c, m, null).Single().Passed ? 0 : 1;
            }
        }

        for (int b = 0; b < biases.Length; b++)
        {
            output.WriteLine(FormattableString.Invariant($"bias {biases[b]:F4} ({biases[b] / 0.5:P2} of the value): caught in {caught[b]} of {Runs}"));
        }

        // With no bias the false-alarm rate is α = 0.001: over 200 runs at most 2 (P(X ≥ 3) ≈ 1.1e-3).
        Assert.InRange(caught[0], 0, 2);

        // Power grows with the bias (up to the runs' binomial noise, sd ≤ 0.035 at 200 runs).
        for (int b = 1; b < biases.Length; b++)
        {
            Assert.True(caught[b] >= caught[b - 1] - 15, FormattableString.Invariant($"power fell from {caught[b - 1]} to {caught[b]} at {biases[b]}"));
        }

        // The smallest swept bias caught in at least 90 % of the runs: within a grid step of the prediction.
        double threshold = biases.First(v => caught[Array.IndexOf(biases, v)] >= 0.9 * Runs);
        output.WriteLine(FormattableString.Invariant($"smallest bias with ≥ 90 % power: {threshold:F4} (predicted 0.00197)"));
        Assert.InRange(threshold, 0.0017, 0.0022);
    }
}
