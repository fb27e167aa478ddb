using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Sampling.Tests.Sequences;

/// <summary>
/// Base-2 net structure. Owen (1995, Prop. 1) shows nested uniform scrambling maps a
/// (t, m, s)-net to a (t, m, s)-net with probability 1; a digital shift does too, since it
/// permutes the elementary intervals of every shape among themselves. So t must not change.
/// </summary>
public sealed class NetPropertyTests
{
    private static double[] Points(Randomization r, int n, int dims, ulong seed, int px = 0, int py = 0)
    {
        PointSampler s = SamplerCatalog.Create(new SamplerSpec("sobol", r, false, n, seed), dims);
        var points = new double[n * dims];
        s.Fill(s.PixelKey(px, py), dims, points);
        return points;
    }

    [Fact]
    public void The_first_two_sobol_dimensions_form_a_zero_m_two_net()
    {
        // Sobol (1967): dimensions 1 and 2 (van der Corput and its companion) give t = 0 for every m.
        for (int m = 1; m <= 12; m++)
        {
            Assert.Equal(0, NetQuality.TValue(Points(Randomization.None, 1 << m, 2, 0), 2, 0, 1));
        }
    }

    [Fact]
    public void A_set_with_a_bad_projection_has_large_t()
    {
        // Worked example (by hand, from the definition): 16 points on the diagonal,
        // x = y = (i + 0.5)/16. For t = 3 the boxes have p + q = 1: each half of the square
        // holds 8 = 2^3 points, a (3,4,2)-net. For t = 2 the 2 × 2 quadrants must hold 4 each,
        // but the diagonal puts 8 in two of them and 0 in the others. So t = 3.
        var points = new double[32];
        for (int i = 0; i < 16; i++)
        {
            points[2 * i] = points[2 * i + 1] = (i + 0.5) / 16;
        }

        Assert.Equal(3, NetQuality.TValue(points, 2, 0, 1));
    }

    public static TheoryData<Randomization> Randomizations => new() { Randomization.Owen, Randomization.DigitalShift };

    [Theory]
    [MemberData(nameof(Randomizations))]
    public void Scrambling_keeps_every_pair_t(Randomization r)
    {
        const int dims = 8;
        foreach (int m in new[] { 4, 7, 10 })
        {
            int n = 1 << m;
            double[] plain = Points(Randomization.None, n, dims, 0);
            for (ulong seed = 0; seed < 4; seed++)
            {
                double[] scrambled = Points(r, n, dims, seed, (int)seed * 3, 5);
                for (int a = 0; a < dims; a++)
                {
                    for (int b = a + 1; b < dims; b++)
                    {
                        Assert.Equal(NetQuality.TValue(plain, dims, a, b), NetQuality.TValue(scrambled, dims, a, b));
                    }
                }
            }
        }
    }

    [Fact]
    public void Owen_scrambling_changes_the_points()
    {
        // Guard against a scramble that silently does nothing: then the t test above would pass trivially.
        double[] plain = Points(Randomization.None, 64, 2, 0);
        double[] owen = Points(Randomization.Owen, 64, 2, 0);
        int same = plain.Zip(owen).Count(z => Math.Abs(z.First - z.Second) < 1e-6);
        Assert.True(same < 4, $"{same} of 128 coordinates unchanged");
    }
}
