namespace PathBench.Imaging;

/// <summary>
/// Error metrics of a test image against a reference, over a region, per channel, pooled over
/// R, G, B, and on Rec. 709 luminance. With x the test value, r the reference value, N the
/// finite pixels of the region and ε, L from <see cref="ComparisonOptions"/>:
/// <list type="bullet">
/// <item>MSE = (1/N)·Σ (x − r)²; RMSE = √MSE.</item>
/// <item>relMSE = (1/N)·Σ (x − r)²/(r² + ε): the relative MSE of Rousselle, Knaus &amp; Zwicker,
/// "Adaptive Sampling and Reconstruction using Greedy Error Minimization", ACM TOG 30(6), 2011,
/// with ε = 0.01 (from memory).</item>
/// <item>SMAPE = (1/N)·Σ |x − r|/(|x| + |r| + ε): the symmetric mean absolute percentage error
/// in the form of Vogels et al., "Denoising with Kernel Prediction and Asymmetric Loss
/// Functions", ACM TOG 37(4), 2018 (from memory), in [0, 1).</item>
/// <item>PSNR = 10·log10(L²/MSE) dB, peak L = the data range (as scikit-image's
/// peak_signal_noise_ratio with an explicit data_range).</item>
/// <item>bias = (1/N)·Σ (x − r).</item>
/// <item>SSIM: see <see cref="Ssim"/>, on luminance.</item>
/// </list>
/// Pooled metrics average over pixels and the three channels. A pixel with a NaN or infinite
/// channel in either image is counted in <see cref="ComparisonReport.NonFinitePixels"/> and left
/// out of every sum. Sums run in fixed blocks of rows, reduced in block order, so results do not
/// depend on the thread count.
/// </summary>
public static class ImageComparison
{
    // Rows per block of the parallel sums: fixed, so the reduction order never depends on threads.
    private const int BlockRows = 32;

    // Per block and per channel (R, G, B, Y): squared error, relative squared error, SMAPE term, signed error.
    private const int Sums = 4;
    private const int Lanes = 4;

    /// <summary>Compares <paramref name="test"/> against <paramref name="reference"/>.</summary>
    /// <exception cref="ImageComparisonException">Sizes differ, the region lies outside, or no pixel is finite in both.</exception>
    public static ComparisonReport Compare(RgbImage reference, RgbImage test, ComparisonOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(test);
        options ??= new ComparisonOptions();
        options.Validate();
        if (reference.Width != test.Width || reference.Height != test.Height)
        {
            throw new ImageComparisonException(FormattableString.Invariant(
                $"image sizes differ: reference is {reference.Width}x{reference.Height}, test is {test.Width}x{test.Height}"));
        }

        PixelRect region = options.Region ?? PixelRect.Full(reference.Width, reference.Height);
        if (!region.FitsIn(reference.Width, reference.Height))
        {
            throw new ImageComparisonException(FormattableString.Invariant(
                $"region {region} does not lie inside the {reference.Width}x{reference.Height} images"));
        }

        int blocks = (region.Height + BlockRows - 1) / BlockRows;
        var sums = new double[blocks * Lanes * Sums];
        var nonFinite = new long[blocks];
        double eps = options.Epsilon;
        Parallel.For(0, blocks, block =>
        {
            Span<double> s = sums.AsSpan(block * Lanes * Sums, Lanes * Sums);
            long bad = 0;
            int y1 = Math.Min(region.Height, (block + 1) * BlockRows);
            for (int y = block * BlockRows; y < y1; y++)
            {
                ReadOnlySpan<float> rr = reference.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
                ReadOnlySpan<float> tr = test.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
                for (int x = 0; x < region.Width; x++)
                {
                    float r0 = rr[x * 3], r1 = rr[(x * 3) + 1], r2 = rr[(x * 3) + 2];
                    float t0 = tr[x * 3], t1 = tr[(x * 3) + 1], t2 = tr[(x * 3) + 2];
                    if (!(float.IsFinite(r0) && float.IsFinite(r1) && float.IsFinite(r2) &&
                          float.IsFinite(t0) && float.IsFinite(t1) && float.IsFinite(t2)))
                    {
                        bad++;
                        continue;
                    }

                    Accumulate(s[..4], t0, r0, eps);
                    Accumulate(s.Slice(4, 4), t1, r1, eps);
                    Accumulate(s.Slice(8, 4), t2, r2, eps);
                    Accumulate(s.Slice(12, 4), Luminance.Rec709(t0, t1, t2), Luminance.Rec709(r0, r1, r2), eps);
                }
            }

            nonFinite[block] = bad;
        });

        var total = new double[Lanes * Sums];
        long nonFiniteTotal = 0;
        for (int block = 0; block < blocks; block++)
        {
            for (int i = 0; i < total.Length; i++)
            {
                total[i] += sums[(block * Lanes * Sums) + i];
            }

            nonFiniteTotal += nonFinite[block];
        }

        long compared = region.PixelCount - nonFiniteTotal;
        if (compared == 0)
        {
            throw new ImageComparisonException(FormattableString.Invariant(
                $"no pixel of region {region} is finite in both images ({nonFiniteTotal} non-finite pixels)"));
        }

        double l = options.DataRange;
        ErrorMetrics Metrics(double se, double rel, double smape, double signed, double n)
        {
            double mse = se / n;
            return new ErrorMetrics(mse, Math.Sqrt(mse), rel / n, smape / n, Psnr(mse, l), signed / n);
        }

        ErrorMetrics Channel(int c) => Metrics(total[c * 4], total[(c * 4) + 1], total[(c * 4) + 2], total[(c * 4) + 3], compared);
        ErrorMetrics all = Metrics(
            total[0] + total[4] + total[8],
            total[1] + total[5] + total[9],
            total[2] + total[6] + total[10],
            total[3] + total[7] + total[11],
            3.0 * compared);

        byte[]? mask = nonFiniteTotal > 0 ? NonFiniteMask(reference, test, region) : null;
        double? ssim = Ssim.MeanOnLuminance(reference, test, region, l, mask);
        return new ComparisonReport(
            region.Width, region.Height, region, compared, nonFiniteTotal, all, Channel(0), Channel(1), Channel(2), Channel(3), ssim, options);
    }

    /// <summary>10·log10(L²/MSE); +∞ for MSE = 0.</summary>
    public static double Psnr(double mse, double dataRange) =>
        mse == 0 ? double.PositiveInfinity : 10.0 * Math.Log10(dataRange * dataRange / mse);

    private static void Accumulate(Span<double> s, double x, double r, double eps)
    {
        double d = x - r;
        s[0] += d * d;
        s[1] += d * d / ((r * r) + eps);
        s[2] += Math.Abs(d) / (Math.Abs(x) + Math.Abs(r) + eps);
        s[3] += d;
    }

    /// <summary>1 where a pixel of the region has a non-finite channel in either image.</summary>
    internal static byte[] NonFiniteMask(RgbImage reference, RgbImage test, PixelRect region)
    {
        var mask = new byte[region.PixelCount];
        Parallel.For(0, region.Height, y =>
        {
            ReadOnlySpan<float> rr = reference.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
            ReadOnlySpan<float> tr = test.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
            for (int x = 0; x < region.Width; x++)
            {
                bool finite = true;
                for (int c = 0; c < 3; c++)
                {
                    finite &= float.IsFinite(rr[(x * 3) + c]) && float.IsFinite(tr[(x * 3) + c]);
                }

                mask[((long)y * region.Width) + x] = finite ? (byte)0 : (byte)1;
            }
        });
        return mask;
    }
}
