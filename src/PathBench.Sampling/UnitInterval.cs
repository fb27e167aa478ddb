namespace PathBench.Sampling;

/// <summary>Keeps coordinates in [0, 1): (c − 1 + u)/c with u just below 1 rounds to exactly 1 in double.</summary>
internal static class UnitInterval
{
    /// <summary>The largest double below 1.</summary>
    public static readonly double BelowOne = Math.BitDecrement(1.0);

    /// <summary><paramref name="x"/>, or the largest double below 1 where rounding reached 1.</summary>
    public static double Clamp(double x) => x < 1.0 ? x : BelowOne;
}
