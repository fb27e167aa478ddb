using System.Globalization;

namespace PathBench.Imaging.Tests;

/// <summary>
/// Our metrics against numpy (MSE, relMSE, SMAPE, bias: the formulas as written in
/// ImageComparison's documentation) and scikit-image 0.19 (peak_signal_noise_ratio with an
/// explicit data_range; structural_similarity with gaussian_weights=True, sigma=1.5,
/// use_sample_covariance=False, explicit data_range, on Rec. 709 luminance), run live through
/// Debian's /usr/bin/python3 and tools/imaging/reference_metrics.py.
/// </summary>
public sealed class MetricsReferenceTests : IClassFixture<MetricsReferenceTests.Reference>
{
    private readonly Reference _reference;

    public MetricsReferenceTests(Reference reference) => _reference = reference;

    /// <summary>One synthetic pair with its settings (invented data, fixed seeds).</summary>
    public sealed record Case(string Name, RgbImage Ref, RgbImage Test, double DataRange, double Epsilon, PixelRect? Region)
    {
        public override string ToString() => Name;
    }

    public static readonly Case[] Cases = BuildCases();

    public static TheoryData<string> CaseNames => new(Cases.Select(c => c.Name));

    private static Case[] BuildCases()
    {
        RgbImage gradient = SyntheticImages.Gradient(48, 40);
        RgbImage hdr = SyntheticImages.Gradient(40, 32, scale: 8.0);
        RgbImage withNan = SyntheticImages.Noisy(gradient, 0.02, seed: 9);
        withNan.At(3, 4, 1) = float.NaN;
        withNan.At(20, 30, 0) = float.PositiveInfinity;
        RgbImage refWithInf = gradient.Clone();
        refWithInf.At(10, 10, 2) = float.NegativeInfinity;
        RgbImage imbalanced = gradient.Clone();
        for (int i = 0; i < imbalanced.Data.Length; i += 3)
        {
            imbalanced.Data[i] *= 1.2f;       // red 20 % too bright
            imbalanced.Data[i + 2] -= 0.05f;  // blue offset
        }

        return
        [
            new("noise_on_gradient", gradient, SyntheticImages.Noisy(gradient, 0.05, seed: 1), 1.0, 0.01, null),
            new("heavy_noise", gradient, SyntheticImages.Noisy(gradient, 0.3, seed: 2), 1.0, 0.01, null),
            new("hdr_fireflies_range_8", hdr, SyntheticImages.WithFireflies(SyntheticImages.Noisy(hdr, 0.2, seed: 3), 12, 500f, seed: 4), 8.0, 0.01, null),
            new("flat_offset", SyntheticImages.Flat(24, 24, 0.5f, 0.5f, 0.5f), SyntheticImages.Flat(24, 24, 0.6f, 0.55f, 0.5f), 1.0, 0.01, null),
            new("dark_negatives_eps_0.001", SyntheticImages.Uniform(33, 21, 0, 0.02, seed: 5), SyntheticImages.Uniform(33, 21, -0.01, 0.03, seed: 6), 1.0, 0.001, null),
            new("odd_size_uniform", SyntheticImages.Uniform(37, 23, 0, 1, seed: 7), SyntheticImages.Uniform(37, 23, 0, 1, seed: 8), 1.0, 0.01, null),
            new("channel_imbalance", gradient, imbalanced, 1.0, 0.01, null),
            new("identical", gradient, gradient.Clone(), 1.0, 0.01, null),
            new("roi_inside", gradient, SyntheticImages.Noisy(gradient, 0.1, seed: 10), 1.0, 0.01, new PixelRect(5, 7, 30, 20)),
            new("roi_too_small_for_ssim", gradient, SyntheticImages.Noisy(gradient, 0.1, seed: 11), 1.0, 0.01, new PixelRect(40, 2, 8, 30)),
            new("nonfinite_test", gradient, withNan, 1.0, 0.01, null),
            new("nonfinite_reference", refWithInf, SyntheticImages.Noisy(gradient, 0.02, seed: 12), 1.0, 0.01, null),
        ];
    }

