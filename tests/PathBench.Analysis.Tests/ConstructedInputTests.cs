using System.Globalization;
using PathBench.Analysis;

namespace PathBench.Analysis.Tests;

/// <summary>The win map, its statistics and the structure score on inputs whose answer is known by construction.</summary>
public sealed class ConstructedInputTests
{
    [Fact]
    public void Benjamini_Hochberg_rejects_the_four_smallest_of_the_papers_fifteen_p_values()
    {
        // Benjamini & Hochberg (1995), JRSS B 57, §4.2: fifteen p-values from a clinical study; at
        // q = 0.05 the step-up procedure rejects the four smallest (Bonferroni only three).
        // Values and outcome from memory of the paper.
        double[] p = [0.0001, 0.0004, 0.0019, 0.0095, 0.0201, 0.0278, 0.0298, 0.0344, 0.0459, 0.3240, 0.4262, 0.5719, 0.6528, 0.7590, 1.0000];
        bool[] rejected = WinMap.BenjaminiHochberg(p, 0.05);
        Assert.Equal([true, true, true, true, false, false, false, false, false, false, false, false, false, false, false], rejected);
    }

    [Fact]
    public void Welch_p_values_match_scipy()
    {
        // Reference: scipy.stats.ttest_ind(a, b, equal_var=False) (Debian python3-scipy), live.
        double[] a = [1.1, 0.9, 1.4, 1.0, 1.2, 0.8];
        double[] b = [1.6, 1.3, 1.9, 1.5, 1.2];
        string output = ReferenceTools.RunPython(
            "import sys\nfrom scipy import stats\n" +
            $"a=[{string.Join(",", a.Select(v => v.ToString("R", CultureInfo.InvariantCulture)))}]\n" +
            $"b=[{string.Join(",", b.Select(v => v.ToString("R", CultureInfo.InvariantCulture)))}]\n" +
            "print(repr(float(stats.ttest_ind(a, b, equal_var=False).pvalue)))\n");
        double expected = ReferenceTools.ParseNumbers(output).Single();
        (double ma, double va) = MeanVariance(a);
        (double mb, double vb) = MeanVariance(b);
        double p = WinMap.WelchP(ma, va, a.Length, mb, vb, b.Length);
        Assert.Equal(expected, p, 1e-9);
    }

    [Fact]
    public void Win_map_gives_each_half_of_the_image_to_the_configuration_with_less_noise_there()
    {
        // Configuration A: noise σ = 1 on the left half, σ = 3 on the right; B: σ = 2 everywhere.
        // The exact image is 0, so tile MSE ≈ σ²: A wins the left (1 < 4), B the right (4 < 9).
        const int width = 128, height = 64, k = 6;
        var reference = new ReferenceImage(width, height, new double[3 * width * height], new double[3 * width * height], null);
        var random = new Random(20261203);
        List<float[]> a = [.. Enumerable.Range(0, k).Select(_ => Noise(random, width, height, x => x < width / 2 ? 1 : 3))];
        List<float[]> b = [.. Enumerable.Range(0, k).Select(_ => Noise(random, width, height, _ => 2))];
        WinMap map = WinMap.Build(reference, [a, b], [1.0, 1.0]);

        Assert.Equal(0.5, map.WinFractions[0], 6);
        Assert.Equal(0.5, map.WinFractions[1], 6);
        for (int t = 0; t < map.Winners.Count; t++)
        {
            Assert.Equal(t % map.TilesX < map.TilesX / 2 ? 0 : 1, map.Winners[t]);
        }

        // Moved to equal time: if A took 8× as long per image (MSE ∝ 1/t, factor 8: 8 > 4 on the left), B wins everywhere.
        WinMap slow = WinMap.Build(reference, [a, b], [8.0, 1.0]);
        Assert.Equal(1.0, slow.WinFractions[1], 6);
    }

    [Fact]
    public void Win_map_of_two_equal_configurations_finds_few_winners()
    {
        // Both σ = 1: every "win" is a false discovery; with Benjamini–Hochberg at q = 0.05 and all
        // nulls true, the chance of any significant tile is at most 5 % (family-wise under the
        // global null). Seeded; the check allows at most 2 of 32 tiles.
        const int width = 128, height = 64, k = 6;
        var reference = new ReferenceImage(width, height, new double[3 * width * height], new double[3 * width * height], null);
        var random = new Random(7);
        List<float[]> a = [.. Enumerable.Range(0, k).Select(_ => Noise(random, width, height, _ => 1))];
        List<float[]> b = [.. Enumerable.Range(0, k).Select(_ => Noise(random, width, height, _ => 1))];
        WinMap map = WinMap.Build(reference, [a, b], [1.0, 1.0]);
        Assert.InRange(map.Winners.Count(w => w != WinMap.NoDifference), 0, 2);
        Assert.InRange(map.NoDifferenceFraction, 30.0 / 32, 1.0);
    }

