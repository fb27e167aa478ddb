using System.Runtime.CompilerServices;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// A bounding volume hierarchy over all primitives, built top-down with the surface area
/// heuristic evaluated over 16 bins per axis (binned SAH: Wald 2007, "On fast Construction of
/// SAH-based Bounding Volume Hierarchies"), flattened depth-first so the left child follows its
/// parent. Queries walk it with a fixed stack on the call stack: no allocation per ray.
/// </summary>
public sealed class Bvh
{
    /// <summary>Deepest tree a query supports; the build stops splitting before this.</summary>
    public const int MaxDepth = 60;

    private const int Bins = 16;
    private const int LeafSize = 2;
    private const double TraversalCost = 1.0, IntersectionCost = 1.0;

    private readonly Primitive[] _primitives;
    private readonly Node[] _nodes;

    private struct Node
    {
        public Vec3d Min, Max;
        public int Start;   // leaf: first primitive; interior: index of the right child
        public int Count;   // leaf: primitive count (> 0); interior: 0
        public int Axis;    // interior: split axis, to visit the nearer child first
    }

    /// <summary>Builds the hierarchy; the primitive array is reordered into leaf order and kept.</summary>
    public Bvh(Primitive[] primitives)
    {
        ArgumentNullException.ThrowIfNull(primitives);
        if (primitives.Length == 0)
        {
            throw new ArgumentException("a BVH needs at least one primitive", nameof(primitives));
        }

        int n = primitives.Length;
        var bounds = new (Vec3d Min, Vec3d Max)[n];
        var centroids = new Vec3d[n];
        var order = new int[n];
        for (int i = 0; i < n; i++)
        {
            bounds[i] = primitives[i].Bounds();
            centroids[i] = (bounds[i].Min + bounds[i].Max) * 0.5;
            order[i] = i;
        }

        var nodes = new List<Node>(2 * n);
        Build(nodes, order, bounds, centroids, 0, n, 0);
        _nodes = nodes.ToArray();
        _primitives = new Primitive[n];
        for (int i = 0; i < n; i++)
        {
            _primitives[i] = primitives[order[i]];
        }

        PrimitiveOrder = order;
    }

    /// <summary>The primitives in leaf order (hit indices refer to this array).</summary>
    public ReadOnlySpan<Primitive> Primitives => _primitives;

    /// <summary>For each position in <see cref="Primitives"/>, the index in the array given to the constructor.</summary>
    public IReadOnlyList<int> PrimitiveOrder { get; }

    /// <summary>Number of nodes.</summary>
    public int NodeCount => _nodes.Length;

    /// <summary>Bytes of the node array (what a query walks besides the primitives).</summary>
    public long NodeBytes => (long)_nodes.Length * Unsafe.SizeOf<Node>();

    private static int Build(List<Node> nodes, int[] order, (Vec3d Min, Vec3d Max)[] bounds, Vec3d[] centroids, int start, int end, int depth)
    {
        int index = nodes.Count;
        nodes.Add(default);
        Vec3d min = new(double.PositiveInfinity, double.PositiveInfinity, double.PositiveInfinity), max = -min;
        Vec3d cmin = min, cmax = max;
        for (int i = start; i < end; i++)
        {
            min = Vec3d.Min(min, bounds[order[i]].Min);
            max = Vec3d.Max(max, bounds[order[i]].Max);
            cmin = Vec3d.Min(cmin, centroids[order[i]]);
            cmax = Vec3d.Max(cmax, centroids[order[i]]);
        }

        int count = end - start;
        int axis = -1, splitBin = -1;
        double bestCost = IntersectionCost * count;
        if (count > LeafSize && depth < MaxDepth - 1)
        {
            Span<int> binCount = stackalloc int[Bins];
            Span<double> leftArea = stackalloc double[Bins];
            Span<int> leftCount = stackalloc int[Bins];
            var binMin = new Vec3d[Bins];
            var binMax = new Vec3d[Bins];
            double parentArea = SurfaceArea(min, max);
            for (int a = 0; a < 3; a++)
            {
                double extent = cmax[a] - cmin[a];
                if (!(extent > 0))
                {
                    continue;
                }

                binCount.Clear();
                for (int b = 0; b < Bins; b++)
                {
                    binMin[b] = new Vec3d(double.PositiveInfinity, double.PositiveInfinity, double.PositiveInfinity);
                    binMax[b] = -binMin[b];
                }

                for (int i = start; i < end; i++)
                {
                    int b = BinOf(centroids[order[i]][a], cmin[a], extent);
                    binCount[b]++;
                    binMin[b] = Vec3d.Min(binMin[b], bounds[order[i]].Min);
                    binMax[b] = Vec3d.Max(binMax[b], bounds[order[i]].Max);
                }

                // Sweep from the left, then evaluate each split with a sweep from the right.
                Vec3d lmin = binMin[0], lmax = binMax[0];
                int lc = 0;
                for (int b = 0; b < Bins - 1; b++)
                {
                    lmin = Vec3d.Min(lmin, binMin[b]);
                    lmax = Vec3d.Max(lmax, binMax[b]);
                    lc += binCount[b];
                    leftCount[b] = lc;
                    leftArea[b] = lc > 0 ? SurfaceArea(lmin, lmax) : 0;
                }

                Vec3d rmin = binMin[Bins - 1], rmax = binMax[Bins - 1];
                int rc = 0;
                for (int b = Bins - 1; b > 0; b--)
                {
                    rmin = Vec3d.Min(rmin, binMin[b]);
                    rmax = Vec3d.Max(rmax, binMax[b]);
                    rc += binCount[b];
                    int l = leftCount[b - 1];
                    if (l == 0 || rc == 0)
                    {
                        continue;
                    }

                    double cost = TraversalCost + IntersectionCost * (leftArea[b - 1] * l + SurfaceArea(rmin, rmax) * rc) / parentArea;
                    if (cost < bestCost)
                    {
                        bestCost = cost;
                        axis = a;
                        splitBin = b;
                    }
                }
            }
        }

        if (axis < 0)
        {
            nodes[index] = new Node { Min = min, Max = max, Start = start, Count = count };
            return index;
        }

        // Partition in place: primitives whose centroid bin is below the split go left.
        double ext = cmax[axis] - cmin[axis];
        int mid = start;
        for (int i = start; i < end; i++)
        {
            if (BinOf(centroids[order[i]][axis], cmin[axis], ext) < splitBin)
            {
                (order[i], order[mid]) = (order[mid], order[i]);
                mid++;
            }
        }

        Build(nodes, order, bounds, centroids, start, mid, depth + 1);
        int right = Build(nodes, order, bounds, centroids, mid, end, depth + 1);
        nodes[index] = new Node { Min = min, Max = max, Start = right, Count = 0, Axis = axis };
        return index;
    }

