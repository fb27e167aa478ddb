using PathBench.Rendering;

namespace PathBench.Rendering.Tests.FilmAccumulation;

/// <summary>
/// The film's per-pixel variance against closed forms. Samples alternating between two values a
/// and b (n even) have mean (a + b)/2 and unbiased sample variance (b − a)²/4 · n/(n − 1) (the
/// two-point distribution; the n/(n − 1) is Bessel's correction). a and b are exact multiples of
/// 2^-32, so the fixed-point rounding adds nothing and the expected values are exact.
/// </summary>
public sealed class FilmVarianceTests
{
    public static TheoryData<string, double, double, int> TwoPointPixels => new()
    {
        // Dark: the squares (~2^-40) lie far below the 2^-32 value resolution.
        { "dark_2^-20", Math.ScaleB(1, -20), Math.ScaleB(1, -20) + Math.ScaleB(1, -26), 64 },
        // Darker still: a, b of a few units of 2^-32.
        { "darkest_3_and_7_units", Math.ScaleB(3, -32), Math.ScaleB(7, -32), 10 },
        // Bright and quiet: the variance (~2^-42) is 10^-19 of the squared mean, below double's resolution of Σv²/n − mean².
        { "bright_quiet_1000", 1000, 1000 + Math.ScaleB(1, -20), 1000 },
        // Near the top of the range: squares near 2^62 ·2^64, so the 128-bit low words carry.
        { "large_2^31", Math.ScaleB(1, 31), Math.ScaleB(1, 31) - 1, 8 },
        { "signed_-5_and_3", -5, 3, 4 },
        // Straddling 2^32: a goes to the fixed-point planes, b to the wide sums; both hold q = v · 2^32 exactly.
        { "straddling_2^32", Math.ScaleB(1, 32) - 1024, Math.ScaleB(1, 32) + 4096, 6 },
        // Far above the planes, bright and quiet: 2^80 apart at 10^30 (ulp 2^47), a variance 2^-39 of the squared mean.
        { "bright_1e30", 1e30, 1e30 + Math.ScaleB(1, 80), 16 },
        // Near the top of float: the sums reach 2^159 · n, the squares 2^318 · n.
        { "sky_1e38_and_3e38", 1e38, 3e38, 4 },
        // Beyond float, within double: means and variances that double still holds.
        { "beyond_float_1e150", -1e150, 2e150, 8 },
    };

    [Theory]
    [MemberData(nameof(TwoPointPixels))]
    public void Variance_of_two_alternating_values_matches_the_closed_form(string name, double a, double b, int n)
    {
        var film = new Film(2, 1);
        var acc = default(PixelAccumulator);
        for (int k = 0; k < n; k++)
        {
            acc.Add(new Rgb(k % 2 == 0 ? a : b, a, 0));
        }

        film.Store(1, 0, acc);
        double expected = (b - a) * (b - a) / 4 * n / (n - 1);
        Assert.Equal((a + b) / 2, film.Mean(1, 0, 0), 1e-15 * Math.Max(1, Math.Max(Math.Abs(a), Math.Abs(b))));
        Assert.Equal(a, film.Mean(1, 0, 1), 1e-15 * Math.Max(1, Math.Abs(a)));
        double relative = Math.Abs(film.Variance(1, 0, 0) - expected) / expected;
        Assert.True(relative < 1e-14, FormattableString.Invariant($"{name}: variance {film.Variance(1, 0, 0):R}, closed form {expected:R}"));
        Assert.Equal(expected / n, film.VarianceOfMean(1, 0, 0), expected / n * 1e-14);

        // A constant channel has zero variance exactly, and a pixel with no samples reports 0.
        Assert.Equal(0, film.Variance(1, 0, 1));
        Assert.Equal(0, film.Variance(0, 0, 0));
    }

    [Fact]
    public void Merged_films_hold_the_variance_of_all_their_samples()
    {
        // Two halves of the same alternating stream merged: the closed form of the whole (n = 2·8).
        double a = Math.ScaleB(1, 31);
        double b = a - 1;
        var first = new Film(1, 1);
        var second = new Film(1, 1);
        foreach (Film f in new[] { first, second })
        {
            var acc = default(PixelAccumulator);
            for (int k = 0; k < 8; k++)
            {
                acc.Add(new Rgb(k % 2 == 0 ? a : b, 0, 0));
            }

            f.Store(0, 0, acc);
        }

        first.Merge(second);
        double expected = (b - a) * (b - a) / 4 * 16 / 15;
        Assert.Equal(expected, first.Variance(0, 0, 0), expected * 1e-14);
    }
}
