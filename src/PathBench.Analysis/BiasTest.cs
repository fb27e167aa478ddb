using MathNet.Numerics.Distributions;

namespace PathBench.Analysis;

/// <summary>
/// Whether K replicate images agree with a reference, per image and per tile.
/// <para>
/// Per pixel p, b_p = (mean over replicates − reference), averaged over the three channels.
/// Pixels are independent estimates (each pixel's points are randomized with its own seed), so
/// Var(Σ b_p) = Σ (s_p²/K + Var(R_p)), with s_p² the replicate variance of the channel average —
/// bounded above by the mean of the channels' variances (Cauchy–Schwarz), since the moments keep
/// no cross terms, which makes z conservative — and Var(R_p) the reference's mean channel variance.
/// z = Σ b_p / √(that), over the image and over each tile. Its reference distribution is taken
/// as Student's t with K − 1 degrees of freedom, because the spread comes from K replicates.
/// </para>
/// </summary>
public sealed class BiasTest
{
    private BiasTest(int replicates, double meanBias, double? imageZ, double[] tileZ, double? estimatorVariance, int tilesX, int tileSize)
    {
        Replicates = replicates;
        MeanBias = meanBias;
        ImageZ = imageZ;
        TileZ = tileZ;
        EstimatorVariance = estimatorVariance;
        TilesX = tilesX;
        TileSize = tileSize;
    }

    /// <summary>K, the replicates the moments hold.</summary>
    public int Replicates { get; }

    /// <summary>Mean over pixels of b_p.</summary>
    public double MeanBias { get; }

    /// <summary>z over the whole image; null with fewer than two replicates.</summary>
    public double? ImageZ { get; }

    /// <summary>z per tile, row-major (empty with fewer than two replicates).</summary>
    public IReadOnlyList<double> TileZ { get; }

    /// <summary>Tiles per row.</summary>
    public int TilesX { get; }

    /// <summary>Tile edge in pixels.</summary>
    public int TileSize { get; }

    /// <summary>Mean over pixels and channels of the variance across replicates; null with fewer than two.</summary>
    public double? EstimatorVariance { get; }

    /// <summary>Measures replicate sums <paramref name="moments"/> against <paramref name="reference"/> in tiles of <paramref name="tileSize"/>.</summary>
    public static BiasTest Of(PixelMoments moments, ReferenceImage reference, int tileSize)
    {
        ArgumentNullException.ThrowIfNull(moments);
        ArgumentNullException.ThrowIfNull(reference);
        int k = moments.Count;
        int width = reference.Width, height = reference.Height;
        int tilesX = (width + tileSize - 1) / tileSize, tilesY = (height + tileSize - 1) / tileSize;
        double biasSum = 0, estimatorVariance = 0, totalVariance = 0;
        var tileBias = new double[tilesX * tilesY];
        var tileVariance = new double[tilesX * tilesY];
        for (int y = 0; y < height; y++)
        {
            for (int x = 0; x < width; x++)
            {
                int i = 3 * ((y * width) + x);
                double b = 0, replicateVariance = 0, varR = 0;
                for (int c = 0; c < 3; c++)
                {
                    double m = moments.Sum[i + c] / k;
                    b += (m - reference.Value[i + c]) / 3;
                    varR += reference.VarianceOfMean[i + c] / 3;
                    if (k >= 2)
                    {
                        double s2 = Math.Max(0, (moments.SumSquares[i + c] - (moments.Sum[i + c] * m)) / (k - 1));
                        estimatorVariance += s2;
                        replicateVariance += s2 / 3;
                    }
                }

                double v = (replicateVariance / k) + varR;
                biasSum += b;
                totalVariance += v;
                int t = ((y / tileSize) * tilesX) + (x / tileSize);
                tileBias[t] += b;
                tileVariance[t] += v;
            }
        }

        int pixels = width * height;
        if (k < 2)
        {
            return new BiasTest(k, biasSum / pixels, null, [], null, tilesX, tileSize);
        }

        double[] tileZ = [.. tileBias.Select((b, t) => Z(b, tileVariance[t]))];
        return new BiasTest(k, biasSum / pixels, Z(biasSum, totalVariance), tileZ, estimatorVariance / (3.0 * pixels), tilesX, tileSize);
    }

    /// <summary>
    /// The two-sided threshold on |z| for a family-wise false-alarm rate <paramref name="alpha"/>
    /// over <paramref name="family"/> tests (Šidák 1967, JASA 62: α' = 1 − (1 − α)^(1/m)), from
    /// Student's t with <paramref name="replicates"/> − 1 degrees of freedom; infinite with one replicate.
    /// </summary>
    public static double Threshold(double alpha, int family, int replicates) =>
        replicates >= 2 ? StudentT.InvCDF(0, 1, replicates - 1, 1 - (Sidak(alpha, family) / 2)) : double.PositiveInfinity;

    /// <summary>The per-test level that holds a family of <paramref name="family"/> independent tests at <paramref name="alpha"/>.</summary>
    public static double Sidak(double alpha, int family) => 1 - Math.Pow(1 - alpha, 1.0 / Math.Max(1, family));

    /// <summary>The two-sided p-value of one z (Student's t, K − 1 degrees of freedom).</summary>
    public double PValue(double z) => Replicates >= 2 ? Math.Min(1, 2 * StudentT.CDF(0, 1, Replicates - 1, -Math.Abs(z))) : 1;

    /// <summary>Tiles whose |z| exceeds <paramref name="threshold"/>.</summary>
    public int TilesAbove(double threshold) => TileZ.Count(z => Math.Abs(z) > threshold);

    private static double Z(double bias, double variance) =>
        variance > 0 ? bias / Math.Sqrt(variance) : (bias == 0 ? 0 : double.PositiveInfinity * Math.Sign(bias));
}
