using PathBench.Sampling.Analysis;

namespace PathBench.Analysis;

/// <summary>One configuration's error at the study's common wall time.</summary>
/// <param name="Name">The configuration's name.</param>
/// <param name="Mse">MSE interpolated at <see cref="EqualTimeComparison.Seconds"/>; null when no fit exists.</param>
/// <param name="TimeSlope">Fitted slope of log MSE on log seconds (the exponent used to move along the time axis).</param>
/// <param name="Extrapolated">True when the common time lies outside the configuration's measured times.</param>
/// <param name="Rank">1 for the lowest MSE at equal time; null without a value.</param>
public sealed record EqualTimeEntry(string Name, double? Mse, double TimeSlope, bool Extrapolated, int? Rank);

/// <summary>
/// MSE of every configuration at one wall time. Each configuration's points (median seconds of a
/// render, corrected MSE) are fitted by a line in log-log space, MSE = a·t^b; the common time T is
/// the shortest of the configurations' times at the largest spp, so the fastest-finishing
/// configuration is read at its own last point and the others are interpolated back along their
/// fits. A configuration with one positive MSE is moved along MSE ∝ 1/t (the assumption behind
/// efficiency = 1/(MSE·t)) and marked extrapolated; one with none (an error below what the
/// reference resolves, e.g. a zero-variance estimator) reads 0.
/// </summary>
/// <param name="Seconds">The common wall time T of a whole-image render.</param>
/// <param name="Entries">One entry per configuration, in the study's order.</param>
public sealed record EqualTimeComparison(double Seconds, IReadOnlyList<EqualTimeEntry> Entries)
{
    /// <summary>The slope assumed when none can be fitted: MSE ∝ 1/time.</summary>
    public const double DefaultTimeSlope = -1;

    /// <summary>The names from the lowest MSE at equal time to the highest (those with a value).</summary>
    public IReadOnlyList<string> Ranking => [.. Entries.Where(e => e.Rank is not null).OrderBy(e => e.Rank).Select(e => e.Name)];

    /// <summary>The factor that moves a configuration's MSE at its largest spp (time <paramref name="seconds"/>) to time <paramref name="target"/>.</summary>
    public static double Scale(double seconds, double target, double timeSlope) =>
        seconds > 0 && target > 0 ? Math.Pow(target / seconds, timeSlope) : 1;

    /// <summary>Builds the comparison from the configurations' points.</summary>
    public static EqualTimeComparison Of(IReadOnlyList<ConfigurationSummary> configurations)
    {
        ArgumentNullException.ThrowIfNull(configurations);
        double target = configurations.Select(c => c.Points[^1].Seconds).Where(s => s > 0).DefaultIfEmpty(0).Min();
        var entries = new List<EqualTimeEntry>();
        foreach (ConfigurationSummary c in configurations)
        {
            StudyPoint[] positive = [.. c.Points.Where(p => p.Mse > 0 && p.Seconds > 0)];
            double? mse = null;
            double slope = DefaultTimeSlope;
            bool extrapolated = false;
            if (positive.Length >= 2 && target > 0)
            {
                LineFit fit = LineFit.Fit([.. positive.Select(p => Math.Log(p.Seconds))], [.. positive.Select(p => Math.Log(p.Mse))]);
                slope = fit.Slope;
                mse = Math.Exp(fit.Intercept + (fit.Slope * Math.Log(target)));
                extrapolated = target < positive[0].Seconds * (1 - 1e-9) || target > positive[^1].Seconds * (1 + 1e-9);
            }
            else if (positive.Length == 1 && target > 0)
            {
                mse = positive[0].Mse * Scale(positive[0].Seconds, target, slope);
                extrapolated = true;
            }
            else if (positive.Length == 0 && c.Points.Count > 0)
            {
                // No positive corrected MSE at any spp: the error is below what the reference can
                // resolve (a zero-variance estimator), so it is 0 at any time.
                mse = 0;
            }

            entries.Add(new EqualTimeEntry(c.Configuration.Name, mse, slope, extrapolated, null));
        }

        string[] order = [.. entries.Where(e => e.Mse is not null).OrderBy(e => e.Mse!.Value).Select(e => e.Name)];
        entries = [.. entries.Select(e => e.Mse is null ? e : e with { Rank = Array.IndexOf(order, e.Name) + 1 })];
        return new EqualTimeComparison(target, entries);
    }
}
