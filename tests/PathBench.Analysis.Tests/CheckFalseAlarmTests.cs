using MathNet.Numerics.Distributions;
using PathBench.Analysis.Checks;
using PathBench.Imaging;

namespace PathBench.Analysis.Tests;

/// <summary>
/// The false-alarm rate of the check's tests, measured: an unbiased estimator run through the same
/// assertions with many independent seeds must fail about as often as the stated α, not more; a
/// biased one must fail nearly always. The estimator is synthetic so that hundreds of runs take
/// a second: per pixel the mean of N uniform samples (the exact value 1/2, variance 1/(12N)), the
/// closed form of the uniform-hemisphere plane in <see cref="StudyTheoryTests"/>.
/// </summary>
public sealed class CheckFalseAlarmTests
{
    private const int Width = 32, Height = 32, Spp = 4, Replicates = 6, Runs = 400;

    [Fact]
    public void An_unbiased_estimator_fails_no_more_often_than_alpha()
    {
        // α = 0.05 per run, 400 runs: failures ~ Binomial(400, ≤ 0.05), mean ≤ 20. The check's tests
        // are conservative (Student's t, a channel-variance bound), so fewer is expected. The test
        // fails when P(X ≥ observed | p = 0.05) < 0.001 (one-sided binomial test): a correct
        // implementation then fails this test with probability below 0.001, and the seeds are fixed.
        const double alpha = 0.05;
        var unbiased = new Assertion("unbiased", 0, alpha);
        var mse = new Assertion("mse_at_most", 1.0 / (12 * Spp), alpha); // the true MSE: H0 holds with equality, the hardest case
        CheckCase c = Case([unbiased, mse]);
        int[] failures = new int[2];
        for (int run = 0; run < Runs; run++)
        {
            IReadOnlyList<Verdict> verdicts = Verdicts.Decide(c, Measure(new Random(1000 + run), bias: 0), null);
            for (int i = 0; i < 2; i++)
            {
                failures[i] += verdicts[i].Passed ? 0 : 1;
            }
        }

        foreach (int f in failures)
        {
            double pAtLeast = 1 - Binomial.CDF(alpha, Runs, f - 1);
            Assert.True(pAtLeast >= 0.001, $"{f} failures in {Runs} runs at α = {alpha}: P(X ≥ {f}) = {pAtLeast:G3}");
        }

        // The MSE test is exact at the boundary, so its rate should be near α, not near 0
        // (with 400 runs, below 5 failures has probability under 1e-4 when the rate is 0.05).
        Assert.InRange(failures[1], 5, 40);
    }

    [Fact]
    public void A_bias_of_three_percent_is_caught_in_nearly_every_run()
    {
        // The same estimator plus 0.015 (3 % of the value 1/2). Per pixel the replicate mean has
        // variance 1/48/6; over the whole 32×32 image the summed bias is 0.015·1024 ≈ 15.4 against
        // a standard error √(1024/288) ≈ 1.89: z ≈ 8.1 with about 5000 effective degrees of freedom,
        // p ≈ 1e-15, far below α = 0.001 even after the Šidák adjustment over 5 tests. It must be
        // caught in at least 95 of 100 runs (a 1 % bias, z ≈ 2.7, is at the edge of this size's power).
        var unbiased = new Assertion("unbiased", 0, CheckSuiteFile.DefaultAlpha);
        CheckCase c = Case([unbiased]);
        int caught = 0;
        for (int run = 0; run < 100; run++)
        {
            caught += Verdicts.Decide(c, Measure(new Random(5000 + run), bias: 0.015), null)[0].Passed ? 0 : 1;
        }

        Assert.InRange(caught, 95, 100);
    }

    private static CheckCase Case(IReadOnlyList<Assertion> assertions) =>
        new("synthetic", new ImagesSource(new Dictionary<int, IReadOnlyList<string>>(), "test"), [Spp], [.. Enumerable.Range(1, Replicates).Select(i => (ulong)i)],
            new ReferenceSource(null, "exact"), assertions, "test");

    /// <summary>K replicate images: each value the mean of <see cref="Spp"/> uniforms, plus <paramref name="bias"/>; the reference is exactly 1/2.</summary>
    private static CaseMeasurements Measure(Random random, double bias)
    {
        int values = 3 * Width * Height;
        var value = new double[values];
        Array.Fill(value, 0.5);
        var reference = new ReferenceImage(Width, Height, value, new double[values], null);
        var errors = new List<ReplicateError>();
        var moments = new PixelMoments(values);
        var final = new List<float[]>();
        for (int k = 0; k < Replicates; k++)
        {
            var image = new float[values];
            for (int p = 0; p < Width * Height; p++)
            {
                double sum = 0;
                for (int s = 0; s < Spp; s++)
                {
                    sum += random.NextDouble();
                }

                // Grey: the three channels carry the same estimate, as a grey scene would.
                image[3 * p] = image[(3 * p) + 1] = image[(3 * p) + 2] = (float)((sum / Spp) + bias);
            }

            errors.Add(ReplicateError.Measure(image, reference));
            moments.Add(image);
            final.Add(image);
        }

        return new CaseMeasurements(reference, new Dictionary<int, IReadOnlyList<ReplicateError>> { [Spp] = errors }, new Dictionary<int, PixelMoments> { [Spp] = moments }, final, 0);
    }
}