    private static int BinOf(double c, double min, double extent) => Math.Min(Bins - 1, (int)((c - min) / extent * Bins));

    private static double SurfaceArea(Vec3d min, Vec3d max)
    {
        Vec3d d = max - min;
        return 2 * (d.X * d.Y + d.Y * d.Z + d.Z * d.X);
    }

    /// <summary>The nearest hit along the ray before <see cref="Ray.TMax"/>; false when there is none.</summary>
    public bool Intersect(in Ray ray, out SurfaceHit hit)
    {
        hit = default;
        double tBest = ray.TMax;
        int best = -1;
        Vec3d inv = InverseDirection(ray.Direction);
        Span<int> stack = stackalloc int[MaxDepth + 1];
        int sp = 0;
        int node = 0;
        while (true)
        {
            ref readonly Node nd = ref _nodes[node];
            if (HitsBox(nd.Min, nd.Max, ray.Origin, inv, tBest))
            {
                if (nd.Count > 0)
                {
                    for (int i = nd.Start; i < nd.Start + nd.Count; i++)
                    {
                        double t = _primitives[i].Intersect(ray, tBest);
                        if (t < tBest)
                        {
                            tBest = t;
                            best = i;
                        }
                    }
                }
                else
                {
                    // Visit the child on the ray's near side first.
                    bool negative = ray.Direction[nd.Axis] < 0;
                    stack[sp++] = negative ? node + 1 : nd.Start;
                    node = negative ? nd.Start : node + 1;
                    continue;
                }
            }

            if (sp == 0)
            {
                break;
            }

            node = stack[--sp];
        }

        if (best < 0)
        {
            return false;
        }

        ref readonly Primitive prim = ref _primitives[best];
        hit.T = tBest;
        hit.Point = ray.At(tBest);
        hit.Primitive = best;
        hit.GeometricNormal = prim.NormalAt(hit.Point);
        hit.ShadingNormal = hit.GeometricNormal;
        return true;
    }

    /// <summary>True when anything blocks the ray before <paramref name="tMax"/> (shadow rays: any hit ends the walk).</summary>
    public bool Occluded(in Ray ray, double tMax)
    {
        Vec3d inv = InverseDirection(ray.Direction);
        Span<int> stack = stackalloc int[MaxDepth + 1];
        int sp = 0;
        int node = 0;
        while (true)
        {
            ref readonly Node nd = ref _nodes[node];
            if (HitsBox(nd.Min, nd.Max, ray.Origin, inv, tMax))
            {
                if (nd.Count > 0)
                {
                    for (int i = nd.Start; i < nd.Start + nd.Count; i++)
                    {
                        if (_primitives[i].Intersect(ray, tMax) < tMax)
                        {
                            return true;
                        }
                    }
                }
                else
                {
                    stack[sp++] = nd.Start;
                    node++;
                    continue;
                }
            }

            if (sp == 0)
            {
                return false;
            }

            node = stack[--sp];
        }
    }

    // A zero component would give 0·∞ = NaN in the slab test when the origin lies on a slab
    // plane; a huge finite reciprocal gives 0 there instead, which keeps the test conservative.
    private static Vec3d InverseDirection(Vec3d d) => new(Reciprocal(d.X), Reciprocal(d.Y), Reciprocal(d.Z));

    private static double Reciprocal(double x) => x == 0 ? 1e300 : 1.0 / x;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static bool HitsBox(Vec3d min, Vec3d max, Vec3d origin, Vec3d inv, double tMax)
    {
        // Slab test (Kay & Kajiya 1986, "Ray tracing complex scenes", SIGGRAPH).
        double tx1 = (min.X - origin.X) * inv.X, tx2 = (max.X - origin.X) * inv.X;
        double t0 = Math.Min(tx1, tx2), t1 = Math.Max(tx1, tx2);
        double ty1 = (min.Y - origin.Y) * inv.Y, ty2 = (max.Y - origin.Y) * inv.Y;
        t0 = Math.Max(t0, Math.Min(ty1, ty2));
        t1 = Math.Min(t1, Math.Max(ty1, ty2));
        double tz1 = (min.Z - origin.Z) * inv.Z, tz2 = (max.Z - origin.Z) * inv.Z;
        t0 = Math.Max(t0, Math.Min(tz1, tz2));
        t1 = Math.Min(t1, Math.Max(tz1, tz2));
        // Bounds are inflated by a relative 1e-12 against rounding on flat (zero-thickness) boxes.
        double slack = 1e-12 * (1 + Math.Abs(t1));
        return t1 + slack >= Math.Max(t0, 0) && t0 <= tMax;
    }
}
