using System.Numerics;

namespace PathBench.Imaging;

/// <summary>
/// Mean structural similarity of Wang, Bovik, Sheikh &amp; Simoncelli, "Image Quality Assessment:
/// From Error Visibility to Structural Similarity", IEEE Trans. Image Processing 13(4), 2004:
/// local means, variances and covariance under a Gaussian window (σ = 1.5, 11 taps, normalised
/// to sum 1, population statistics), C1 = (K1·L)², C2 = (K2·L)² with K1 = 0.01, K2 = 0.03,
/// SSIM = (2μxμy + C1)(2σxy + C2) / ((μx² + μy² + C1)(σx² + σy² + C2)), averaged over the window
/// centres at least 5 pixels from every edge, so no window leaves the image. This is what
/// scikit-image's structural_similarity computes with gaussian_weights=True, sigma=1.5,
/// use_sample_covariance=False and data_range=L. PathBench applies it to one channel: the
/// Rec. 709 luminance of the linear values (ITU-R BT.709 weights), in double precision.
/// </summary>
public static class Ssim
{
    /// <summary>Gaussian σ of the window.</summary>
    public const double Sigma = 1.5;

    /// <summary>Window radius: 11 taps.</summary>
    public const int Radius = 5;

    /// <summary>K1 of Wang et al. 2004.</summary>
    public const double K1 = 0.01;

    /// <summary>K2 of Wang et al. 2004.</summary>
    public const double K2 = 0.03;

    // Output rows per block: fixed so the sum order never depends on the thread count; 64 keeps
    // the 10 halo rows recomputed per block below a fifth of the work.
    private const int BlockRows = 64;

    private const int Taps = (2 * Radius) + 1;

    private static readonly double[] Weights = BuildWeights();

