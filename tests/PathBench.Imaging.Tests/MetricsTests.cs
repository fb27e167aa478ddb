namespace PathBench.Imaging.Tests;

/// <summary>Properties of the metrics that need no external reference: determinism, definitions at their edges.</summary>
public sealed class MetricsTests
{
    [Fact]
    public async Task Results_do_not_depend_on_the_thread_count()
    {
        // 300x200 spans several row blocks of both the pixel sums and SSIM.
        RgbImage r = SyntheticImages.Gradient(300, 200, scale: 3);
        RgbImage t = SyntheticImages.WithFireflies(SyntheticImages.Noisy(r, 0.2, seed: 5), 40, 1000f, seed: 6);
        t.At(150, 100, 1) = float.NaN;
        ComparisonReport parallel = ImageComparison.Compare(r, t);

        // Parallel.For schedules on TaskScheduler.Current: an exclusive scheduler runs it on one thread at a time.
        var exclusive = new ConcurrentExclusiveSchedulerPair().ExclusiveScheduler;
        ComparisonReport serial = await Task.Factory.StartNew(() => ImageComparison.Compare(r, t), CancellationToken.None, TaskCreationOptions.None, exclusive);
        Assert.Equal(parallel, serial with { Options = parallel.Options });
        Assert.Equal(BitConverter.DoubleToInt64Bits(parallel.Ssim!.Value), BitConverter.DoubleToInt64Bits(serial.Ssim!.Value));
        Assert.Equal(BitConverter.DoubleToInt64Bits(parallel.All.RelMse), BitConverter.DoubleToInt64Bits(serial.All.RelMse));
    }

    [Fact]
    public void Identical_images_have_zero_error_infinite_psnr_and_ssim_one()
    {
        RgbImage r = SyntheticImages.Noisy(SyntheticImages.Gradient(30, 30), 0.1, seed: 1);
        ComparisonReport report = ImageComparison.Compare(r, r.Clone());
        Assert.Equal(0, report.All.Mse);
        Assert.Equal(0, report.All.Smape);
        Assert.Equal(double.PositiveInfinity, report.All.Psnr);
        Assert.Equal(1.0, report.Ssim!.Value, 12);
    }

    [Fact]
    public void Ssim_is_symmetric_and_below_one_for_different_images()
    {
        RgbImage a = SyntheticImages.Gradient(25, 25);
        RgbImage b = SyntheticImages.Noisy(a, 0.1, seed: 2);
        double ab = ImageComparison.Compare(a, b).Ssim!.Value;
        double ba = ImageComparison.Compare(b, a).Ssim!.Value;
        Assert.Equal(ab, ba, 12);
        Assert.InRange(ab, -1, 0.999);
    }

    [Fact]
    public void Bias_is_the_signed_mean_error()
    {
        RgbImage r = SyntheticImages.Flat(12, 12, 1f, 1f, 1f);
        RgbImage t = SyntheticImages.Flat(12, 12, 1.5f, 1f, 0.25f);
        ComparisonReport report = ImageComparison.Compare(r, t);
        Assert.Equal(0.5, report.R.Bias, 12);
        Assert.Equal(-0.75, report.B.Bias, 12);
        Assert.Equal((0.5 - 0.75) / 3, report.All.Bias, 12);
    }

    [Fact]
    public void Region_metrics_equal_metrics_of_the_cropped_images()
    {
        RgbImage r = SyntheticImages.Gradient(50, 40);
        RgbImage t = SyntheticImages.Noisy(r, 0.05, seed: 3);
        var region = new PixelRect(7, 3, 31, 29);
        ComparisonReport inRegion = ImageComparison.Compare(r, t, new ComparisonOptions { Region = region });
        ComparisonReport cropped = ImageComparison.Compare(r.Crop(region), t.Crop(region));
        Assert.Equal(cropped.All, inRegion.All);
        Assert.Equal(cropped.Ssim, inRegion.Ssim);
    }

    [Theory]
    [InlineData("size_mismatch")]
    [InlineData("region_outside")]
    [InlineData("all_nan")]
    public void Incomparable_inputs_throw(string name)
    {
        RgbImage a = SyntheticImages.Gradient(20, 20);
        Action act = name switch
        {
            "size_mismatch" => () => ImageComparison.Compare(a, SyntheticImages.Gradient(20, 21)),
            "region_outside" => () => ImageComparison.Compare(a, a, new ComparisonOptions { Region = new PixelRect(15, 0, 6, 5) }),
            _ => () => ImageComparison.Compare(a, SyntheticImages.Flat(20, 20, float.NaN, 0, 0)),
        };
        Assert.Throws<ImageComparisonException>(act);
    }
}
