using System.Numerics;
using MathNet.Numerics;
using MathNet.Numerics.IntegralTransforms;
using PathBench.Imaging;

namespace PathBench.Analysis;

/// <summary>
/// How far a configuration's noise is from white: structure (patterns, blotches, aliasing) that
/// changes from replicate to replicate. Structure common to every replicate is bias and shows in
/// the bias z instead.
/// <para>
/// Statistic. Per pixel p, the Rec. 709 luminance Y of each of the K replicates is standardised
/// by the replicates' own mean and standard deviation: z_kp = (Y_kp − Ȳ_p) / s_p (0 where s_p = 0).
/// Noise that is independent from pixel to pixel gives z that is white whatever the pixel's
/// brightness. The periodogram |DFT(z_k)|²/N of each replicate is averaged over k and divided by
/// its mean over the M distinct non-zero frequencies (one of each conjugate pair; self-conjugate
/// frequencies left out), giving Q(f). For white noise each periodogram ordinate is exponential
/// (2 degrees of freedom; Brockwell &amp; Davis, "Time Series: Theory and Methods", 2nd ed., §10.3,
/// for the 1-D case; the 2-D case is the same argument), independent across f; subtracting the
/// replicates' mean takes one replicate's worth away (Σ_k |Z_k(f)|² = Σ_k |X_k(f)|² − K·|X̄(f)|²,
/// Cochran's theorem), so with D = K − 1, D·Q(f) ~ Gamma(D, 1).
/// </para>
/// <para>
/// Two tests: (1) a peak, the largest Q(f) against the distribution of the maximum of M
/// independent Gamma(D, 1/D) values — Fisher's (1929) test for hidden periodicities, for
/// averaged periodograms; (2) broad structure, the mean of Q over each of
/// <see cref="Bands"/> rings of radial frequency, each ~ Gamma(D·n_b, 1/(D·n_b)), two-sided,
/// Bonferroni over the rings. p = min(1, 2·min(p₁, p₂)) and the score is −log₁₀ p, capped at
/// <see cref="MaxScore"/>: white noise scores below 3 in 99.9 % of cases; a score of 10 means
/// a p-value of 10⁻¹⁰. Noise shaped on purpose (blue noise) is structure too and scores high.
/// </para>
/// </summary>
/// <param name="Score">−log₁₀ of the p-value, 0 … <see cref="MaxScore"/>.</param>
/// <param name="P">The p-value of white noise.</param>
/// <param name="PeakP">The peak test's p-value.</param>
/// <param name="BandP">The ring test's p-value (Bonferroni-corrected).</param>
/// <param name="Peak">The peak's height over the mean spectrum, Q at the peak.</param>
/// <param name="PeakFrequency">The peak's frequency in cycles per pixel (x, y).</param>
/// <param name="BandRatios">Mean Q of each ring, from the lowest frequencies outwards (1 for white noise).</param>
public sealed record StructureScore(double Score, double P, double PeakP, double BandP, double Peak, (double X, double Y) PeakFrequency, IReadOnlyList<double> BandRatios)
{
    /// <summary>The largest score reported (p-values below 10⁻³⁰⁰ are not told apart).</summary>
    public const double MaxScore = 300;

    /// <summary>Rings of radial frequency in the broad-structure test.</summary>
    public const int Bands = 8;

    /// <summary>Smallest image edge the test runs on.</summary>
    public const int MinSize = 8;

