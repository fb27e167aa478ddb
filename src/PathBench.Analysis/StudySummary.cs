using MathNet.Numerics.Distributions;
using PathBench.Sampling.Analysis;

namespace PathBench.Analysis;

/// <summary>One configuration at one sample count, over its replicates.</summary>
/// <param name="Spp">Samples per pixel.</param>
/// <param name="Replicates">Replicates measured (1 for a deterministic configuration).</param>
/// <param name="Mse">Mean corrected MSE over replicates.</param>
/// <param name="MseLow">Lower end of the 95 % interval of the mean (Student's t, K − 1 dof); null with one replicate.</param>
/// <param name="MseHigh">Upper end of that interval; null with one replicate.</param>
/// <param name="MseUncorrected">Mean MSE before the reference-variance correction.</param>
/// <param name="RelMse">Mean corrected relMSE.</param>
/// <param name="EstimatorVariance">Mean over pixels and channels of the variance across replicates; null with one replicate.</param>
/// <param name="Bias">Mean over pixels and channels of (mean over replicates − reference).</param>
/// <param name="BiasZ">Bias over its standard error (see <see cref="StudySummary"/>); null with one replicate.</param>
/// <param name="BiasedTiles">16×16 tiles whose bias is significant at family-wise <see cref="StudySummary.TileAlpha"/> (Šidák); null with one replicate.</param>
/// <param name="Seconds">Median wall time over replicates of a render of this many samples.</param>
/// <param name="SecondsMin">Fastest replicate.</param>
/// <param name="SecondsMax">Slowest replicate.</param>
public sealed record StudyPoint(
    int Spp,
    int Replicates,
    double Mse,
    double? MseLow,
    double? MseHigh,
    double MseUncorrected,
    double RelMse,
    double? EstimatorVariance,
    double Bias,
    double? BiasZ,
    int? BiasedTiles,
    double Seconds,
    double SecondsMin,
    double SecondsMax)
{
    /// <summary>Median seconds per sample per pixel: the render time of the whole image divided by spp.</summary>
    public double SecondsPerSample => Seconds / Spp;

    /// <summary>1 / (MSE × seconds); null when the corrected MSE is not positive.</summary>
    public double? Efficiency => Mse > 0 && Seconds > 0 ? 1 / (Mse * Seconds) : null;
}

/// <summary>A configuration's results at every spp, with its convergence fit.</summary>
/// <param name="Configuration">The configuration.</param>
/// <param name="Points">One point per spp of the ladder.</param>
/// <param name="Slope">Least-squares slope of log MSE on log spp; null with fewer than two positive MSEs.</param>
/// <param name="Theory">The rates published for the generator, for comparison.</param>
/// <param name="Notes">What the reader of the numbers must know (deterministic, fitted on fewer points, …).</param>
/// <param name="Structure">How far its noise at the largest spp is from white; null for a deterministic configuration.</param>
public sealed record ConfigurationSummary(StudyConfiguration Configuration, IReadOnlyList<StudyPoint> Points, LineFit? Slope, TheoryRate Theory, IReadOnlyList<string> Notes, StructureScore? Structure);

/// <summary>
/// The MSE convergence rates theory gives a generator, as exponents of N in MSE ∝ N^e, for smooth
/// integrands and for integrands with discontinuities (edges, shadows), with the source.
/// </summary>
/// <param name="Smooth">Exponent for smooth integrands; null when no rate is published for this use.</param>
/// <param name="Discontinuous">Exponent for integrands with discontinuities.</param>
/// <param name="Source">Where the rates are stated.</param>
public sealed record TheoryRate(double? Smooth, double? Discontinuous, string Source)
{
    /// <summary>The power L of a log factor in the smooth rate, MSE ∝ N^Smooth·(log N)^L: 1 for Owen-scrambled nets in 2-D (Owen 1997, (log N)^(s−1)); 0 when none.</summary>
    public double SmoothLogPower { get; init; }

