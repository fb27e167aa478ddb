using PathBench.Rendering.Geometry;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Geometry;

public sealed class BvhTests
{
    private static double U(ulong k, uint i, int d) => SampleHash.Uniform(k, i, d);

    private static Primitive[] RandomScene(int n)
    {
        var prims = new Primitive[n];
        for (uint i = 0; i < n; i++)
        {
            var c = new Vec3d(U(1, i, 0) * 20 - 10, U(1, i, 1) * 20 - 10, U(1, i, 2) * 20 - 10);
            prims[i] = (i % 4) switch
            {
                0 => Primitive.Sphere(c, 0.1 + U(1, i, 3), 0),
                1 => Primitive.Quad(c, new(U(1, i, 4), 0, U(1, i, 5)), new(0, 1 + U(1, i, 6), 0), 0),
                2 => Primitive.Disk(c, new(U(1, i, 7) - 0.5, 1, U(1, i, 8) - 0.5), 0.5 + U(1, i, 9), 0),
                _ => Primitive.Triangle(c, c + new Vec3d(1, U(1, i, 10), 0), c + new Vec3d(0, 1, U(1, i, 11)), 0, -1),
            };
        }

        return prims;
    }

    [Fact]
    public void Closest_hit_and_occlusion_equal_brute_force()
    {
        // The BVH is an acceleration only: the nearest hit must be the one a test of every primitive finds.
        Primitive[] prims = RandomScene(400);
        var bvh = new Bvh(prims);
        for (uint r = 0; r < 3000; r++)
        {
            var origin = new Vec3d(U(2, r, 0) * 30 - 15, U(2, r, 1) * 30 - 15, U(2, r, 2) * 30 - 15);
            Vec3d dir = Warp.UniformSphere(U(2, r, 3), U(2, r, 4));
            // Every tenth ray is axis-aligned, to exercise zero direction components in the slab test.
            if (r % 10 == 0)
            {
                dir = new Vec3d(0, 0, r % 20 == 0 ? 1 : -1);
            }

            var ray = new Ray(origin, dir, double.PositiveInfinity);
            double best = double.PositiveInfinity;
            foreach (Primitive p in prims)
            {
                best = Math.Min(best, p.Intersect(ray, best));
            }

            bool hit = bvh.Intersect(ray, out SurfaceHit h);
            Assert.Equal(double.IsFinite(best), hit);
            if (hit)
            {
                Assert.Equal(best, h.T);
                Assert.True(bvh.Occluded(ray, best * 1.0001));
                Assert.False(bvh.Occluded(ray, best * 0.9999));
            }
        }
    }

    [Fact]
    public void Sphere_hit_is_on_the_sphere_at_the_geometric_distance()
    {
        // Worked example: a ray from (0,0,−5) along +z hits the unit sphere at z = −1, t = 4.
        var s = Primitive.Sphere(new(0, 0, 0), 1, 0);
        Assert.Equal(4.0, s.Intersect(new Ray(new(0, 0, -5), new(0, 0, 1), double.PositiveInfinity), double.PositiveInfinity), 12);
        // From inside, the far side: t = 1.
        Assert.Equal(1.0, s.Intersect(new Ray(new(0, 0, 0), new(0, 0, 1), double.PositiveInfinity), double.PositiveInfinity), 12);
    }

    [Fact]
    public void Quad_normal_is_edge_u_cross_edge_v()
    {
        var q = Primitive.Quad(new(0, 0, 0), new(1, 0, 0), new(0, 1, 0), 0);
        Assert.Equal(new Vec3d(0, 0, 1), q.Normal);
        Assert.Equal(1.0, q.Area, 12);
        Assert.True(double.IsPositiveInfinity(q.Intersect(new Ray(new(1.5, 0.5, 1), new(0, 0, -1), double.PositiveInfinity), double.PositiveInfinity)));
        Assert.Equal(1.0, q.Intersect(new Ray(new(0.5, 0.5, 1), new(0, 0, -1), double.PositiveInfinity), double.PositiveInfinity), 12);
    }
}
