using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// A four-wide bounding volume hierarchy over all primitives: the binary binned-SAH tree of
/// <see cref="BinnedSah"/> (leaves of up to four primitives) collapsed so each node holds the
/// boxes of up to four children side by side, and one query tests all four with
/// <see cref="Vector256{T}"/> slab tests (a scalar loop where 256-bit vectors are not
/// accelerated). Boxes and rays stay in double precision, so a box test is as conservative as
/// the binary tree's was and the hits are the same; children are visited nearest first and
/// skipped when they start beyond the best hit. The stack lives on the call stack, unzeroed:
/// no allocation and no clearing per query.
/// </summary>
public sealed class Bvh
{
    /// <summary>Deepest tree a query supports; the build stops splitting before this.</summary>
    public const int MaxDepth = BinnedSah.MaxDepth;

    private const int MaxLeaf = 4;
    private const int Lanes = 4;
    private const int Planes = 6 * Lanes; // minX, maxX, minY, maxY, minZ, maxZ, four lanes each

    // Each level of the binary tree under a wide node adds at most three siblings to the stack.
    private const int StackSize = 3 * MaxDepth + 4;

    private readonly Primitive[] _primitives;
    private readonly double[] _bounds;   // node k: _bounds[Planes·k + Lanes·plane + lane]
    private readonly int[] _children;    // node k: _children[Lanes·k + lane]: ≥ 0 a node, < 0 ~(leaf slot)
    private readonly int[] _leafStart;
    private readonly int[] _leafCount;

    /// <summary>Builds the hierarchy; the primitive array is reordered into leaf order and kept.</summary>
    public Bvh(Primitive[] primitives)
    {
        ArgumentNullException.ThrowIfNull(primitives);
        (BinnedSah.Node[] binary, int[] order) = BinnedSah.Build(primitives, MaxLeaf);
        int n = primitives.Length;
        _primitives = new Primitive[n];
        for (int i = 0; i < n; i++)
        {
            _primitives[i] = primitives[order[i]];
        }

        PrimitiveOrder = order;
        var bounds = new List<double>(binary.Length * Planes / 2);
        var children = new List<int>(binary.Length * Lanes / 2);
        var leafStart = new List<int>(binary.Length / 2 + 1);
        var leafCount = new List<int>(binary.Length / 2 + 1);
        Collapse(binary, 0, bounds, children, leafStart, leafCount);
        _bounds = bounds.ToArray();
        _children = children.ToArray();
        _leafStart = leafStart.ToArray();
        _leafCount = leafCount.ToArray();
    }

    /// <summary>Whether queries use the 256-bit slab test (false: the scalar loop). Tests switch it to compare the two.</summary>
    internal bool Vectorised { get; set; } = Vector256.IsHardwareAccelerated;

    /// <summary>The primitives in leaf order (hit indices refer to this array).</summary>
    public ReadOnlySpan<Primitive> Primitives => _primitives;

    /// <summary>For each position in <see cref="Primitives"/>, the index in the array given to the constructor.</summary>
    public IReadOnlyList<int> PrimitiveOrder { get; }

    /// <summary>Number of (four-wide) nodes.</summary>
    public int NodeCount => _children.Length / Lanes;

    /// <summary>Bytes of the hierarchy a query walks besides the primitives: boxes, child links and leaf ranges.</summary>
    public long NodeBytes => (_bounds.LongLength * sizeof(double)) + ((_children.LongLength + _leafStart.LongLength + _leafCount.LongLength) * sizeof(int));