    /// <summary>The rates for a generator and randomization (2-D pixel integrands; path dimensions beyond add no better rate).</summary>
    public static TheoryRate For(StudyConfiguration c)
    {
        ArgumentNullException.ThrowIfNull(c);
        if (!c.IsRandomized)
        {
            return new TheoryRate(null, null, "a deterministic rule has no variance; its error is bias, not noise");
        }

        return c.Generator switch
        {
            "random" => new TheoryRate(-1, -1, "independent Monte Carlo: variance σ²/N for any square-integrable integrand"),
            "jittered" or "pj" => new TheoryRate(-2, -1.5, "stratified sampling in 2-D: Pilleboue et al. 2015, ACM TOG 34(4)"),
            // One shuffle shared by all columns and one by all rows (Kensler 2013) make each row's x-offsets
            // equal: for smooth integrands the error is a sum over a random permutation pairing (variance by
            // Hoeffding 1951), N²·MSE ∝ √N; derived and checked in MultiJitteredRateTests.
            "multi-jittered" => new TheoryRate(-1.5, -1.5, "correlated multi-jittered (Kensler 2013): the shared shuffles give MSE ∝ N^-3/2 on smooth integrands (Hoeffding 1951 for the permutation sum); with edges as jittered, Pilleboue et al. 2015"),
            "pmj02" when c.Randomization == Sampling.Generators.Randomization.Owen => new TheoryRate(-3, -1.5, "Owen-scrambled (0,m,2)-nets: Owen 1997, Ann. Statist. 25(4); progressive construction: Christensen, Kensler & Kilpatrick 2018") { SmoothLogPower = 1 },
            "latin-hypercube" => new TheoryRate(-1, -1, "Latin hypercube: variance o(1/N), no better rate for non-additive integrands; McKay, Beckman & Conover 1979; Stein 1987"),
            "sobol" when c.Randomization == Sampling.Generators.Randomization.Owen => new TheoryRate(-3, -1.5, "Owen-scrambled nets: Owen 1997, Ann. Statist. 25(4) (smooth, up to log factors); discontinuous rate from memory") { SmoothLogPower = 1 },
            "bluenoise" when c.Randomization == Sampling.Generators.Randomization.Owen => new TheoryRate(-3, -1.5, "each pixel an Owen-scrambled Sobol net: Owen 1997, Ann. Statist. 25(4) (smooth, up to log factors); the blue-noise seeds (Heitz et al. 2019) move error between pixels, not its rate; discontinuous rate from memory") { SmoothLogPower = 1 },
            _ => new TheoryRate(null, null, "no rate published for this generator and randomization that we rely on"),
        };
    }
}

/// <summary>
/// The statistics of a finished study.
/// <para>
/// Intervals: the 95 % interval of a mean over K replicates is mean ± t(0.975, K − 1)·s/√K
/// (Student's t). The slope is an ordinary least-squares fit of log MSE on log spp with the
/// slope's 95 % interval (<see cref="LineFit"/>).
/// </para>
/// <para>
/// Bias: z over the image and per 16×16 tile as <see cref="BiasTest"/> computes it; a tile is reported biased when
/// its two-sided p-value is below the Šidák level for a family-wise false-alarm rate of 0.001 over
/// all tiles, α' = 1 − (1 − 0.001)^(1/T) (Šidák 1967, JASA 62). With heavy-tailed pixels and few
/// replicates the normal approximation behind z is rough, so the tile count is a screen, not a verdict.
/// </para>
/// </summary>
public sealed class StudySummary
{
    /// <summary>Tile edge of the per-tile bias test, in pixels.</summary>
    public const int TileSize = 16;

    /// <summary>Family-wise false-alarm rate of the per-tile bias test.</summary>
    public const double TileAlpha = 0.001;

    /// <summary>The share of the measured MSE above which the reference's own noise draws a warning.</summary>
    public const double ReferenceNoiseWarning = 0.10;

    private StudySummary(StudyResult result, IReadOnlyList<ConfigurationSummary> configurations, IReadOnlyList<string> warnings, EqualTimeComparison equalTime, WinMap winMap)
    {
        Result = result;
        Configurations = configurations;
        Warnings = warnings;
        EqualTime = equalTime;
        WinMap = winMap;
    }

    /// <summary>Every configuration's MSE at one common wall time, and their ranking.</summary>
    public EqualTimeComparison EqualTime { get; }

    /// <summary>Which configuration wins each tile at equal time.</summary>
    public WinMap WinMap { get; }

    /// <summary>The measurements summarised.</summary>
    public StudyResult Result { get; }

    /// <summary>One summary per configuration, in the study's order.</summary>
    public IReadOnlyList<ConfigurationSummary> Configurations { get; }

    /// <summary>Warnings about the study as a whole (a noisy reference, …).</summary>
    public IReadOnlyList<string> Warnings { get; }