    /// <summary>
    /// Scores the replicate images (RGB interleaved, <paramref name="width"/>×<paramref name="height"/>);
    /// null with fewer than two replicates or an image smaller than <see cref="MinSize"/> on a side.
    /// </summary>
    public static StructureScore? Measure(IReadOnlyList<float[]> replicates, int width, int height)
    {
        ArgumentNullException.ThrowIfNull(replicates);
        int k = replicates.Count;
        if (k < 2 || width < MinSize || height < MinSize)
        {
            return null;
        }

        int n = width * height;
        var luminance = new double[k][];
        for (int r = 0; r < k; r++)
        {
            float[] image = replicates[r];
            if (image.Length != 3 * n)
            {
                throw new ArgumentException(FormattableString.Invariant($"replicate {r} holds {image.Length} values, a {width}x{height} RGB image {3 * n}"), nameof(replicates));
            }

            var y = new double[n];
            for (int p = 0; p < n; p++)
            {
                y[p] = Luminance.Rec709(image[3 * p], image[(3 * p) + 1], image[(3 * p) + 2]);
            }

            luminance[r] = y;
        }

        // Standardise per pixel across replicates, on differences from the first replicate: a pixel
        // whose replicates are all equal (a constant sky) then has a spread of exactly 0, where the
        // rounding of a plain mean would leave a spread of 1e-17 and a large, identical z everywhere.
        var mean = new double[n];
        var scale = new double[n];
        for (int p = 0; p < n; p++)
        {
            double first = luminance[0][p], m = 0;
            for (int r = 0; r < k; r++)
            {
                m += luminance[r][p] - first;
            }

            m /= k;
            double ss = 0;
            for (int r = 0; r < k; r++)
            {
                double d = luminance[r][p] - first - m;
                ss += d * d;
            }

            double sd = Math.Sqrt(ss / (k - 1));
            mean[p] = first + m;
            scale[p] = sd > 0 && double.IsFinite(sd) ? 1 / sd : 0;
        }

        var power = new double[n];
        var buffer = new Complex[n];
        var row = new Complex[width];
        var column = new Complex[height];
        for (int r = 0; r < k; r++)
        {
            for (int p = 0; p < n; p++)
            {
                buffer[p] = new Complex((luminance[r][p] - mean[p]) * scale[p], 0);
            }

            Transform2D(buffer, width, height, row, column);
            for (int p = 0; p < n; p++)
            {
                double re = buffer[p].Real, im = buffer[p].Imaginary;
                power[p] += ((re * re) + (im * im)) / n;
            }
        }

        // The distinct non-zero frequencies: of each conjugate pair (u, v) ~ (−u, −v) the one met
        // first in row-major order; self-conjugate ones (2u ≡ 0 and 2v ≡ 0) are real, one dof, left out.
        var frequencies = new List<(int Index, double Radius, double Fx, double Fy)>(n / 2);
        for (int v = 0; v < height; v++)
        {
            for (int u = 0; u < width; u++)
            {
                int cu = (width - u) % width, cv = (height - v) % height;
                int index = (v * width) + u, conjugate = (cv * width) + cu;
                if (index == conjugate || conjugate < index)
                {
                    continue;
                }

                double fx = (u <= width / 2 ? u : u - width) / (double)width;
                double fy = (v <= height / 2 ? v : v - height) / (double)height;
                frequencies.Add((index, Math.Sqrt((fx * fx) + (fy * fy)), fx, fy));
            }
        }

        int m2 = frequencies.Count;
        double total = 0;
        foreach (var f in frequencies)
        {
            total += power[f.Index];
        }

        double average = total / m2;
        if (!(average > 0))
        {
            // No variation at all: nothing that could be structured.
            return new StructureScore(0, 1, 1, 1, 0, (0, 0), [.. Enumerable.Repeat(1.0, Bands)]);
        }

        // (1) The peak.
        double peak = 0;
        (double, double) peakFrequency = (0, 0);
        foreach (var f in frequencies)
        {
            double q = power[f.Index] / average;
            if (q > peak)
            {
                peak = q;
                peakFrequency = (f.Fx, f.Fy);
            }
        }

        // P(max of M iid ≤ q) = F(q)^M with F the Gamma(D, rate D) CDF; 1 − F^M = −expm1(M·log F).
        int dof = k - 1;
        double upper = SpecialFunctions.GammaUpperRegularized(dof, dof * peak);
        // For M·u small, 1 − (1 − u)^M = M·u to within (M·u)²/2, below double precision's use here.
        double peakP = m2 * upper < 1e-8 ? m2 * upper : Math.Min(1, 1 - Math.Pow(1 - upper, m2));

        // (2) Rings of equal width in radial frequency up to the corner, √0.5 cycles per pixel.
        var bandSum = new double[Bands];
        var bandCount = new int[Bands];
        double maxRadius = Math.Sqrt(0.5);
        foreach (var f in frequencies)
        {
            int b = Math.Min(Bands - 1, (int)(f.Radius / maxRadius * Bands));
            bandSum[b] += power[f.Index] / average;
            bandCount[b]++;
        }

        var ratios = new double[Bands];
        double bandP = 1;
        int usedBands = bandCount.Count(c => c > 0);
        for (int b = 0; b < Bands; b++)
        {
            if (bandCount[b] == 0)
            {
                ratios[b] = double.NaN;
                continue;
            }

            double shape = (double)dof * bandCount[b];
            ratios[b] = bandSum[b] / bandCount[b];
            double lower = SpecialFunctions.GammaLowerRegularized(shape, shape * ratios[b]);
            double upperTail = SpecialFunctions.GammaUpperRegularized(shape, shape * ratios[b]);
            double twoSided = 2 * Math.Min(lower, upperTail);
            bandP = Math.Min(bandP, Math.Min(1, twoSided * usedBands));
        }

        double pValue = Math.Min(1, 2 * Math.Min(peakP, bandP));
        double score = pValue <= 0 ? MaxScore : Math.Min(MaxScore, -Math.Log10(pValue));
        return new StructureScore(Math.Max(0, score), pValue, peakP, bandP, peak, peakFrequency, ratios);
    }

    /// <summary>
    /// The unscaled 2-D DFT of a row-major image, as 1-D transforms of every row and then every
    /// column (MathNet's managed provider does 1-D transforms of any length, not 2-D ones).
    /// </summary>
    private static void Transform2D(Complex[] data, int width, int height, Complex[] row, Complex[] column)
    {
        for (int y = 0; y < height; y++)
        {
            Array.Copy(data, y * width, row, 0, width);
            Fourier.Forward(row, FourierOptions.NoScaling);
            Array.Copy(row, 0, data, y * width, width);
        }

        for (int x = 0; x < width; x++)
        {
            for (int y = 0; y < height; y++)
            {
                column[y] = data[(y * width) + x];
            }

            Fourier.Forward(column, FourierOptions.NoScaling);
            for (int y = 0; y < height; y++)
            {
                data[(y * width) + x] = column[y];
            }
        }
    }
}
