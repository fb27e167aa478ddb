namespace PathBench.Imaging.Tests;

/// <summary>
/// Shared comparison of computed values with reference values. Relative tolerance with an
/// absolute floor, so values near zero (bias of an unbiased image) are not held to an
/// impossible relative bound.
/// </summary>
internal static class Tolerance
{
    /// <summary>
    /// Agreement expected between two double-precision evaluations of the same formula whose
    /// sums run in different orders (ours in row blocks, numpy pairwise): 1e-9 relative is
    /// ~10^7 ulp of slack for sums of ~10^4 terms (common practice), far below any real bug.
    /// </summary>
    public const double SameFormula = 1e-9;

    /// <summary>Asserts |actual − expected| ≤ rel·|expected| + abs, with a message naming the quantity.</summary>
    public static void Close(double expected, double actual, string what, double rel = SameFormula, double abs = 1e-12)
    {
        if (double.IsPositiveInfinity(expected) || double.IsNegativeInfinity(expected))
        {
            Assert.True(expected == actual, $"{what}: expected {expected}, got {actual}");
            return;
        }

        double bound = (rel * Math.Abs(expected)) + abs;
        Assert.True(
            Math.Abs(actual - expected) <= bound,
            FormattableString.Invariant($"{what}: expected {expected:R}, got {actual:R} (|diff| {Math.Abs(actual - expected):E3} > {bound:E3})"));
    }
}