    [Fact]
    public void White_noise_scores_low_and_structured_noise_scores_high()
    {
        // Calibration of the structure score (its p-value is exact for Gaussian white noise up to
        // the periodogram's asymptotics): seeded white noise must not reach 3 (p = 0.001); the same
        // noise plus a faint periodic pattern (amplitude 0.2 σ, phase random per replicate) or
        // spatially correlated (box-blurred) noise must exceed 10.
        const int width = 64, height = 48, k = 8;
        var random = new Random(31);
        List<float[]> white = [.. Enumerable.Range(0, k).Select(_ => Noise(random, width, height, _ => 1))];
        StructureScore w = StructureScore.Measure(white, width, height)!;
        Assert.InRange(w.Score, 0, 3);

        List<float[]> periodic = [.. white.Select(img => AddWave(img, width, height, 0.2, random.NextDouble() * 2 * Math.PI))];
        StructureScore p = StructureScore.Measure(periodic, width, height)!;
        Assert.True(p.Score > 10, $"periodic pattern scored {p.Score}");
        Assert.Equal(5.0 / width, Math.Abs(p.PeakFrequency.X), 9);

        List<float[]> blotchy = [.. white.Select(img => Blur(img, width, height))];
        StructureScore b = StructureScore.Measure(blotchy, width, height)!;
        Assert.True(b.Score > 10, $"correlated noise scored {b.Score}");
        Assert.True(b.BandRatios[0] > 1.5, "the excess is at low frequencies");
    }

    [Fact]
    public void A_constant_region_is_not_mistaken_for_structure()
    {
        // Half the image a constant sky (0.5, 0.6, 0.7) in every replicate, half white noise. The
        // mean of six equal luminances need not round back to the value (common practice: floating
        // point), which once gave the sky a spread of 1e-17 and one large, identical z: a
        // "structure" of score 300 in noise that is white. Seeded; must stay below 3.
        const int width = 48, height = 32, k = 6;
        var random = new Random(5);
        List<float[]> images = [.. Enumerable.Range(0, k).Select(_ => Noise(random, width, height, _ => 0.1))];
        foreach (float[] image in images)
        {
            for (int p = 0; p < width * height / 2; p++)
            {
                image[3 * p] = 0.5f;
                image[(3 * p) + 1] = 0.6f;
                image[(3 * p) + 2] = 0.7f;
            }
        }

        Assert.InRange(StructureScore.Measure(images, width, height)!.Score, 0, 3);
    }

    [Fact]
    public void Structure_score_needs_two_replicates()
    {
        Assert.Null(StructureScore.Measure([new float[3 * 16 * 16]], 16, 16));
    }

    private static (double Mean, double Variance) MeanVariance(double[] v)
    {
        double m = v.Average();
        return (m, v.Sum(x => (x - m) * (x - m)) / (v.Length - 1));
    }

    /// <summary>Grey Gaussian noise (Box–Muller) with a per-column σ; the three channels equal.</summary>
    private static float[] Noise(Random random, int width, int height, Func<int, double> sigma)
    {
        var data = new float[3 * width * height];
        for (int y = 0; y < height; y++)
        {
            for (int x = 0; x < width; x++)
            {
                double g = Math.Sqrt(-2 * Math.Log(1 - random.NextDouble())) * Math.Cos(2 * Math.PI * random.NextDouble());
                float v = (float)(g * sigma(x));
                int i = 3 * ((y * width) + x);
                data[i] = data[i + 1] = data[i + 2] = v;
            }
        }

        return data;
    }

    /// <summary>Adds amplitude·sin(2π·5x/width + phase): five cycles across the image.</summary>
    private static float[] AddWave(float[] image, int width, int height, double amplitude, double phase)
    {
        var data = (float[])image.Clone();
        for (int y = 0; y < height; y++)
        {
            for (int x = 0; x < width; x++)
            {
                float wave = (float)(amplitude * Math.Sin((2 * Math.PI * 5 * x / width) + phase));
                for (int c = 0; c < 3; c++)
                {
                    data[(3 * ((y * width) + x)) + c] += wave;
                }
            }
        }

        return data;
    }

    /// <summary>A 3×3 box blur with wrap-around: white noise made spatially correlated (low-pass).</summary>
    private static float[] Blur(float[] image, int width, int height)
    {
        var data = new float[image.Length];
        for (int y = 0; y < height; y++)
        {
            for (int x = 0; x < width; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    float sum = 0;
                    for (int dy = -1; dy <= 1; dy++)
                    {
                        for (int dx = -1; dx <= 1; dx++)
                        {
                            int xx = (x + dx + width) % width, yy = (y + dy + height) % height;
                            sum += image[(3 * ((yy * width) + xx)) + c];
                        }
                    }

                    data[(3 * ((y * width) + x)) + c] = sum / 9;
                }
            }
        }

        return data;
    }
}
