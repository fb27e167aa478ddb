using PathBench.Rendering.Geometry;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Geometry;

/// <summary>
/// Watertightness (Woop, Benthin &amp; Wald 2013, "Watertight Ray/Triangle Intersection", JCGT
/// 2(1), §1: "a ray passing through a shared edge or vertex must hit at least one of the
/// triangles"): rays aimed exactly at the shared vertices and at points on the shared edges of
/// a closed-around mesh must never miss all of them, through the primitive test and through the BVH.
/// </summary>
public sealed class WatertightTriangleTests
{
    private const int N = 24;

    private static double U(ulong k, uint i, int d) => SampleHash.Uniform(k, i, d);

    /// <summary>A gently bumpy N × N height field over [0, 1)², two triangles per cell, vertices shared (fixed seed 5).</summary>
    private static (Vec3d[] Vertices, Primitive[] Triangles) HeightField()
    {
        var v = new Vec3d[(N + 1) * (N + 1)];
        for (int j = 0; j <= N; j++)
        {
            for (int i = 0; i <= N; i++)
            {
                // Irrational-looking jitter keeps the coordinates off any binary grid.
                double x = (i + 0.3 * (U(5, (uint)(j * 97 + i), 0) - 0.5)) / N * 3.7;
                double y = (j + 0.3 * (U(5, (uint)(j * 97 + i), 1) - 0.5)) / N * 2.9;
                v[j * (N + 1) + i] = new Vec3d(x, y, 0.03 * U(5, (uint)(j * 97 + i), 2) + 0.1 * x);
            }
        }

        var t = new List<Primitive>();
        for (int j = 0; j < N; j++)
        {
            for (int i = 0; i < N; i++)
            {
                int a = j * (N + 1) + i, b = a + 1, c = a + N + 1, d = c + 1;
                bool flip = ((i + j) & 1) == 0; // alternate the diagonal so vertices have fans of 4 and 8
                t.Add(Primitive.Triangle(v[a], v[b], flip ? v[d] : v[c], 0, -1));
                t.Add(flip ? Primitive.Triangle(v[a], v[d], v[c], 0, -1) : Primitive.Triangle(v[b], v[d], v[c], 0, -1));
            }
        }

        return (v, t.ToArray());
    }

    /// <summary>Targets: every interior vertex, and points on interior edges (midpoints and random fractions), rounded to doubles.</summary>
    private static IEnumerable<Vec3d> Targets(Vec3d[] v)
    {
        for (int j = 1; j < N; j++)
        {
            for (int i = 1; i < N; i++)
            {
                Vec3d p = v[j * (N + 1) + i];
                yield return p;
                double f = U(6, (uint)(j * 97 + i), 0);
                yield return p + (v[j * (N + 1) + i + 1] - p) * 0.5;
                yield return p + (v[(j + 1) * (N + 1) + i] - p) * f;
                if (((i + j) & 1) == 0)
                {
                    yield return p + (v[(j + 1) * (N + 1) + i + 1] - p) * f; // the cell's diagonal is an edge when flipped
                }
            }
        }
    }

    [Fact]
    public void Rays_through_shared_edges_and_vertices_never_miss()
    {
        (Vec3d[] v, Primitive[] tris) = HeightField();
        var bvh = new Bvh(tris);
        int rays = 0, missesPrimitive = 0, missesBvh = 0;
        uint k = 0;
        foreach (Vec3d target in Targets(v))
        {
            // Eight origins above the surface per target, in every azimuth, at least 37° above the
            // horizon: the surface's slopes stay under 21° (bumps of 0.03 over cells of 0.12 plus a
            // tilt of 0.1), so no target lies on a silhouette, where a ray may rightly touch and pass.
            for (int r = 0; r < 8; r++, k++)
            {
                Vec3d dir = Warp.UniformSphere(0.5 * U(7, k, 0), U(7, k, 1)); // upper hemisphere (z = 1 − 2u ≥ 0)
                if (dir.Z < 0.6)
                {
                    dir = new Vec3d(dir.X, dir.Y, 0.6).Normalized();
                }

                Vec3d origin = target + dir * (1 + 3 * U(7, k, 2));
                Vec3d toward = (target - origin).Normalized();
                var ray = new Ray(origin, toward, double.PositiveInfinity);
                rays++;
                bool any = false;
                foreach (Primitive p in tris)
                {
                    any |= double.IsFinite(p.Intersect(ray, double.PositiveInfinity));
                }

                missesPrimitive += any ? 0 : 1;
                missesBvh += bvh.Intersect(ray, out _) ? 0 : 1;
            }
        }

        Assert.True(rays > 10_000, "too few rays to mean anything");
        Assert.True(missesPrimitive == 0, $"{missesPrimitive} of {rays} rays through shared edges or vertices missed every triangle");
        Assert.True(missesBvh == 0, $"{missesBvh} of {rays} such rays missed through the BVH");
    }

