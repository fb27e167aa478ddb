using MathNet.Numerics.Distributions;

namespace PathBench.Analysis;

/// <summary>
/// Which configuration has the lower error at equal time in each tile of the image.
/// <para>
/// Per tile and configuration, each replicate's corrected tile MSE at the largest spp (mean over
/// the tile's pixels and channels of (x − r)² − Var(r)) is moved to the common time T of
/// <see cref="EqualTimeComparison"/> by the configuration's factor (T/t)^b. The tile's winner is
/// the configuration with the lowest mean; it wins significantly when Welch's t-test (Welch 1947,
/// Biometrika 34) of its replicates against the runner-up's rejects equality, with the tiles'
/// p-values held to a false discovery rate of <see cref="FalseDiscoveryRate"/> by the
/// Benjamini–Hochberg procedure (1995, JRSS B 57). Other tiles are "no significant difference".
/// A deterministic configuration (one render) enters with its single value and no spread.
/// </para>
/// </summary>
public sealed class WinMap
{
    /// <summary>Tile edge in pixels.</summary>
    public const int TileSize = 16;

    /// <summary>Expected share of significant tiles that are wrong, at most.</summary>
    public const double FalseDiscoveryRate = 0.05;

    /// <summary>The value of <see cref="Winners"/> for a tile without a significant winner.</summary>
    public const int NoDifference = -1;

    private WinMap(int width, int height, int tilesX, int tilesY, int[] winners, double[] fractions, double noDifference)
    {
        Width = width;
        Height = height;
        TilesX = tilesX;
        TilesY = tilesY;
        Winners = winners;
        WinFractions = fractions;
        NoDifferenceFraction = noDifference;
    }

    /// <summary>Image width in pixels.</summary>
    public int Width { get; }

    /// <summary>Image height in pixels.</summary>
    public int Height { get; }

    /// <summary>Tiles per row.</summary>
    public int TilesX { get; }

    /// <summary>Tile rows.</summary>
    public int TilesY { get; }

    /// <summary>Per tile, row-major: the index of the winning configuration, or <see cref="NoDifference"/>.</summary>
    public IReadOnlyList<int> Winners { get; }

    /// <summary>Per configuration: the share of the image's pixels in tiles it wins.</summary>
    public IReadOnlyList<double> WinFractions { get; }

    /// <summary>The share of the image's pixels in tiles with no significant winner.</summary>
    public double NoDifferenceFraction { get; }

    /// <summary>
    /// Builds the map. <paramref name="replicates"/>[c] holds configuration c's images at the
    /// largest spp; <paramref name="timeScale"/>[c] the factor that moves its MSE to equal time.
    /// </summary>
    public static WinMap Build(ReferenceImage reference, IReadOnlyList<IReadOnlyList<float[]>> replicates, IReadOnlyList<double> timeScale)
    {
        ArgumentNullException.ThrowIfNull(reference);
        ArgumentNullException.ThrowIfNull(replicates);
        ArgumentNullException.ThrowIfNull(timeScale);
        int configs = replicates.Count;
        if (configs == 0 || timeScale.Count != configs)
        {
            throw new ArgumentException("a win map needs at least one configuration and one time factor for each");
        }

        int width = reference.Width, height = reference.Height;
        int tilesX = (width + TileSize - 1) / TileSize, tilesY = (height + TileSize - 1) / TileSize;
        int tiles = tilesX * tilesY;

        // tileErrors[c][r][t]: replicate r's corrected MSE over tile t, at equal time.
        var tileErrors = new double[configs][][];
        for (int c = 0; c < configs; c++)
        {
            tileErrors[c] = [.. replicates[c].Select(image => TileMse(image, reference, tilesX, tilesY, timeScale[c]))];
            if (tileErrors[c].Length == 0)
            {
                throw new ArgumentException(FormattableString.Invariant($"configuration {c} has no image"), nameof(replicates));
            }
        }

        var winner = new int[tiles];
        var pValues = new double[tiles];
        for (int t = 0; t < tiles; t++)
        {
            var means = new double[configs];
            var variances = new double[configs];
            for (int c = 0; c < configs; c++)
            {
                (means[c], variances[c]) = MeanAndVariance(tileErrors[c], t);
            }

            int best = 0;
            for (int c = 1; c < configs; c++)
            {
                if (means[c] < means[best])
                {
                    best = c;
                }
            }

            winner[t] = best;
            if (configs == 1)
            {
                pValues[t] = 0;
                continue;
            }

            int second = best == 0 ? 1 : 0;
            for (int c = 0; c < configs; c++)
            {
                if (c != best && means[c] < means[second])
                {
                    second = c;
                }
            }

            pValues[t] = WelchP(means[best], variances[best], tileErrors[best].Length, means[second], variances[second], tileErrors[second].Length);
        }

        bool[] significant = BenjaminiHochberg(pValues, FalseDiscoveryRate);
        var fractions = new double[configs];
        double none = 0;
        for (int t = 0; t < tiles; t++)
        {
            int tx = t % tilesX, ty = t / tilesX;
            double pixels = (double)(Math.Min(width, (tx + 1) * TileSize) - (tx * TileSize)) * (Math.Min(height, (ty + 1) * TileSize) - (ty * TileSize));
            if (significant[t])
            {
                fractions[winner[t]] += pixels;
            }
            else
            {
                winner[t] = NoDifference;
                none += pixels;
            }
        }

        double area = (double)width * height;
        return new WinMap(width, height, tilesX, tilesY, winner, [.. fractions.Select(f => f / area)], none / area);
    }