    /// <summary>
    /// Makes the wide node for binary interior node <paramref name="b"/> (or, at the root of a
    /// one-leaf tree, for that leaf): its two children are opened, the largest-area interior
    /// one first, until four children are gathered or only leaves remain.
    /// </summary>
    private static int Collapse(BinnedSah.Node[] binary, int b, List<double> bounds, List<int> children, List<int> leafStart, List<int> leafCount)
    {
        Span<int> open = stackalloc int[Lanes];
        int count;
        if (binary[b].Count > 0)
        {
            open[0] = b;
            count = 1;
        }
        else
        {
            open[0] = b + 1;
            open[1] = binary[b].Start;
            count = 2;
        }

        while (count < Lanes)
        {
            int widest = -1;
            double area = -1;
            for (int i = 0; i < count; i++)
            {
                ref readonly BinnedSah.Node c = ref binary[open[i]];
                double a = c.Count > 0 ? -1 : HalfArea(c.Min, c.Max);
                if (a > area)
                {
                    area = a;
                    widest = i;
                }
            }

            if (widest < 0)
            {
                break;
            }

            int opened = open[widest];
            open[widest] = opened + 1;
            open[count++] = binary[opened].Start;
        }

        int node = children.Count / Lanes;
        for (int i = 0; i < Planes; i++)
        {
            // Empty lanes get inverted boxes (min +∞, max −∞): their near plane lies beyond the far one for any ray.
            bounds.Add((i / Lanes & 1) == 0 ? double.PositiveInfinity : double.NegativeInfinity);
        }

        for (int i = 0; i < Lanes; i++)
        {
            children.Add(0);
        }

        for (int lane = 0; lane < count; lane++)
        {
            ref readonly BinnedSah.Node c = ref binary[open[lane]];
            for (int axis = 0; axis < 3; axis++)
            {
                bounds[(Planes * node) + (Lanes * 2 * axis) + lane] = c.Min[axis];
                bounds[(Planes * node) + (Lanes * ((2 * axis) + 1)) + lane] = c.Max[axis];
            }

            if (c.Count > 0)
            {
                children[(Lanes * node) + lane] = ~leafStart.Count;
                leafStart.Add(c.Start);
                leafCount.Add(c.Count);
            }
            else
            {
                children[(Lanes * node) + lane] = Collapse(binary, open[lane], bounds, children, leafStart, leafCount);
            }
        }

        return node;
    }

    private static double HalfArea(Vec3d min, Vec3d max)
    {
        Vec3d d = max - min;
        return (d.X * d.Y) + (d.Y * d.Z) + (d.Z * d.X);
    }

    /// <summary>The nearest hit along the ray before <see cref="Ray.TMax"/>; false when there is none.</summary>
    public bool Intersect(in Ray ray, out SurfaceHit hit)
    {
        var query = new ClosestHit(_primitives, ray);
        Walk(ray, ref query);
        if (query.Best < 0)
        {
            hit = default;
            return false;
        }

        ref readonly Primitive prim = ref _primitives[query.Best];
        hit.T = query.TMax;
        hit.Point = ray.At(query.TMax);
        hit.Primitive = query.Best;
        hit.GeometricNormal = prim.NormalAt(hit.Point);
        hit.ShadingNormal = hit.GeometricNormal;
        return true;
    }

    /// <summary>True when anything blocks the ray before <paramref name="tMax"/> (shadow rays: any hit ends the walk).</summary>
    public bool Occluded(in Ray ray, double tMax)
    {
        var query = new AnyHit(_primitives, ray, tMax);
        Walk(ray, ref query);
        return query.Found;
    }

    /// <summary>What a walk does at a leaf, and how far it still looks.</summary>
    private interface ILeafQuery
    {
        /// <summary>The far end of the ray segment still searched.</summary>
        double TMax { get; }

        /// <summary>Tests primitives [start, start + count); true ends the walk.</summary>
        bool Leaf(int start, int count);
    }

    private struct ClosestHit(Primitive[] primitives, in Ray ray) : ILeafQuery
    {
        private readonly Ray _ray = ray;
        private readonly RayShear _shear = new(ray.Direction);

        public double TMax { get; private set; } = ray.TMax;