    [Fact]
    public void Winding_and_distance_of_a_worked_example()
    {
        // Worked example: the triangle (0,0,0), (1,0,0), (0,1,0) seen from z = 2 along −z at (0.25, 0.25): t = 2,
        // from either side (no back-face culling), and missed just outside the hypotenuse.
        var t = Primitive.Triangle(new(0, 0, 0), new(1, 0, 0), new(0, 1, 0), 0, -1);
        Assert.Equal(2.0, t.Intersect(new Ray(new(0.25, 0.25, 2), new(0, 0, -1), double.PositiveInfinity), double.PositiveInfinity), 14);
        Assert.Equal(3.0, t.Intersect(new Ray(new(0.25, 0.25, -3), new(0, 0, 1), double.PositiveInfinity), double.PositiveInfinity), 14);
        Assert.True(double.IsPositiveInfinity(t.Intersect(new Ray(new(0.5, 0.5000001, 2), new(0, 0, -1), double.PositiveInfinity), double.PositiveInfinity)));
        Assert.True(double.IsPositiveInfinity(t.Intersect(new Ray(new(0.25, 0.25, 2), new(0, 0, -1), 1.9), 1.9)));
    }
    [Fact]
    public void Branch_free_shear_picks_the_papers_axes_and_coefficients()
    {
        // Woop, Benthin & Wald 2013, §3: kz is the axis of the direction's largest |component|,
        // kx = kz + 1 and ky = kx + 1 (mod 3), swapped when d[kz] < 0; Sx = d[kx]/d[kz],
        // Sy = d[ky]/d[kz], Sz = 1/d[kz]. RayShear's constructor picks them without branches and
        // must give the nested form's choice (RayShear.Reference) and bits for every direction:
        // random ones (fixed seed 31) and all sign patterns of ties, zeros and negative zeros.
        var directions = new List<Vec3d>();
        for (uint i = 0; i < 20000; i++)
        {
            directions.Add(Warp.UniformSphere(U(31, i, 0), U(31, i, 1)));
        }

        double[] values = [0.0, -0.0, 0.5, -0.5, 1.0, -1.0, 0.25, -0.25];
        foreach (double x in values)
        {
            foreach (double y in values)
            {
                foreach (double z in values)
                {
                    if (x != 0 || y != 0 || z != 0)
                    {
                        directions.Add(new Vec3d(x, y, z));
                    }
                }
            }
        }

        foreach (Vec3d d in directions)
        {
            var shear = new RayShear(d);
            (int kx, int ky, int kz, double sx, double sy, double sz) = RayShear.Reference(d);
            Assert.True((shear.Kx, shear.Ky, shear.Kz) == (kx, ky, kz), $"axes of {d}: ({shear.Kx}, {shear.Ky}, {shear.Kz}), the paper's ({kx}, {ky}, {kz})");
            Assert.Equal(BitConverter.DoubleToInt64Bits(sx), BitConverter.DoubleToInt64Bits(shear.Sx));
            Assert.Equal(BitConverter.DoubleToInt64Bits(sy), BitConverter.DoubleToInt64Bits(shear.Sy));
            Assert.Equal(BitConverter.DoubleToInt64Bits(sz), BitConverter.DoubleToInt64Bits(shear.Sz));
            var p = new Vec3d(1.5, -2.25, 3.125);
            Assert.Equal(p[kx], shear.X(p));
            Assert.Equal(p[ky], shear.Y(p));
            Assert.Equal(p[kz], shear.Pick(p));
        }
    }
}