    /// <summary>
    /// Mean SSIM of the luminance of two images over <paramref name="region"/>; null when the
    /// region is smaller than 11×11. Window centres whose window touches a pixel flagged in
    /// <paramref name="nonFiniteMask"/> (region-sized, row-major) are left out of the mean.
    /// </summary>
    public static double? MeanOnLuminance(RgbImage reference, RgbImage test, PixelRect region, double dataRange, byte[]? nonFiniteMask = null)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(test);
        region.ThrowIfOutside(reference.Width, reference.Height);
        region.ThrowIfOutside(test.Width, test.Height);
        return Mean(
            (y, a) => LuminanceRow(reference, region, y, a),
            (y, b) => LuminanceRow(test, region, y, b),
            region.Width,
            region.Height,
            dataRange,
            nonFiniteMask);
    }

    /// <summary>Mean SSIM of two single-channel images stored row-major; null when smaller than 11×11.</summary>
    public static double? Mean(double[] x, double[] y, int width, int height, double dataRange)
    {
        ArgumentNullException.ThrowIfNull(x);
        ArgumentNullException.ThrowIfNull(y);
        if (x.LongLength != (long)width * height || y.LongLength != (long)width * height)
        {
            throw new ArgumentException("both planes must hold width·height values");
        }

        return Mean(
            (row, a) => x.AsSpan(row * width, width).CopyTo(a),
            (row, b) => y.AsSpan(row * width, width).CopyTo(b),
            width,
            height,
            dataRange,
            null);
    }

    private delegate void RowSource(int y, Span<double> destination);

    private static void LuminanceRow(RgbImage image, PixelRect region, int y, Span<double> destination)
    {
        ReadOnlySpan<float> row = image.Row(region.Y + y).Slice(region.X * 3, region.Width * 3);
        for (int x = 0; x < destination.Length; x++)
        {
            destination[x] = Luminance.Rec709(row[x * 3], row[(x * 3) + 1], row[(x * 3) + 2]);
        }
    }

    private static double? Mean(RowSource sourceX, RowSource sourceY, int width, int height, double dataRange, byte[]? mask)
    {
        if (width < Taps || height < Taps)
        {
            return null;
        }

        double c1 = (K1 * dataRange) * (K1 * dataRange);
        double c2 = (K2 * dataRange) * (K2 * dataRange);
        int outW = width - (2 * Radius);
        int outH = height - (2 * Radius);
        int blocks = (outH + BlockRows - 1) / BlockRows;
        var blockSums = new double[blocks];
        var blockCounts = new long[blocks];
        Parallel.For(
            0,
            blocks,
            () => new Workspace(width, outW),
            (block, _, ws) =>
            {
                int o0 = block * BlockRows;
                int o1 = Math.Min(outH, o0 + BlockRows);
                int inRows = o1 - o0 + (2 * Radius);
                ws.Ensure(inRows);

                // Horizontal pass over input rows o0 .. o1 + 2r (row index = output row of the centre − r).
                for (int i = 0; i < inRows; i++)
                {
                    int y = o0 + i;
                    sourceX(y, ws.A);
                    sourceY(y, ws.B);
                    if (mask is not null)
                    {
                        ReadOnlySpan<byte> m = mask.AsSpan(y * width, width);
                        for (int x = 0; x < width; x++)
                        {
                            if (m[x] != 0)
                            {
                                // Excluded below; zero keeps NaN out of the neighbouring sums.
                                ws.A[x] = 0;
                                ws.B[x] = 0;
                            }
                        }

                        for (int x = 0; x < outW; x++)
                        {
                            ws.BadH[(i * outW) + x] = m.Slice(x, Taps).IndexOfAnyExcept((byte)0) >= 0 ? (byte)1 : (byte)0;
                        }
                    }

                    for (int x = 0; x < width; x++)
                    {
                        ws.AA[x] = ws.A[x] * ws.A[x];
                        ws.BB[x] = ws.B[x] * ws.B[x];
                        ws.AB[x] = ws.A[x] * ws.B[x];
                    }

                    FilterRow(ws.A, ws.H[0].AsSpan(i * outW, outW));
                    FilterRow(ws.B, ws.H[1].AsSpan(i * outW, outW));
                    FilterRow(ws.AA, ws.H[2].AsSpan(i * outW, outW));
                    FilterRow(ws.BB, ws.H[3].AsSpan(i * outW, outW));
                    FilterRow(ws.AB, ws.H[4].AsSpan(i * outW, outW));
                }

                double sum = 0;
                long count = 0;
                for (int o = o0; o < o1; o++)
                {
                    int i0 = o - o0;
                    for (int m = 0; m < 5; m++)
                    {
                        FilterColumn(ws.H[m], i0, outW, ws.V[m]);
                    }

                    SsimRow(ws.V, c1, c2, ws.S);
                    if (mask is null)
                    {
                        for (int x = 0; x < outW; x++)
                        {
                            sum += ws.S[x];
                        }

                        count += outW;
                    }
                    else
                    {
                        for (int x = 0; x < outW; x++)
                        {
                            bool bad = false;
                            for (int k = 0; k < Taps && !bad; k++)
                            {
                                bad = ws.BadH[((i0 + k) * outW) + x] != 0;
                            }

                            if (!bad)
                            {
                                sum += ws.S[x];
                                count++;
                            }
                        }
                    }
                }

                blockSums[block] = sum;
                blockCounts[block] = count;
                return ws;
            },
            _ => { });

        double total = 0;
        long n = 0;
        for (int b = 0; b < blocks; b++)
        {
            total += blockSums[b];
            n += blockCounts[b];
        }

        return n == 0 ? double.NaN : total / n;
    }

    /// <summary>dst[x] = Σ_k w_k·src[x + k]; symmetric weights paired to halve the products.</summary>
    private static void FilterRow(ReadOnlySpan<double> src, Span<double> dst)
    {
        double[] g = Weights;
        int n = dst.Length;
        int vc = Vector<double>.Count;
        int x = 0;
        for (; x <= n - vc; x += vc)
        {
            var acc = new Vector<double>(src[(x + Radius)..]) * g[Radius];
            for (int k = 0; k < Radius; k++)
            {
                acc += (new Vector<double>(src[(x + k)..]) + new Vector<double>(src[(x + Taps - 1 - k)..])) * g[k];
            }

            acc.CopyTo(dst[x..]);
        }

        for (; x < n; x++)
        {
            double acc = src[x + Radius] * g[Radius];
            for (int k = 0; k < Radius; k++)
            {
                acc += (src[x + k] + src[x + Taps - 1 - k]) * g[k];
            }

            dst[x] = acc;
        }
    }

    /// <summary>dst[x] = Σ_k w_k·rows[i0 + k][x] over the 11 rows of a horizontally filtered map.</summary>
    private static void FilterColumn(double[] map, int i0, int w, double[] dst)
    {
        double[] g = Weights;
        int vc = Vector<double>.Count;
        int x = 0;
        for (; x <= w - vc; x += vc)
        {
            var acc = new Vector<double>(map, ((i0 + Radius) * w) + x) * g[Radius];
            for (int k = 0; k < Radius; k++)
            {
                acc += (new Vector<double>(map, ((i0 + k) * w) + x) + new Vector<double>(map, ((i0 + Taps - 1 - k) * w) + x)) * g[k];
            }

            acc.CopyTo(dst, x);
        }

        for (; x < w; x++)
        {
            double acc = map[((i0 + Radius) * w) + x] * g[Radius];
            for (int k = 0; k < Radius; k++)
            {
                acc += (map[((i0 + k) * w) + x] + map[((i0 + Taps - 1 - k) * w) + x]) * g[k];
            }

            dst[x] = acc;
        }
    }

    private static void SsimRow(double[][] v, double c1, double c2, double[] s)
    {
        double[] ux = v[0], uy = v[1], uxx = v[2], uyy = v[3], uxy = v[4];
        int n = s.Length;
        int vc = Vector<double>.Count;
        int x = 0;
        var vc1 = new Vector<double>(c1);
        var vc2 = new Vector<double>(c2);
        var two = new Vector<double>(2.0);
        for (; x <= n - vc; x += vc)
        {
            var mx = new Vector<double>(ux, x);
            var my = new Vector<double>(uy, x);
            Vector<double> vx = new Vector<double>(uxx, x) - (mx * mx);
            Vector<double> vy = new Vector<double>(uyy, x) - (my * my);
            Vector<double> vxy = new Vector<double>(uxy, x) - (mx * my);
            Vector<double> num = ((two * mx * my) + vc1) * ((two * vxy) + vc2);
            Vector<double> den = ((mx * mx) + (my * my) + vc1) * (vx + vy + vc2);
            (num / den).CopyTo(s, x);
        }

        for (; x < n; x++)
        {
            double mx = ux[x], my = uy[x];
            double vx = uxx[x] - (mx * mx), vy = uyy[x] - (my * my), vxy = uxy[x] - (mx * my);
            s[x] = ((2 * mx * my) + c1) * ((2 * vxy) + c2) / (((mx * mx) + (my * my) + c1) * (vx + vy + c2));
        }
    }

    private static double[] BuildWeights()
    {
        // exp(−k²/(2σ²)) for k = −5..5, normalised to sum 1 (the kernel scipy.ndimage builds with truncate = 3.5).
        var w = new double[Taps];
        double sum = 0;
        for (int k = -Radius; k <= Radius; k++)
        {
            w[k + Radius] = Math.Exp(-0.5 * k * k / (Sigma * Sigma));
            sum += w[k + Radius];
        }

        for (int i = 0; i < Taps; i++)
        {
            w[i] /= sum;
        }

        return w;
    }

    /// <summary>Per-worker buffers, grown to the largest block once.</summary>
    private sealed class Workspace(int width, int outW)
    {
        public double[] A { get; } = new double[width];

        public double[] B { get; } = new double[width];

        public double[] AA { get; } = new double[width];

        public double[] BB { get; } = new double[width];

        public double[] AB { get; } = new double[width];

        public double[][] H { get; private set; } = [];

        public byte[] BadH { get; private set; } = [];

        public double[][] V { get; } = [new double[outW], new double[outW], new double[outW], new double[outW], new double[outW]];

        public double[] S { get; } = new double[outW];

        public void Ensure(int rows)
        {
            if (H.Length == 0 || H[0].Length < rows * outW)
            {
                H = [new double[rows * outW], new double[rows * outW], new double[rows * outW], new double[rows * outW], new double[rows * outW]];
                BadH = new byte[rows * outW];
            }
        }
    }
}