        public int Best { get; private set; } = -1;

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public bool Leaf(int start, int count)
        {
            for (int i = start; i < start + count; i++)
            {
                double t = Test(primitives[i], _ray, _shear, TMax);
                if (t < TMax)
                {
                    TMax = t;
                    Best = i;
                }
            }

            return false;
        }
    }

    private struct AnyHit(Primitive[] primitives, in Ray ray, double tMax) : ILeafQuery
    {
        private readonly Ray _ray = ray;
        private readonly RayShear _shear = new(ray.Direction);

        public readonly double TMax => tMax;

        public bool Found { get; private set; }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public bool Leaf(int start, int count)
        {
            for (int i = start; i < start + count; i++)
            {
                if (Test(primitives[i], _ray, _shear, tMax) < tMax)
                {
                    Found = true;
                    return true;
                }
            }

            return false;
        }
    }

    /// <summary>One primitive; triangles reuse the ray's shear (the same arithmetic as <see cref="Primitive.Intersect"/>).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static double Test(in Primitive p, in Ray ray, in RayShear shear, double tMax) =>
        p.Kind == PrimitiveKind.Triangle ? p.IntersectTriangle(shear, ray.Origin, tMax) : p.Intersect(ray, tMax);

    /// <summary>
    /// The one traversal loop of both queries: pop the nearest pending child; a leaf goes to the
    /// query, a node's four boxes are tested at once and the hit ones pushed farthest first.
    /// Pending children that start beyond the query's current far end are dropped when popped.
    /// </summary>
    [SkipLocalsInit]
    private void Walk<TQuery>(in Ray ray, ref TQuery query)
        where TQuery : struct, ILeafQuery
    {
        // A zero component would give 0·∞ = NaN when the origin lies on a slab plane; a huge
        // finite reciprocal gives 0 there instead, which keeps the test conservative.
        Vec3d inv = new(Reciprocal(ray.Direction.X), Reciprocal(ray.Direction.Y), Reciprocal(ray.Direction.Z));
        // Per axis, which plane (min 0 or max 1) the ray meets first.
        int nx = inv.X < 0 ? 1 : 0, ny = inv.Y < 0 ? 1 : 0, nz = inv.Z < 0 ? 1 : 0;
        Span<int> stackRef = stackalloc int[StackSize];
        Span<double> stackNear = stackalloc double[StackSize];
        Span<double> near = stackalloc double[Lanes];
        stackRef[0] = 0;
        stackNear[0] = 0;
        int sp = 1;
        while (sp > 0)
        {
            sp--;
            if (stackNear[sp] > query.TMax)
            {
                continue;
            }

            int r = stackRef[sp];
            if (r < 0)
            {
                if (query.Leaf(_leafStart[~r], _leafCount[~r]))
                {
                    return;
                }

                continue;
            }

            int mask = Vectorised
                ? TestVector(r, ray.Origin, inv, nx, ny, nz, query.TMax, near)
                : TestScalar(r, ray.Origin, inv, nx, ny, nz, query.TMax, near);
            int first = sp;
            for (; mask != 0; mask &= mask - 1)
            {
                int lane = System.Numerics.BitOperations.TrailingZeroCount(mask);
                // Insertion into the pushed run, kept in decreasing near distance so the nearest is on top.
                double t = near[lane];
                int j = sp++;
                while (j > first && stackNear[j - 1] < t)
                {
                    stackRef[j] = stackRef[j - 1];
                    stackNear[j] = stackNear[j - 1];
                    j--;
                }

                stackRef[j] = _children[(Lanes * r) + lane];
                stackNear[j] = t;
            }
        }
    }

    private static double Reciprocal(double x) => x == 0 ? 1e300 : 1.0 / x;