    /// <summary>Summarises a finished study.</summary>
    public static StudySummary Of(StudyResult result)
    {
        ArgumentNullException.ThrowIfNull(result);
        ReferenceImage reference = result.Reference;
        int tilesX = (reference.Width + TileSize - 1) / TileSize;
        int tilesY = (reference.Height + TileSize - 1) / TileSize;
        int tiles = tilesX * tilesY;

        var warnings = new List<string>();
        if (!reference.HasVariance)
        {
            warnings.Add("the reference has no variance file: its own noise is taken as zero, so MSE is not corrected for it");
        }

        var list = new List<ConfigurationSummary>();
        foreach (StudyConfiguration c in result.Study.Configurations)
        {
            var points = new List<StudyPoint>();
            var notes = new List<string>();
            if (!c.IsRandomized)
            {
                notes.Add($"{c.Generator} with randomize none is deterministic: rendered once, so no intervals, variance or bias z");
            }

            notes.Add(c.IsProgressive
                ? "progressive: each replicate is one render measured after each spp of the ladder"
                : "count-dependent: each spp is a separate render");

            foreach (int spp in result.Study.Spp)
            {
                StudySample[] runs = [.. result.Samples.Where(s => s.Configuration == c.Name && s.Spp == spp)];
                StudyPoint point = Point(spp, runs, result.Moments[(c.Name, spp)], reference);
                points.Add(point);
                if (reference.MeanVariance > ReferenceNoiseWarning * point.MseUncorrected)
                {
                    warnings.Add(FormattableString.Invariant(
                        $"{c.Name} at {spp} spp: the reference's variance ({reference.MeanVariance:G3}) is {100 * reference.MeanVariance / point.MseUncorrected:F0} % of the measured MSE ({point.MseUncorrected:G3}); render the reference with more samples"));
                }
            }

            StudyPoint[] positive = [.. points.Where(p => p.Mse > 0)];
            LineFit? fit = null;
            if (positive.Length >= 2)
            {
                fit = LineFit.Fit([.. positive.Select(p => Math.Log(p.Spp))], [.. positive.Select(p => Math.Log(p.Mse))]);
                if (positive.Length < points.Count)
                {
                    notes.Add(FormattableString.Invariant($"slope fitted on the {positive.Length} of {points.Count} sample counts whose corrected MSE is positive"));
                }
            }
            else
            {
                notes.Add("no slope: fewer than two sample counts with a positive corrected MSE");
            }

            StructureScore? structure = StructureScore.Measure(result.FinalImages[c.Name], reference.Width, reference.Height);
            if (structure is null)
            {
                notes.Add("no structure score: it needs at least two replicates");
            }

            list.Add(new ConfigurationSummary(c, points, fit, TheoryRate.For(c), notes, structure));
        }

        EqualTimeComparison equalTime = EqualTimeComparison.Of(list);
        double[] scales = [.. list.Select((c, i) => EqualTimeComparison.Scale(c.Points[^1].Seconds, equalTime.Seconds, equalTime.Entries[i].TimeSlope))];
        WinMap winMap = WinMap.Build(reference, [.. list.Select(c => (IReadOnlyList<float[]>)result.FinalImages[c.Configuration.Name])], scales);
        return new StudySummary(result, list, warnings, equalTime, winMap);
    }

    private static StudyPoint Point(int spp, StudySample[] runs, PixelMoments moments, ReferenceImage reference)
    {
        int k = runs.Length;
        double[] mse = [.. runs.Select(r => r.Error.Mse)];
        double mean = mse.Average();
        double? low = null, high = null;
        if (k >= 2)
        {
            double sd = Math.Sqrt(mse.Sum(m => (m - mean) * (m - mean)) / (k - 1));
            double half = StudentT.InvCDF(0, 1, k - 1, 0.975) * sd / Math.Sqrt(k);
            low = mean - half;
            high = mean + half;
        }

        double[] seconds = [.. runs.Select(r => r.Seconds).Order()];
        double median = seconds.Length % 2 == 1 ? seconds[seconds.Length / 2] : (seconds[(seconds.Length / 2) - 1] + seconds[seconds.Length / 2]) / 2;

        BiasTest bias = BiasTest.Of(moments, reference, TileSize);
        return new StudyPoint(
            spp, k, mean, low, high,
            runs.Average(r => r.Error.MseUncorrected),
            runs.Average(r => r.Error.RelMse),
            bias.EstimatorVariance,
            bias.MeanBias,
            bias.ImageZ,
            k >= 2 ? bias.TilesBelow(TileAlpha) : null,
            median,
            seconds[0],
            seconds[^1]);
    }
}