    [Theory]
    [MemberData(nameof(CaseNames))]
    public void Pixel_metrics_equal_numpy(string name)
    {
        (Case c, ComparisonReport report, IReadOnlyDictionary<string, double> py) = Evaluate(name);
        Assert.Equal((long)py["nonfinite"], report.NonFinitePixels);
        Tolerance.Close(py["mse"], report.All.Mse, $"{c.Name} mse");
        Tolerance.Close(py["rmse"], report.All.Rmse, $"{c.Name} rmse");
        Tolerance.Close(py["relmse"], report.All.RelMse, $"{c.Name} relmse");
        Tolerance.Close(py["smape"], report.All.Smape, $"{c.Name} smape");
        Tolerance.Close(py["bias"], report.All.Bias, $"{c.Name} bias");
        Tolerance.Close(py["mse_r"], report.R.Mse, $"{c.Name} mse R");
        Tolerance.Close(py["mse_g"], report.G.Mse, $"{c.Name} mse G");
        Tolerance.Close(py["mse_b"], report.B.Mse, $"{c.Name} mse B");
        Tolerance.Close(py["bias_r"], report.R.Bias, $"{c.Name} bias R");
        Tolerance.Close(py["bias_b"], report.B.Bias, $"{c.Name} bias B");
        Tolerance.Close(py["mse_y"], report.Y.Mse, $"{c.Name} mse Y");
        Tolerance.Close(py["relmse_y"], report.Y.RelMse, $"{c.Name} relmse Y");
    }

    [Theory]
    [MemberData(nameof(CaseNames))]
    public void Psnr_and_ssim_equal_scikit_image(string name)
    {
        (Case c, ComparisonReport report, IReadOnlyDictionary<string, double> py) = Evaluate(name);
        // With excluded pixels the reference PSNR is numpy's 10·log10(L²/MSE) over the kept pixels and the
        // reference SSIM is skimage's SSIM map averaged over the windows that touch no excluded pixel.
        Tolerance.Close(py["psnr"], report.All.Psnr, $"{c.Name} psnr");
        if (report.NonFinitePixels == 0)
        {
            Tolerance.Close(py["psnr_y"], report.Y.Psnr, $"{c.Name} psnr Y");
        }

        if (py.TryGetValue("ssim", out double ssim))
        {
            Assert.NotNull(report.Ssim);

            // SSIM subtracts μ² from E[x²]: cancellation costs digits, so 1e-7 relative (common practice).
            Tolerance.Close(ssim, report.Ssim!.Value, $"{c.Name} ssim", rel: 1e-7, abs: 1e-9);
        }
        else
        {
            Assert.Null(report.Ssim);
        }
    }

    private (Case, ComparisonReport, IReadOnlyDictionary<string, double>) Evaluate(string name)
    {
        Case c = Cases.Single(k => k.Name == name);
        ComparisonReport report = ImageComparison.Compare(
            c.Ref, c.Test, new ComparisonOptions { DataRange = c.DataRange, Epsilon = c.Epsilon, Region = c.Region });
        return (c, report, _reference.Values[name]);
    }

    /// <summary>Runs the Python reference once for every case.</summary>
    public sealed class Reference
    {
        private readonly Lazy<Dictionary<string, Dictionary<string, double>>> _values = new(Compute);

        public IReadOnlyDictionary<string, Dictionary<string, double>> Values => _values.Value;

        private static Dictionary<string, Dictionary<string, double>> Compute()
        {
            using var dir = new TempFolder();
            var manifest = new List<string>();
            foreach (Case c in Cases)
            {
                SyntheticImages.WriteRaw(dir.File(c.Name + ".ref.bin"), c.Ref);
                SyntheticImages.WriteRaw(dir.File(c.Name + ".test.bin"), c.Test);
                PixelRect r = c.Region ?? PixelRect.Full(c.Ref.Width, c.Ref.Height);
                manifest.Add(FormattableString.Invariant(
                    $"{c.Name} {c.Ref.Width} {c.Ref.Height} {c.DataRange:R} {c.Epsilon:R} {r.X} {r.Y} {r.Width} {r.Height}"));
            }

            File.WriteAllLines(dir.File("manifest.txt"), manifest);
            ReferenceTools.Result result = ExternalTool.RunPythonScript("reference_metrics.py", dir.Path);
            var values = new Dictionary<string, Dictionary<string, double>>();
            foreach (string line in result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries))
            {
                string[] p = line.Split(' ');
                double v = p[2] switch
                {
                    "inf" => double.PositiveInfinity,
                    "-inf" => double.NegativeInfinity,
                    _ => double.Parse(p[2], CultureInfo.InvariantCulture),
                };
                if (!values.TryGetValue(p[0], out Dictionary<string, double>? perCase))
                {
                    values[p[0]] = perCase = [];
                }

                perCase[p[1]] = v;
            }

            return values;
        }
    }
}