    /// <summary>
    /// Slab tests (Kay &amp; Kajiya 1986, "Ray tracing complex scenes", SIGGRAPH) of node
    /// <paramref name="node"/>'s four boxes; returns the mask of lanes hit before
    /// <paramref name="tMax"/> and writes their entry distances (clamped at 0) to
    /// <paramref name="near"/>. Native min/max: no operand is ever NaN here (finite
    /// reciprocals, infinite planes only with non-zero factors), so the NaN and signed-zero
    /// handling of <see cref="Math.Min(double, double)"/> buys nothing.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private int TestVector(int node, Vec3d o, Vec3d inv, int nx, int ny, int nz, double tMax, Span<double> near)
    {
        ref double b = ref _bounds[Planes * node];
        Vector256<double> ix = Vector256.Create(inv.X), iy = Vector256.Create(inv.Y), iz = Vector256.Create(inv.Z);
        Vector256<double> ox = Vector256.Create(o.X), oy = Vector256.Create(o.Y), oz = Vector256.Create(o.Z);
        Vector256<double> tnx = (Vector256.LoadUnsafe(ref b, (nuint)(Lanes * nx)) - ox) * ix;
        Vector256<double> tfx = (Vector256.LoadUnsafe(ref b, (nuint)(Lanes * (1 - nx))) - ox) * ix;
        Vector256<double> tny = (Vector256.LoadUnsafe(ref b, (nuint)(Lanes * (2 + ny))) - oy) * iy;
        Vector256<double> tfy = (Vector256.LoadUnsafe(ref b, (nuint)(Lanes * (3 - ny))) - oy) * iy;
        Vector256<double> tnz = (Vector256.LoadUnsafe(ref b, (nuint)(Lanes * (4 + nz))) - oz) * iz;
        Vector256<double> tfz = (Vector256.LoadUnsafe(ref b, (nuint)(Lanes * (5 - nz))) - oz) * iz;
        Vector256<double> t0 = Vector256.MaxNative(Vector256.MaxNative(tnx, tny), Vector256.MaxNative(tnz, Vector256<double>.Zero));
        Vector256<double> t1 = Vector256.MinNative(Vector256.MinNative(tfx, tfy), tfz);
        // Bounds are inflated by a relative 1e-12 against rounding on flat (zero-thickness) boxes.
        Vector256<double> slack = (Vector256.Abs(t1) + Vector256<double>.One) * Vector256.Create(1e-12);
        Vector256<double> hit = Vector256.LessThanOrEqual(t0, t1 + slack) & Vector256.LessThanOrEqual(t0, Vector256.Create(tMax));
        t0.StoreUnsafe(ref MemoryMarshal.GetReference(near));
        return (int)hit.ExtractMostSignificantBits();
    }

    /// <summary>The same slab tests one lane at a time, for hardware without 256-bit vectors, with the same operations in the same order.</summary>
    private int TestScalar(int node, Vec3d o, Vec3d inv, int nx, int ny, int nz, double tMax, Span<double> near)
    {
        ReadOnlySpan<double> b = _bounds.AsSpan(Planes * node, Planes);
        int mask = 0;
        for (int lane = 0; lane < Lanes; lane++)
        {
            double tnx = (b[(Lanes * nx) + lane] - o.X) * inv.X, tfx = (b[(Lanes * (1 - nx)) + lane] - o.X) * inv.X;
            double tny = (b[(Lanes * (2 + ny)) + lane] - o.Y) * inv.Y, tfy = (b[(Lanes * (3 - ny)) + lane] - o.Y) * inv.Y;
            double tnz = (b[(Lanes * (4 + nz)) + lane] - o.Z) * inv.Z, tfz = (b[(Lanes * (5 - nz)) + lane] - o.Z) * inv.Z;
            double t0 = Math.Max(Math.Max(tnx, tny), Math.Max(tnz, 0));
            double t1 = Math.Min(Math.Min(tfx, tfy), tfz);
            double slack = (Math.Abs(t1) + 1) * 1e-12;
            near[lane] = t0;
            mask |= t0 <= t1 + slack && t0 <= tMax ? 1 << lane : 0;
        }

        return mask;
    }
}
