using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// Top-down binary BVH construction with the surface area heuristic evaluated over 16 bins per
/// axis (binned SAH: Wald 2007, "On fast Construction of SAH-based Bounding Volume
/// Hierarchies", IEEE Symposium on Interactive Ray Tracing). The tree is flattened depth-first
/// so a node's left child follows it. Both <see cref="Bvh"/> (which collapses it to four-wide
/// nodes) and <see cref="ReferenceBvh"/> (which walks it as it is) start from it.
/// </summary>
internal static class BinnedSah
{
    /// <summary>Deepest tree a query supports; the build stops splitting before this.</summary>
    public const int MaxDepth = 60;

    private const int Bins = 16;
    private const double TraversalCost = 1.0, IntersectionCost = 1.0;

    /// <summary>A node of the binary tree.</summary>
    internal struct Node
    {
        public Vec3d Min, Max;
        public int Start;   // leaf: first primitive; interior: index of the right child
        public int Count;   // leaf: primitive count (> 0); interior: 0
        public int Axis;    // interior: split axis, to visit the nearer child first
    }

    /// <summary>
    /// Builds the tree over <paramref name="primitives"/> with leaves of at most
    /// <paramref name="maxLeaf"/> primitives (fewer where the SAH says splitting pays);
    /// <c>Order</c> maps leaf positions to input indices.
    /// </summary>
    public static (Node[] Nodes, int[] Order) Build(ReadOnlySpan<Primitive> primitives, int maxLeaf)
    {
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

        var nodes = new List<Node>(2 * n / Math.Max(1, maxLeaf) + 1);
        Build(nodes, order, bounds, centroids, 0, n, 0, maxLeaf);
        return (nodes.ToArray(), order);
    }

    private static int Build(List<Node> nodes, int[] order, (Vec3d Min, Vec3d Max)[] bounds, Vec3d[] centroids, int start, int end, int depth, int maxLeaf)
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
        // A leaf costs its intersections; up to maxLeaf primitives may stay together when no split is cheaper.
        double bestCost = count <= maxLeaf ? IntersectionCost * count : double.PositiveInfinity;
        if (count > 1 && depth < MaxDepth - 1)
        {
            Span<int> binCount = stackalloc int[Bins];
            Span<double> leftArea = stackalloc double[Bins];
            Span<int> leftCount = stackalloc int[Bins];
            Span<Vec3d> binMin = stackalloc Vec3d[Bins];
            Span<Vec3d> binMax = stackalloc Vec3d[Bins];
            double parentArea = SurfaceArea(min, max);
            for (int a = 0; a < 3; a++)
            {
                double extent = cmax[a] - cmin[a];
                if (!(extent > 0))
                {
                    continue;
                }

                binCount.Clear();
                binMin.Fill(new Vec3d(double.PositiveInfinity, double.PositiveInfinity, double.PositiveInfinity));
                binMax.Fill(new Vec3d(double.NegativeInfinity, double.NegativeInfinity, double.NegativeInfinity));
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

        if (axis < 0 && count > maxLeaf && depth < MaxDepth - 1)
        {
            // No bin split separates these (all centroids in one bin): halve the range instead.
            return Finish(nodes, index, min, max, order, bounds, centroids, start, start + count / 2, end, depth, maxLeaf, 0);
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

        return Finish(nodes, index, min, max, order, bounds, centroids, start, mid, end, depth, maxLeaf, axis);
    }

    private static int Finish(List<Node> nodes, int index, Vec3d min, Vec3d max, int[] order, (Vec3d Min, Vec3d Max)[] bounds, Vec3d[] centroids, int start, int mid, int end, int depth, int maxLeaf, int axis)
    {
        Build(nodes, order, bounds, centroids, start, mid, depth + 1, maxLeaf);
        int right = Build(nodes, order, bounds, centroids, mid, end, depth + 1, maxLeaf);
        nodes[index] = new Node { Min = min, Max = max, Start = right, Count = 0, Axis = axis };
        return index;
    }

    private static int BinOf(double c, double min, double extent) => Math.Min(Bins - 1, (int)((c - min) / extent * Bins));

    private static double SurfaceArea(Vec3d min, Vec3d max)
    {
        Vec3d d = max - min;
        return 2 * (d.X * d.Y + d.Y * d.Z + d.Z * d.X);
    }
}
