using PathBench.Sampling.Generators;
using PathBench.Sampling.Warps;

namespace PathBench.Sampling.Tests.Warps;

/// <summary>
/// Stratified hemisphere sampling is a stratified generator (jittered, multi-jittered) warped by the
/// hemisphere maps: it stays stratified only if each warp maps the cells of the square onto regions
/// of equal measure on the hemisphere, one sample in each. The regions are defined here by the
/// published inverses of the maps, not by the code under test: for the cosine warp the inverse of
/// the concentric map (Shirley &amp; Chiu 1997, "A low distortion map between disk and square",
/// J. Graphics Tools 2(3), §3) applied to the projection on the disk (Malley's method); for the
/// uniform warp u = 1 − z, v = φ/2π, whose cells have equal area by Archimedes' hat-box theorem
/// (area on the sphere = 2π·Δz). No randomness beyond fixed seeds.
/// </summary>
public sealed class StratifiedHemisphereTests
{
    // Shirley & Chiu's inverse: disk point → square point in [0, 1)².
    private static (double U, double V) InverseConcentric(double x, double y)
    {
        double r = Math.Sqrt(x * x + y * y);
        double phi = Math.Atan2(y, x);
        if (phi < -Math.PI / 4)
        {
            phi += 2 * Math.PI; // φ in [−π/4, 7π/4)
        }

        double a, b;
        if (phi < Math.PI / 4)
        {
            a = r;
            b = phi * a / (Math.PI / 4);
        }
        else if (phi < 3 * Math.PI / 4)
        {
            b = r;
            a = -(phi - Math.PI / 2) * b / (Math.PI / 4);
        }
        else if (phi < 5 * Math.PI / 4)
        {
            a = -r;
            b = (phi - Math.PI) * a / (Math.PI / 4);
        }
        else
        {
            b = -r;
            a = -(phi - 3 * Math.PI / 2) * b / (Math.PI / 4);
        }

        return ((a + 1) / 2, (b + 1) / 2);
    }

    private static (double U, double V) InverseUniform(Vec3d w)
    {
        double phi = Math.Atan2(w.Y, w.X);
        return (1 - w.Z, (phi < 0 ? phi + 2 * Math.PI : phi) / (2 * Math.PI));
    }

    public static TheoryData<string, string, int> Cases => new()
    {
        { "jittered", "cosine", 64 }, { "jittered", "uniform", 64 }, { "jittered", "cosine", 12 },
        { "multi-jittered", "cosine", 64 }, { "multi-jittered", "uniform", 36 },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void Each_warped_stratum_holds_one_sample(string generator, string hemisphere, int n)
    {
        for (ulong seed = 0; seed < 20; seed++)
        {
            Assert.Equal(0, DoubleHits(generator, hemisphere, n, seed));
        }
    }

    [Fact]
    public void Unstratified_samples_are_caught()
    {
        // The check must be able to fail: 64 independent points in 64 strata collide with
        // probability 1 − 64!/64^64 ≈ 1 − 3e-27.
        Assert.True(DoubleHits("random", "cosine", 64, 0) > 0);
    }

    private static int DoubleHits(string generator, string hemisphere, int n, ulong seed)
    {
        StratumGrid grid = StratumGrid.For(n);
        // The cell of a point near a cell edge is decided after a round trip through sin, cos and
        // atan2; points within 1e-9 of an edge would make the check depend on that rounding.
        const double edge = 1e-9;
        PointSampler s = SamplerCatalog.Create(new SamplerSpec(generator, Randomization.None, false, n, seed), 6);
        ulong key = s.PixelKey(3, 4);
        var hit = new bool[n];
        int doubles = 0;
        for (int i = 0; i < n; i++)
        {
            // Dimensions 4 and 5: the first vertex's direction pair in the path's layout.
            (double u, double v) = s.Sample2D(key, (uint)i, 4);
            (double U, double V) back;
            if (hemisphere == "cosine")
            {
                Vec3d w = Warp.CosineHemisphere(u, v);
                back = InverseConcentric(w.X, w.Y);
            }
            else
            {
                back = InverseUniform(Warp.UniformHemisphere(u, v));
            }

            double cu = back.U * grid.Columns, cv = back.V * grid.Rows;
            if (Math.Abs(cu - Math.Round(cu)) < edge || Math.Abs(cv - Math.Round(cv)) < edge)
            {
                continue;
            }

            int cell = (int)cu + grid.Columns * (int)cv;
            doubles += hit[cell] ? 1 : 0;
            hit[cell] = true;
        }

        return doubles;
    }

    [Fact]
    public void Concentric_strata_have_equal_area_on_the_disk()
    {
        // Shirley & Chiu 1997: the concentric map preserves area up to the constant π/4, so each of
        // the 4 × 4 cells maps to a disk region of area π/16 — under Malley's lift, equal
        // cosine-weighted measure. Counted on a 1200 × 1200 grid of the disk's bounding square:
        // each region's boundary crosses about 4·1200/4 grid rows, so the count errs by a few
        // hundred of its ~70 700 points; 1 % is well outside that.
        const int k = 4, grid = 1200;
        var counts = new int[k * k];
        int inside = 0;
        for (int i = 0; i < grid; i++)
        {
            for (int j = 0; j < grid; j++)
            {
                double x = -1 + (i + 0.5) * 2 / grid, y = -1 + (j + 0.5) * 2 / grid;
                if (x * x + y * y >= 1)
                {
                    continue;
                }

                (double u, double v) = InverseConcentric(x, y);
                counts[Math.Min(k - 1, (int)(u * k)) + k * Math.Min(k - 1, (int)(v * k))]++;
                inside++;
            }
        }

        Assert.All(counts, c => Assert.InRange(c, inside / 16.0 * 0.99, inside / 16.0 * 1.01));
    }

    [Fact]
    public void The_inverse_is_the_inverse_of_the_warp()
    {
        // Guards the reference: a wrong inverse could make the stratum check above pass or fail for the wrong reason.
        for (int i = 0; i < 500; i++)
        {
            double u = (i + 0.5) / 500, v = (i * 0.618034 + 0.1) % 1;
            (double x, double y) = Warp.ConcentricDisk(u, v);
            (double bu, double bv) = InverseConcentric(x, y);
            Assert.Equal(u, bu, 9);
            Assert.Equal(v, bv, 9);
            (double uu, double uv) = InverseUniform(Warp.UniformHemisphere(u, v));
            Assert.Equal(u, uu, 9);
            Assert.Equal(v, uv, 9);
        }
    }
}
