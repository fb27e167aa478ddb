using System.Runtime.Intrinsics;
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

    [Theory]
    [InlineData(0.0)]
    [InlineData(1e5 + (1.0 / 3))]
    public void Closest_hit_and_occlusion_equal_brute_force(double offset)
    {
        // The BVH is an acceleration only: the nearest hit must be the one a test of every
        // primitive finds, exactly. The offset scene sits where single-precision boxes round by
        // about 0.004 (1e5 is far from 0), so the rounding of the stored boxes is exercised.
        var shift = new Vec3d(offset, -offset / 5, offset / 7);
        Primitive[] prims = RandomScene(400).Select(p => Shift(p, shift)).ToArray();
        var bvh = new Bvh(prims);
        for (uint r = 0; r < 3000; r++)
        {
            var origin = shift + new Vec3d(U(2, r, 0) * 30 - 15, U(2, r, 1) * 30 - 15, U(2, r, 2) * 30 - 15);
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

    /// <summary>
    /// The BVH against a brute-force loop over an intersection routine of its own, written apart
    /// from <see cref="Primitive.Intersect"/>: the plane's hit point expressed in the shape's
    /// edges by solving the 2 × 2 Gram system (triangles, quads), the distance to the centre
    /// (disks), the textbook quadratic (spheres). Each reference hit carries a margin, how far
    /// inside the shape's boundary it is relative to the shape's size; hits within 1e-7 of a
    /// boundary may go either way (the two routines round differently), all others must agree.
    /// Near-grazing rays (1e-3 to 1e-9 radians off a planar shape's plane) are a third of the set.
    /// </summary>
    [Fact]
    public void Closest_hit_equals_an_independent_brute_force_reference_with_grazing_rays()
    {
        const double Boundary = 1e-7;
        Primitive[] prims = RandomScene(600);
        var bvh = new Bvh(prims);
        int grazingHits = 0;
        for (uint r = 0; r < 6000; r++)
        {
            Ray ray = r % 3 == 2 ? GrazingRay(prims, r) : RandomRay(r);
            double tRobust = double.PositiveInfinity;
            var reference = new (double T, double Margin)[prims.Length];
            for (int i = 0; i < prims.Length; i++)
            {
                reference[i] = ReferenceIntersect(prims[i], ray);
                if (reference[i].Margin > Boundary)
                {
                    tRobust = Math.Min(tRobust, reference[i].T);
                }
            }

            if (!bvh.Intersect(ray, out SurfaceHit hit))
            {
                Assert.True(double.IsPositiveInfinity(tRobust), $"ray {r}: the BVH missed a hit at t = {tRobust}");
                continue;
            }

            (double tRef, double margin) = reference[bvh.PrimitiveOrder[hit.Primitive]];
            Assert.True(margin > -Boundary, $"ray {r}: the BVH hit primitive {bvh.PrimitiveOrder[hit.Primitive]}, which the reference misses (margin {margin})");
            Assert.True(Math.Abs(tRef - hit.T) <= 1e-7 * (1 + hit.T), $"ray {r}: t = {hit.T}, reference {tRef}");
            Assert.True(hit.T <= tRobust * (1 + 1e-7), $"ray {r}: the BVH's hit at {hit.T} is behind the reference's {tRobust}");
            grazingHits += r % 3 == 2 ? 1 : 0;
        }

        Assert.True(grazingHits > 1000, $"only {grazingHits} grazing rays hit: the set does not test what it claims");
    }

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void Wide_hierarchy_finds_the_hits_of_the_scalar_reference(bool vectorised)
    {
        // The fast path (four-wide, 256-bit slab tests, or its scalar fallback) against the plain
        // binary tree it replaced: same distance, same primitive, same occlusion, for random,
        // axis-aligned and grazing rays. The arithmetic of the primitive tests is identical, so
        // exact equality is the tolerance; only exact ties between two primitives could differ.
        Primitive[] prims = RandomScene(600);
        var wide = new Bvh(prims) { Vectorised = vectorised };
        var reference = new ReferenceBvh(prims);
        for (uint r = 0; r < 6000; r++)
        {
            Ray ray = r % 3 == 2 ? GrazingRay(prims, r) : RandomRay(r);
            if (r % 3 == 1)
            {
                ray = ray with { Direction = new Vec3d(0, r % 2 == 0 ? 1 : -1, 0) };
            }

            bool a = wide.Intersect(ray, out SurfaceHit h);
            bool b = reference.Intersect(ray, out SurfaceHit g);
            Assert.Equal(b, a);
            if (a)
            {
                Assert.Equal(g.T, h.T);
                Assert.Equal(reference.PrimitiveOrder[g.Primitive], wide.PrimitiveOrder[h.Primitive]);
                Assert.Equal(g.Point, h.Point);
                Assert.Equal(g.GeometricNormal, h.GeometricNormal);
            }

            double limit = a ? h.T * (1 + (1e-9 * (r % 2))) : 1e3;
            Assert.Equal(reference.Occluded(ray, limit), wide.Occluded(ray, limit));
        }
    }

    [Fact]
    public void Four_triangle_test_equals_the_scalar_test_on_a_closed_mesh()
    {
        // Leaves of triangles only are tested four at a time from their hit records; each lane
        // does the scalar watertight test's operations (Woop, Benthin & Wald 2013, "Watertight
        // Ray/Triangle Intersection", JCGT 2(1)), so the distance and the primitive must be
        // bit-identical to the scalar fallback's, ties between triangles included (lanes are taken
        // in leaf order), and the distance identical to the binary reference's. A third of the
        // rays aim exactly at a mesh vertex and a third at the midpoint of a shared edge: the
        // paper's watertightness says a ray from outside through a closed mesh's vertex or edge
        // hits it, so every one of those must hit. Those rays run along a line from the centre,
        // which crosses the star-shaped surface once, across it (never along a silhouette).
        var centre = new Vec3d(0.3, -0.2, 0.1);
        Primitive[] mesh = BumpySphere(centre, 2.0, 48, 24);
        var vector = new Bvh(mesh) { Vectorised = true };
        var scalar = new Bvh(mesh) { Vectorised = false };
        var reference = new ReferenceBvh(mesh);
        int aimed = 0;
        for (uint r = 0; r < 6000; r++)
        {
            Primitive p = mesh[(int)(U(6, r, 3) * mesh.Length)];
            Vec3d target = r % 3 == 0 ? p.A : (p.A + p.B) * 0.5;
            Vec3d origin = centre + ((target - centre) * (2 + U(6, r, 2)));
            if (r % 3 == 2)
            {
                origin = Warp.UniformSphere(U(6, r, 0), U(6, r, 1)) * (5 + (3 * U(6, r, 2)));
                target = origin + Warp.UniformSphere(U(6, r, 4), U(6, r, 5));
            }

            var ray = new Ray(origin, (target - origin).Normalized(), double.PositiveInfinity);
            bool v = vector.Intersect(ray, out SurfaceHit hv);
            bool s = scalar.Intersect(ray, out SurfaceHit hs);
            bool g = reference.Intersect(ray, out SurfaceHit hg);
            Assert.Equal(s, v);
            Assert.Equal(g, v);
            if (r % 3 != 2)
            {
                Assert.True(v, $"ray {r} through a vertex or shared edge of the closed mesh missed it");
                aimed++;
            }

            if (v)
            {
                Assert.Equal(hs.T, hv.T);
                Assert.Equal(hs.Primitive, hv.Primitive);
                Assert.Equal(hg.T, hv.T);
            }

            double limit = v ? hv.T * (1 + (1e-9 * (r % 2))) : 1e3;
            Assert.Equal(scalar.Occluded(ray, limit), vector.Occluded(ray, limit));
            Assert.Equal(reference.Occluded(ray, limit), vector.Occluded(ray, limit));
        }

        Assert.Equal(4000, aimed);
    }

    [Theory]
    [InlineData(1.0, false)]
    [InlineData(1.0, true)]
    [InlineData(1e-6, true)]
    [InlineData(1e6, true)]
    [InlineData(1e25, false)]
    [InlineData(1e-30, false)]
    [InlineData(1e-41, false)]
    [InlineData(1e45, false)]
    [InlineData(1e-200, false)]
    public void Single_precision_box_test_enters_every_box_the_double_test_enters(double scale, bool shifted)
    {
        // The wide hierarchy tests boxes in single precision with the error bounds of Ize 2013
        // ("Robust BVH Ray Traversal", JCGT 2(2)), widened so that it contains the double slab
        // test (Kay & Kajiya 1986) of ReferenceBvh: every box the double test enters, each of the
        // four forms enters too (the single forms may enter more). Checked box by box on every
        // lane of every node, for random rays, rays from box corners, edges and faces (exact
        // plane values), rays through mesh vertices, rays parallel or nearly parallel to a face,
        // and tMax at the double test's own entry distance; scales from 1e-200 (every float box
        // collapses to the smallest subnormals) through float's subnormal range (1e-41) to beyond
        // float's range (1e45: infinite float planes, origins beyond 1e30 take the double form).
        // Shifted: coordinates near 1e5 + fractions, so every box plane is rounded.
        Vec3d offset = shifted ? new Vec3d(1e5 + (1.0 / 3), -2e4 - (1.0 / 7), 7.0 / 11) : default;
        Vec3d Map(Vec3d v) => (v + offset) * scale;
        var prims = new List<Primitive>();
        foreach (Primitive t in BumpySphere(new Vec3d(0.3, -0.2, 0.1), 2.0, 24, 12))
        {
            prims.Add(Primitive.Triangle(Map(t.A), Map(t.B), Map(t.C), 0, -1));
        }

        for (uint i = 0; i < 200; i++)
        {
            var c = new Vec3d((U(21, i, 0) * 20) - 10, (U(21, i, 1) * 20) - 10, (U(21, i, 2) * 20) - 10);
            prims.Add(i % 8 == 0
                ? Primitive.Sphere(Map(c), (0.1 + U(21, i, 3)) * scale, 0)
                : Primitive.Triangle(Map(c), Map(c + new Vec3d(1, U(21, i, 4), 0)), Map(c + new Vec3d(0, 1, U(21, i, 5))), 0, -1));
        }

        Primitive[] scene = prims.ToArray();
        var bvh = new Bvh(scene);
        var reference = new ReferenceBvh(scene);
        Bvh.BoxTest[] forms = [Bvh.BoxTest.SingleVector, Bvh.BoxTest.SingleScalar, Bvh.BoxTest.DoubleVector, Bvh.BoxTest.DoubleScalar];
        long entered = 0, extra = 0, singleEntered = 0;
        uint r = 0;
        for (int node = 0; node < bvh.NodeCount; node++)
        {
            for (int lane = 0; lane < 8; lane++)
            {
                (Vec3d lo, Vec3d hi, _) = bvh.ChildBox(node, lane);
                if (!(lo.X <= hi.X))
                {
                    continue; // an empty lane (inverted box)
                }

                for (int k = 0; k < 12; k++, r++)
                {
                    Ray ray = BoxRay(lo, hi, scene, scale, offset, r);
                    Vec3d inv = ReferenceBvh.InverseDirection(ray.Direction);
                    double tMax = ray.TMax;
                    bool single = new Bvh.BoxRay(ray).Single;
                    int[] masks = forms.Select(f => bvh.EnteredLanes(node, ray, tMax, f)).ToArray();
                    Assert.Equal(masks[2], masks[3]);                 // the double forms: the same operations
                    Assert.Equal(masks[0], masks[1]);                 // the single forms: the same operations
                    bool expected = ReferenceBvh.HitsBox(lo, hi, ray.Origin, inv, tMax);
                    Assert.Equal(expected, (masks[2] >> lane & 1) != 0); // the double forms are the reference test
                    // A walk takes the single forms only for rays within their range (BoxRay.Single).
                    bool got = ((single ? masks[0] : masks[2]) >> lane & 1) != 0;
                    Assert.True(!expected || got, $"node {node} lane {lane}, ray {r} ({ray.Origin} + t {ray.Direction}, tMax {tMax}): the single test misses a box [{lo}, {hi}] the double test enters");
                    entered += expected ? 1 : 0;
                    extra += got && !expected ? 1 : 0;
                    singleEntered += single && expected ? 1 : 0;
                }
            }
        }

        // The test must see both outcomes and the single form; and the single test must stay a
        // test (entering everything would pass the containment trivially): it may enter a few
        // more boxes than the double one, only where a ray passes within its rounding of a box.
        Assert.True(entered > 1000, $"only {entered} boxes entered");
        Assert.True(scale > 1e40 || scale < 1e-40 || singleEntered > entered / 2, $"the single form took {singleEntered} of {entered} entries");
        Assert.True(scale < 1e-40 || extra * 20 < entered, $"the single test entered {extra} boxes the double test does not, of {entered}");

        // And whole queries: the same hits and occlusion as the binary reference, both traversal
        // forms. Not at 1e-200, where the primitive tests' products underflow (the two hierarchies'
        // leaf tests are not what this test is about).
        foreach (bool vectorised in scale > 1e-100 ? new[] { true, false } : [])
        {
            bvh.Vectorised = vectorised;
            for (uint q = 0; q < 3000; q++)
            {
                int node = (int)(U(22, q, 0) * bvh.NodeCount);
                (Vec3d lo, Vec3d hi, _) = bvh.ChildBox(node, 0);
                Ray ray = BoxRay(lo, hi, scene, scale, offset, q) with { TMax = double.PositiveInfinity };
                bool a = bvh.Intersect(ray, out SurfaceHit h);
                bool b = reference.Intersect(ray, out SurfaceHit g);
                Assert.Equal(b, a);
                if (a)
                {
                    Assert.Equal(g.T, h.T); // the primitive may differ only where two are hit at the same distance (a shared edge)
                }

                double limit = a ? h.T * (1 + (1e-9 * (q % 2))) : 10 * scale;
                Assert.Equal(reference.Occluded(ray, limit), bvh.Occluded(ray, limit));
            }
        }
    }

    [Fact]
    public void Box_ray_setup_equals_its_scalar_reference()
    {
        // A walk sets its ray up for the slab tests (Kay & Kajiya 1986; the single form's error
        // bounds after Ize 2013, JCGT 2(2)) with the three axes in 256-bit vectors where AVX is
        // available (this machine, and the CI's), else one axis at a time; both must give the
        // same bits, field by field (every IEEE 754 operation is correctly rounded, so lane-wise
        // forms of the same operations agree: IEEE 754-2019 §5.4). Rays: random directions and
        // origins over scales 1e-200 … 1e40 (origins beyond 1e30 leave the single form), axis-
        // parallel directions (±0 components take the 1e300 stand-in), tiny components whose
        // reciprocals exceed 2^64, and subnormal ones whose reciprocals overflow to infinity.
        double[] scales = [1e-200, 1e-41, 1e-6, 1, 1e6, 1e25, 1e31, 1e40];
        double[] odd = [0.0, -0.0, 1e-25, -1e-25, 4.9e-324, -2.5e-320, 1e-310];
        int singles = 0, doubles = 0;
        for (uint i = 0; i < 20000; i++)
        {
            double scale = scales[i % scales.Length];
            Vec3d origin = new Vec3d((U(31, i, 0) * 2) - 1, (U(31, i, 1) * 2) - 1, (U(31, i, 2) * 2) - 1) * scale;
            Vec3d d = Warp.UniformSphere(U(31, i, 3), U(31, i, 4));
            if (i % 3 == 1)
            {
                // One or two components replaced by an odd value.
                double a = odd[(int)(U(31, i, 5) * odd.Length)], b = odd[(int)(U(31, i, 6) * odd.Length)];
                d = (i % 4) switch
                {
                    0 => d with { X = a },
                    1 => d with { Y = a, Z = b },
                    2 => d with { Z = a },
                    _ => d with { X = a, Y = b },
                };
            }

            var ray = new Ray(origin, d, double.PositiveInfinity);
            Bvh.BoxRay fast = new(ray), reference = Bvh.BoxRay.Reference(ray);
            Assert.True(fast.SameBits(reference), $"ray {i}: {origin} + t {d}");
            singles += reference.Single ? 1 : 0;
            doubles += reference.Single ? 0 : 1;
        }

        Assert.True(singles > 5000 && doubles > 2000, $"{singles} single-form rays, {doubles} double-form rays");
    }

    /// <summary>
    /// Adversarial rays for a box: from a corner, an edge or a face of it (exact plane values),
    /// through a mesh vertex, along or almost along a face, or random; with tMax infinite, random,
    /// or the double test's own entry distance.
    /// </summary>
    private static Ray BoxRay(Vec3d lo, Vec3d hi, Primitive[] scene, double scale, Vec3d offset, uint r)
    {
        double Pick(double a, double b, int d)
        {
            double u = U(23, r, d);
            return u < 0.35 ? a : u < 0.7 ? b : a + ((b - a) * U(24, r, d));
        }

        Vec3d onBox = new(Pick(lo.X, hi.X, 0), Pick(lo.Y, hi.Y, 1), Pick(lo.Z, hi.Z, 2));
        Vec3d random = (offset + new Vec3d((U(25, r, 0) * 30) - 15, (U(25, r, 1) * 30) - 15, (U(25, r, 2) * 30) - 15)) * scale;
        Vec3d direction = Warp.UniformSphere(U(25, r, 3), U(25, r, 4));
        Vec3d origin;
        switch (r % 6)
        {
            case 0: // from the box's surface (corner, edge or face), any direction
                origin = onBox;
                break;
            case 1: // from far away, exactly at a corner, edge point or face point
                origin = random;
                direction = ScaledVector.Unit(onBox - origin);
                break;
            case 2: // through a mesh vertex
                origin = random;
                direction = ScaledVector.Unit(scene[(int)(U(25, r, 5) * scene.Length)].A - origin);
                break;
            case 3: // along a face: one component 0 (the double form) or almost (the single form)
                origin = onBox;
                int axis = (int)(r / 6 % 3);
                double along = r / 18 % 2 == 0 ? 0 : Math.Pow(10, -4 - (15 * U(25, r, 6)));
                direction = ScaledVector.Unit(axis switch
                {
                    0 => direction with { X = along },
                    1 => direction with { Y = along },
                    _ => direction with { Z = along },
                });
                break;
            case 4: // from inside the box
                origin = new Vec3d(lo.X + ((hi.X - lo.X) * U(25, r, 7)), lo.Y + ((hi.Y - lo.Y) * U(25, r, 8)), lo.Z + ((hi.Z - lo.Z) * U(25, r, 9)));
                break;
            default:
                origin = random;
                break;
        }

        if (double.IsInfinity(origin.X) || double.IsInfinity(origin.Y) || double.IsInfinity(origin.Z) || !(direction.LengthSquared > 0))
        {
            origin = random; // a box of infinite planes (beyond float's range) has no point to start from
            direction = Warp.UniformSphere(U(25, r, 3), U(25, r, 4));
        }

        var ray = new Ray(origin, direction, double.PositiveInfinity);
        double tMax = (r / 6 % 4) switch
        {
            0 => double.PositiveInfinity,
            1 => 20 * scale * U(26, r, 0),
            _ => EntryDistance(lo, hi, ray),
        };
        return ray with { TMax = tMax > 0 ? tMax : double.PositiveInfinity };
    }

    /// <summary>The double slab test's entry distance into [lo, hi] (Kay &amp; Kajiya 1986), computed as ReferenceBvh does.</summary>
    private static double EntryDistance(Vec3d lo, Vec3d hi, Ray ray)
    {
        Vec3d inv = ReferenceBvh.InverseDirection(ray.Direction);
        double tx1 = (lo.X - ray.Origin.X) * inv.X, tx2 = (hi.X - ray.Origin.X) * inv.X;
        double ty1 = (lo.Y - ray.Origin.Y) * inv.Y, ty2 = (hi.Y - ray.Origin.Y) * inv.Y;
        double tz1 = (lo.Z - ray.Origin.Z) * inv.Z, tz2 = (hi.Z - ray.Origin.Z) * inv.Z;
        return Math.Max(Math.Max(Math.Min(tx1, tx2), Math.Min(ty1, ty2)), Math.Min(tz1, tz2));
    }

    /// <summary>A closed mesh with shared vertices: a sphere whose radius ripples by ±8 %, slices × stacks cells (invented test geometry).</summary>
    private static Primitive[] BumpySphere(Vec3d centre, double radius, int slices, int stacks)
    {
        var prims = new List<Primitive>();
        Vec3d Vertex(int slice, int stack)
        {
            double theta = Math.PI * stack / stacks, phi = 2 * Math.PI * (slice % slices) / slices;
            double r = radius * (1 + (0.08 * Math.Sin(3 * theta) * Math.Cos(5 * phi)));
            return centre + (new Vec3d(Math.Sin(theta) * Math.Cos(phi), Math.Cos(theta), Math.Sin(theta) * Math.Sin(phi)) * r);
        }

        for (int s = 0; s < slices; s++)
        {
            prims.Add(Primitive.Triangle(Vertex(s, 0), Vertex(s + 1, 1), Vertex(s, 1), 0, -1));
            for (int k = 1; k < stacks - 1; k++)
            {
                Vec3d a = Vertex(s, k), b = Vertex(s + 1, k), c = Vertex(s, k + 1), d = Vertex(s + 1, k + 1);
                prims.Add(Primitive.Triangle(a, b, d, 0, -1));
                prims.Add(Primitive.Triangle(a, d, c, 0, -1));
            }

            prims.Add(Primitive.Triangle(Vertex(s, stacks - 1), Vertex(s + 1, stacks - 1), Vertex(s, stacks), 0, -1));
        }

        return prims.ToArray();
    }

    [Fact]
    public void Only_triangles_share_leaves()
    {
        // Leaves hold up to four triangles (tested four at a time from their hit records); any
        // other primitive is alone in its leaf, so the eight-wide box test culls it before its
        // scalar test. The scene packs 600 triangles and 200 analytic shapes into one small cube,
        // with pairs of equal bounds (a sphere on a triangle's box, two equal spheres), where no
        // bin split separates them and the builder must halve the range. Every primitive must sit
        // in exactly one leaf (common practice: the invariant of any BVH).
        var prims = new List<Primitive>();
        for (uint i = 0; i < 600; i++)
        {
            var c = new Vec3d(U(3, i, 0), U(3, i, 1), U(3, i, 2));
            prims.Add(Primitive.Triangle(c, c + new Vec3d(0.05, U(3, i, 3) * 0.05, 0), c + new Vec3d(0, 0.05, U(3, i, 4) * 0.05), 0, -1));
        }

        for (uint i = 0; i < 200; i++)
        {
            var c = new Vec3d(U(4, i, 0), U(4, i, 1), U(4, i, 2));
            prims.Add((i % 3) switch
            {
                0 => Primitive.Sphere(c, 0.02, 0),
                1 => Primitive.Quad(c, new(0.04, 0, 0), new(0, 0, 0.04), 0),
                _ => Primitive.Disk(c, new(0, 1, 0), 0.03, 0),
            });
        }

        prims.Add(Primitive.Sphere(new(0.5, 0.5, 0.5), 0.1, 0));
        prims.Add(Primitive.Sphere(new(0.5, 0.5, 0.5), 0.1, 0));
        prims.Add(Primitive.Triangle(new(0.4, 0.4, 0.4), new(0.6, 0.6, 0.4), new(0.4, 0.6, 0.6), 0, -1));
        prims.Add(Primitive.Sphere(new(0.5, 0.5, 0.5), 0.1, 0)); // the triangle's box and centroid's neighbour
        var bvh = new Bvh([.. prims]);
        var seen = new int[prims.Count];
        int shared = 0;
        for (int node = 0; node < bvh.NodeCount; node++)
        {
            for (int lane = 0; lane < 8; lane++)
            {
                (Vec3d min, _, int child) = bvh.ChildBox(node, lane);
                if (double.IsPositiveInfinity(min.X) || child >= 0)
                {
                    continue; // an empty lane or a node
                }

                int start = ~child >> 3, count = (~child & 3) + 1;
                bool triangles = (~child & 4) != 0;
                for (int i = start; i < start + count; i++)
                {
                    seen[i]++;
                    Assert.True(count == 1 || bvh.Primitives[i].Kind == PrimitiveKind.Triangle, $"a {bvh.Primitives[i].Kind} shares a leaf of {count}");
                    Assert.Equal(triangles, count == 1 ? bvh.Primitives[i].Kind == PrimitiveKind.Triangle : true);
                }

                shared += count > 1 ? 1 : 0;
            }
        }

        Assert.All(seen, s => Assert.Equal(1, s));
        Assert.True(shared > 0, "some triangles share leaves (else the test shows nothing)");
    }

    [Fact]
    public void Build_is_the_same_tree_for_any_thread_count()
    {
        // Determinism (issue 12): the parallel build must give the same tree on 1, 2 or 3
        // threads. 40 000 primitives put the top levels above the parallel grain, so the larger
        // counts really hand subtrees to other threads.
        Primitive[] prims = RandomScene(40_000);
        (BinnedSah.Node[] one, int[] orderOne) = BinnedSah.Build(prims, 4, 1);
        List<BinnedSah.Node> reachable = Reachable(one);
        foreach (int threads in new[] { 2, 3 })
        {
            (BinnedSah.Node[] many, int[] order) = BinnedSah.Build(prims, 4, threads);
            Assert.Equal(orderOne, order);
            List<BinnedSah.Node> other = Reachable(many);
            Assert.Equal(reachable.Count, other.Count);
            for (int i = 0; i < reachable.Count; i++)
            {
                Assert.True(Same(reachable[i], other[i]), $"{threads} threads: node {i} differs");
            }
        }

        // The wide nodes too: the subtrees below the root's lanes are collapsed apart (a task each)
        // and laid out after; every box and link must be the same, and the layout the depth-first
        // one the sequential collapse makes (each node numbered in the order a pre-order walk of
        // the lanes meets it).
        var wideOne = new Bvh(prims, 1);
        Assert.Equal(wideOne.NodeCount, PreOrder(wideOne, 0, 0));
        foreach (int threads in new[] { 2, 3 })
        {
            var wide = new Bvh(prims, threads);
            Assert.Equal(wideOne.NodeCount, wide.NodeCount);
            Assert.Equal(wideOne.PrimitiveOrder, wide.PrimitiveOrder);
            for (int node = 0; node < wide.NodeCount; node++)
            {
                for (int lane = 0; lane < 8; lane++)
                {
                    Assert.Equal(wideOne.ChildBox(node, lane), wide.ChildBox(node, lane));
                }
            }
        }

        // Checks that node is numbered next, then its interior children in lane order; returns the next number.
        static int PreOrder(Bvh bvh, int node, int next)
        {
            Assert.Equal(next, node);
            next++;
            for (int lane = 0; lane < 8; lane++)
            {
                (Vec3d min, Vec3d max, int child) = bvh.ChildBox(node, lane);
                if (child > 0 && min.X <= max.X)
                {
                    next = PreOrder(bvh, child, next);
                }
            }

            return next;
        }

        static bool Same(BinnedSah.Node a, BinnedSah.Node b) =>
            a.Min == b.Min && a.Max == b.Max && a.Start == b.Start && a.Count == b.Count && (a.Count > 0 || a.Axis == b.Axis);
    }

    [Fact]
    public void Order_keys_give_the_IEEE_minimum_and_maximum()
    {
        // The build takes the minimum and maximum of box corners as integer minimum and maximum of
        // order keys; they must be IEEE 754-2019 minimum and maximum (§9.6: −0 below +0), which
        // .NET's MathF.Min / MathF.Max and Vector128.Min / Max implement and the build used before,
        // bit for bit, so the tree stays the same. Special values and hashed bit patterns of every
        // exponent (NaN excluded: the build refuses it in a box).
        var values = new List<float>
        {
            float.NegativeInfinity, -float.MaxValue, -1.5f, -float.Epsilon, -0f, 0f, float.Epsilon, 1.5f, float.MaxValue, float.PositiveInfinity,
        };
        for (uint i = 0; values.Count < 400; i++)
        {
            float f = BitConverter.Int32BitsToSingle((int)(uint)(U(40, i, 0) * 4294967296.0));
            if (!float.IsNaN(f))
            {
                values.Add(f);
            }
        }

        foreach (float a in values)
        {
            Vector128<int> ka = BinnedSah.Key(Vector128.Create(a));
            Assert.Equal(~ka, BinnedSah.Key(Vector128.Create(-a)));
            Assert.Equal(BitConverter.SingleToInt32Bits(a), BinnedSah.Value(ka).AsInt32().GetElement(0));
            foreach (float b in values)
            {
                Vector128<int> kb = BinnedSah.Key(Vector128.Create(b));
                Assert.Equal(BitConverter.SingleToInt32Bits(MathF.Min(a, b)), BinnedSah.Value(Vector128.Min(ka, kb)).AsInt32().GetElement(0));
                Assert.Equal(BitConverter.SingleToInt32Bits(MathF.Max(a, b)), BinnedSah.Value(Vector128.Max(ka, kb)).AsInt32().GetElement(0));
                Assert.Equal(Vector128.Min(Vector128.Create(a), Vector128.Create(b)).AsInt32(), BinnedSah.Value(Vector128.Min(ka, kb)).AsInt32());
            }
        }
    }

    [Fact]
    public void A_box_holding_NaN_is_refused()
    {
        // The order keys rank NaN unlike IEEE minimum and maximum do, so a NaN corner would change
        // the tree silently; it is refused instead, naming the primitive (common practice).
        Primitive[] prims = RandomScene(50);
        prims[17] = Primitive.Triangle(new Vec3d(0, double.NaN, 0), new Vec3d(1, 0, 0), new Vec3d(0, 1, 0), 0, -1);
        var e = Assert.Throws<ArgumentException>(() => new Bvh(prims, 2));
        Assert.Contains("primitive 17", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Single_precision_boxes_contain_their_primitives_double_bounds()
    {
        // The float boxes are rounded outward, so each contains the double bounds of everything
        // beneath it: a slab test on it cannot reject a ray that meets one of its primitives
        // (the conservative-bounds argument of Ize 2013, "Robust BVH Ray Traversal", JCGT 2(2)).
        // Coordinates of 1e5 + fractions are far from any float, so rounding happens on every box.
        Primitive[] prims = RandomScene(3000).Select(p => Shift(p, new Vec3d(1e5 + 1.0 / 3, -2e4 - 1.0 / 7, 7.0 / 11))).ToArray();
        (BinnedSah.Node[] nodes, int[] order) = BinnedSah.Build(prims, 4, 2);
        int checkedBoxes = 0;
        Check(0);
        Assert.True(checkedBoxes >= prims.Length, "every primitive is checked against its leaf");

        void Check(int slot)
        {
            BinnedSah.Node nd = nodes[slot];
            if (nd.Count > 0)
            {
                for (int i = nd.Start; i < nd.Start + nd.Count; i++)
                {
                    (Vec3d lo, Vec3d hi) = prims[order[i]].Bounds();
                    Assert.True(Inside(lo, hi, nd), $"primitive {order[i]} pokes out of its leaf box");
                    checkedBoxes++;
                }

                return;
            }

            foreach (int child in new[] { slot + 1, nd.Start })
            {
                Assert.True(Inside(nodes[child].Min, nodes[child].Max, nd), $"child {child} pokes out of node {slot}");
                Check(child);
            }
        }

        static bool Inside(Vec3d lo, Vec3d hi, BinnedSah.Node box) =>
            lo.X >= box.Min.X && lo.Y >= box.Min.Y && lo.Z >= box.Min.Z && hi.X <= box.Max.X && hi.Y <= box.Max.Y && hi.Z <= box.Max.Z;
    }

    private static Primitive Shift(Primitive p, Vec3d by)
    {
        p.A += by;
        if (p.Kind == PrimitiveKind.Triangle)
        {
            p.B += by;
            p.C += by;
        }

        return p;
    }

    /// <summary>The nodes reachable from the root, depth first (left, then right): what a walk can see, whatever the unused slots hold.</summary>
    private static List<BinnedSah.Node> Reachable(BinnedSah.Node[] nodes)
    {
        var list = new List<BinnedSah.Node>();
        var stack = new Stack<int>();
        stack.Push(0);
        while (stack.Count > 0)
        {
            int slot = stack.Pop();
            BinnedSah.Node nd = nodes[slot];
            list.Add(nd);
            if (nd.Count == 0)
            {
                stack.Push(nd.Start);
                stack.Push(slot + 1);
            }
        }

        return list;
    }

    [Fact]
    public void Queries_allocate_nothing()
    {
        // No allocation per ray (issue 12): 3000 closest-hit and any-hit queries after a warm-up;
        // GC.GetAllocatedBytesForCurrentThread counts exactly.
        var bvh = new Bvh(RandomScene(600));
        int hits = Trace(bvh);
        long[] allocated = Allocations.OfThreePasses(() => hits += Trace(bvh));

        Assert.True(allocated.Min() == 0, $"{string.Join(", ", allocated)} bytes allocated in three passes");
        Assert.True(hits > 0);

        static int Trace(Bvh bvh)
        {
            int n = 0;
            for (uint r = 0; r < 3000; r++)
            {
                Ray ray = RandomRay(r);
                n += bvh.Intersect(ray, out _) ? 1 : 0;
                n += bvh.Occluded(ray, 5) ? 1 : 0;
            }

            return n;
        }
    }

    private static Ray RandomRay(uint r)
    {
        var origin = new Vec3d(U(3, r, 0) * 30 - 15, U(3, r, 1) * 30 - 15, U(3, r, 2) * 30 - 15);
        return new Ray(origin, Warp.UniformSphere(U(3, r, 3), U(3, r, 4)), double.PositiveInfinity);
    }

    /// <summary>A ray through a random interior point of a random planar primitive, ε radians off its plane.</summary>
    private static Ray GrazingRay(Primitive[] prims, uint r)
    {
        int i;
        uint k = 0;
        do
        {
            i = (int)(U(4, r, (int)k++) * prims.Length);
        }
        while (prims[i].Kind == PrimitiveKind.Sphere);

        Primitive p = prims[i];
        double a = 0.05 + 0.4 * U(5, r, 0), b = 0.05 + 0.4 * U(5, r, 1);
        Vec3d target = p.Kind switch
        {
            PrimitiveKind.Quad => p.A + p.B * (2 * a) + p.C * (2 * b),
            PrimitiveKind.Triangle => p.A + (p.B - p.A) * a + (p.C - p.A) * b,
            _ => p.A + InPlane(p.Normal, U(5, r, 2)) * (p.Radius * a),
        };
        double eps = Math.Pow(10, -3 - 6 * U(5, r, 3));
        Vec3d dir = (InPlane(p.Normal, U(5, r, 4)) + p.Normal * (U(5, r, 5) < 0.5 ? eps : -eps)).Normalized();
        return new Ray(target - dir * (0.5 + 5 * U(5, r, 6)), dir, double.PositiveInfinity);
    }

    /// <summary>A unit vector in the plane with normal <paramref name="n"/> at angle 2πu.</summary>
    private static Vec3d InPlane(Vec3d n, double u)
    {
        Vec3d t = Vec3d.Cross(n, Math.Abs(n.X) < 0.9 ? new Vec3d(1, 0, 0) : new Vec3d(0, 1, 0)).Normalized();
        Vec3d s = Vec3d.Cross(n, t);
        return t * Math.Cos(2 * Math.PI * u) + s * Math.Sin(2 * Math.PI * u);
    }

    /// <summary>The independent reference: nearest t &gt; 0 and its margin (positive inside), or (+∞, −∞).</summary>
    private static (double T, double Margin) ReferenceIntersect(Primitive p, Ray ray)
    {
        (double, double) none = (double.PositiveInfinity, double.NegativeInfinity);
        if (p.Kind == PrimitiveKind.Sphere)
        {
            Vec3d oc = ray.Origin - p.A;
            double b = Vec3d.Dot(oc, ray.Direction), c = Vec3d.Dot(oc, oc) - p.Radius * p.Radius;
            double disc = b * b - c;
            if (disc < 0)
            {
                return none;
            }

            double root = Math.Sqrt(disc);
            double t = -b - root > 0 ? -b - root : -b + root;
            return t > 0 ? (t, disc / (p.Radius * p.Radius)) : none;
        }

        Vec3d n = p.Kind == PrimitiveKind.Triangle ? Vec3d.Cross(p.B - p.A, p.C - p.A) : p.Normal;
        double denom = Vec3d.Dot(n, ray.Direction);
        double tp = Vec3d.Dot(n, p.A - ray.Origin) / denom;
        if (!(tp > 0) || double.IsInfinity(tp))
        {
            return none;
        }

        Vec3d q = ray.At(tp) - p.A;
        if (p.Kind == PrimitiveKind.Disk)
        {
            return (tp, (p.Radius - q.Length) / p.Radius);
        }

        // q = α e1 + β e2 in the least-squares sense: [e1·e1 e1·e2; e1·e2 e2·e2] (α, β) = (q·e1, q·e2).
        Vec3d e1 = p.Kind == PrimitiveKind.Quad ? p.B : p.B - p.A, e2 = p.Kind == PrimitiveKind.Quad ? p.C : p.C - p.A;
        double g11 = Vec3d.Dot(e1, e1), g12 = Vec3d.Dot(e1, e2), g22 = Vec3d.Dot(e2, e2);
        double r1 = Vec3d.Dot(q, e1), r2 = Vec3d.Dot(q, e2), g = g11 * g22 - g12 * g12;
        double alpha = (g22 * r1 - g12 * r2) / g, beta = (g11 * r2 - g12 * r1) / g;
        double margin = p.Kind == PrimitiveKind.Quad
            ? Math.Min(Math.Min(alpha, 1 - alpha), Math.Min(beta, 1 - beta))
            : Math.Min(Math.Min(alpha, beta), 1 - alpha - beta);
        return (tp, margin);
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
