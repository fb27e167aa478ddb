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
/// z = Σ b_p / √(that), over the image and over each tile. Its reference distribution is Student's
/// t with the Welch–Satterthwaite effective degrees of freedom of the pooled variance,
/// ν = (Σ v_p)² / Σ (v_p²/(K − 1)) with v_p = s_p²/K (Satterthwaite 1946, Biometrics Bulletin 2):
/// near K − 1 when a few pixels dominate (a small bright light found by chance), near
/// (number of pixels)·(K − 1) when the noise is spread evenly. The reference's own variance
/// comes from thousands of samples and is taken as known.
/// </para>
/// </summary>
public sealed class BiasTest
{
    private BiasTest(int replicates, double meanBias, double? imageZ, double imageDof, double[] tileZ, double[] tileDof, double? estimatorVariance, int tilesX, int tileSize)
    {
        Replicates = replicates;
        MeanBias = meanBias;
        ImageZ = imageZ;
        ImageDof = imageDof;
        TileZ = tileZ;
        TileDof = tileDof;
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

    /// <summary>The effective degrees of freedom of <see cref="ImageZ"/>.</summary>
    public double ImageDof { get; }

    /// <summary>z per tile, row-major (empty with fewer than two replicates).</summary>
    public IReadOnlyList<double> TileZ { get; }

    /// <summary>The effective degrees of freedom of each tile's z.</summary>
    public IReadOnlyList<double> TileDof { get; }

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
        double biasSum = 0, estimatorVariance = 0, totalVariance = 0, totalFourth = 0;
        var tileBias = new double[tilesX * tilesY];
        var tileVariance = new double[tilesX * tilesY];
        var tileFourth = new double[tilesX * tilesY];
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

                double estimated = replicateVariance / k;
                double v = estimated + varR;
                double fourth = k >= 2 ? estimated * estimated / (k - 1) : 0;
                biasSum += b;
                totalVariance += v;
                totalFourth += fourth;
                int t = ((y / tileSize) * tilesX) + (x / tileSize);
                tileBias[t] += b;
                tileVariance[t] += v;
                tileFourth[t] += fourth;
            }
        }

        int pixels = width * height;
        if (k < 2)
        {
            return new BiasTest(k, biasSum / pixels, null, 0, [], [], null, tilesX, tileSize);
        }

        double[] tileZ = [.. tileBias.Select((b, t) => Z(b, tileVariance[t]))];
        double[] tileDof = [.. tileVariance.Select((v, t) => Dof(v, tileFourth[t], k))];
        return new BiasTest(k, biasSum / pixels, Z(biasSum, totalVariance), Dof(totalVariance, totalFourth, k), tileZ, tileDof, estimatorVariance / (3.0 * pixels), tilesX, tileSize);
    }

    /// <summary>The per-test level that holds a family of <paramref name="family"/> independent tests at <paramref name="alpha"/> (Šidák 1967, JASA 62: α' = 1 − (1 − α)^(1/m)).</summary>
    public static double Sidak(double alpha, int family) => 1 - Math.Pow(1 - alpha, 1.0 / Math.Max(1, family));

    /// <summary>The two-sided p-value of a z with <paramref name="dof"/> degrees of freedom (Student's t); 1 with none.</summary>
    public static double PValue(double z, double dof)
    {
        if (double.IsNaN(z))
        {
            return 0; // a NaN bias is a failure, never a pass
        }

        return dof > 0 ? Math.Min(1, 2 * StudentT.CDF(0, 1, dof, -Math.Abs(z))) : 1;
    }

    /// <summary>Every tile's p-value, row-major.</summary>
    public IEnumerable<double> TilePValues() => TileZ.Select((z, t) => PValue(z, TileDof[t]));

    /// <summary>Tiles whose p-value is below the Šidák level for family-wise <paramref name="alpha"/> over all tiles.</summary>
    public int TilesBelow(double alpha) => TilePValues().Count(p => p < Sidak(alpha, TileZ.Count));

    /// <summary>Welch–Satterthwaite: (Σv)² / Σ(v²/(K − 1)); the known reference variance adds no term. Large when nothing was estimated.</summary>
    private static double Dof(double variance, double fourth, int k) =>
        fourth > 0 ? variance * variance / fourth : 1e9 * (k - 1);

    private static double Z(double bias, double variance) =>
        variance > 0 ? bias / Math.Sqrt(variance) : (bias == 0 ? 0 : double.PositiveInfinity * Math.Sign(bias));
}