    /// <summary>The Benjamini–Hochberg step-up procedure: which hypotheses are rejected at false discovery rate <paramref name="q"/>.</summary>
    public static bool[] BenjaminiHochberg(IReadOnlyList<double> pValues, double q)
    {
        ArgumentNullException.ThrowIfNull(pValues);
        int m = pValues.Count;
        int[] order = [.. Enumerable.Range(0, m).OrderBy(i => pValues[i]).ThenBy(i => i)];
        int largest = -1;
        for (int rank = 0; rank < m; rank++)
        {
            if (pValues[order[rank]] <= q * (rank + 1) / m)
            {
                largest = rank;
            }
        }

        var rejected = new bool[m];
        for (int rank = 0; rank <= largest; rank++)
        {
            rejected[order[rank]] = true;
        }

        return rejected;
    }

    /// <summary>
    /// Two-sided p-value of Welch's t-test for equal means, from the two samples' means, unbiased
    /// variances and sizes; a sample of one value has no spread and contributes none.
    /// </summary>
    public static double WelchP(double mean1, double variance1, int n1, double mean2, double variance2, int n2)
    {
        double s1 = n1 >= 2 ? variance1 / n1 : 0, s2 = n2 >= 2 ? variance2 / n2 : 0;
        double se2 = s1 + s2;
        double difference = Math.Abs(mean1 - mean2);
        if (!(se2 > 0))
        {
            return difference > 0 ? 0 : 1;
        }

        double dof = se2 * se2 / ((n1 >= 2 ? s1 * s1 / (n1 - 1) : 0) + (n2 >= 2 ? s2 * s2 / (n2 - 1) : 0));
        double t = difference / Math.Sqrt(se2);
        return Math.Min(1, 2 * StudentT.CDF(0, 1, dof, -t));
    }

    private static (double Mean, double Variance) MeanAndVariance(double[][] samples, int t)
    {
        int n = samples.Length;
        double mean = 0;
        foreach (double[] s in samples)
        {
            mean += s[t];
        }

        mean /= n;
        if (n < 2)
        {
            return (mean, 0);
        }

        double ss = 0;
        foreach (double[] s in samples)
        {
            ss += (s[t] - mean) * (s[t] - mean);
        }

        return (mean, ss / (n - 1));
    }

    private static double[] TileMse(float[] image, ReferenceImage reference, int tilesX, int tilesY, double scale)
    {
        int width = reference.Width, height = reference.Height;
        if (image.Length != reference.Value.Length)
        {
            throw new ArgumentException(FormattableString.Invariant($"an image holds {image.Length} values, the reference {reference.Value.Length}"), nameof(image));
        }

        var sum = new double[tilesX * tilesY];
        var count = new int[tilesX * tilesY];
        for (int y = 0; y < height; y++)
        {
            int row = (y / TileSize) * tilesX;
            for (int x = 0; x < width; x++)
            {
                int t = row + (x / TileSize);
                int i = 3 * ((y * width) + x);
                for (int c = 0; c < 3; c++)
                {
                    double d = image[i + c] - reference.Value[i + c];
                    sum[t] += (d * d) - reference.VarianceOfMean[i + c];
                }

                count[t] += 3;
            }
        }

        for (int t = 0; t < sum.Length; t++)
        {
            sum[t] = sum[t] / count[t] * scale;
        }

        return sum;
    }
}
