using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// Top-down binary BVH construction with the surface area heuristic evaluated over 16 bins per
/// axis (binned SAH: Wald 2007, "On fast Construction of SAH-based Bounding Volume
/// Hierarchies", IEEE Symposium on Interactive Ray Tracing): one pass over a node's primitives
/// bins their centroids on all three axes at once, a sweep over the bins prices every split,
/// and the partition pass that applies the best one also gathers both children's bounds, so
/// each primitive is read twice per level. Work is on single-precision boxes rounded outward
/// from the primitives' double bounds (each float box contains its double box), so every node
/// box is conservative. Subtrees of large nodes are built in parallel; a node's slot in the
/// output depends only on the primitive counts beneath it (left child at slot + 1, right child
/// at slot + 2 × left count; unused slots in between), and each node is built by the same
/// sequential code whichever thread runs it, so the tree is identical for any thread count.
/// Both <see cref="Bvh"/> (which collapses it to four-wide nodes) and <see cref="ReferenceBvh"/>
/// (which walks it as it is) start from it.
/// </summary>
internal static class BinnedSah
{
    /// <summary>Deepest tree a query supports; the build stops splitting before this.</summary>
    public const int MaxDepth = 60;

    private const int Bins = 16;
    private const float TraversalCost = 1.0f, IntersectionCost = 1.0f;

    // Nodes with at least this many primitives hand one child to another thread (below it a task costs more than it saves).
    private const int ParallelGrain = 8192;

    // Nodes with at least this many primitives bin into two sets of bins (see BestSplit).
    private const int DualBinsFrom = 256;

    /// <summary>
    /// A node of the binary tree in 32 bytes (the build writes up to 2n − 1 of them): bounds in
    /// single precision, rounded outward, with the links in the fourth lanes.
    /// </summary>
    [StructLayout(LayoutKind.Sequential)]
    internal readonly struct Node
    {
        private readonly Vector128<float> _lo;  // min x, y, z; fourth lane: Start
        private readonly Vector128<float> _hi;  // max x, y, z; fourth lane: Count (> 0) of a leaf, −1 − axis of an interior node

        private Node(Vector128<float> lo, Vector128<float> hi, int start, int code)
        {
            _lo = lo.AsInt32().WithElement(3, start).AsSingle();
            _hi = hi.AsInt32().WithElement(3, code).AsSingle();
        }

        /// <summary>Leaf: first primitive; interior: slot of the right child (the left child is the next slot).</summary>
        public int Start => _lo.AsInt32().GetElement(3);

        /// <summary>Leaf: primitive count (&gt; 0); interior: 0.</summary>
        public int Count => Math.Max(0, _hi.AsInt32().GetElement(3));

        /// <summary>Interior: split axis, to visit the nearer child first.</summary>
        public int Axis => -1 - _hi.AsInt32().GetElement(3);

        /// <summary>Lower corner (x, y, z lanes; the fourth is not a coordinate).</summary>
        public Vector128<float> Lo => _lo;

        /// <summary>Upper corner (x, y, z lanes; the fourth is not a coordinate).</summary>
        public Vector128<float> Hi => _hi;

        /// <summary>Lower corner.</summary>
        public Vec3d Min => new(_lo.GetElement(0), _lo.GetElement(1), _lo.GetElement(2));

        /// <summary>Upper corner.</summary>
        public Vec3d Max => new(_hi.GetElement(0), _hi.GetElement(1), _hi.GetElement(2));

        public static Node Leaf(Vector128<float> lo, Vector128<float> hi, int start, int count) => new(lo, hi, start, count);

        public static Node Interior(Vector128<float> lo, Vector128<float> hi, int right, int axis) => new(lo, hi, right, -1 - axis);
    }

    /// <summary>
    /// A primitive's box (32 bytes, so a pass over a node's items streams half the memory a
    /// separate index would add): the input index rides in the bits of <see cref="Lo"/>'s unused
    /// fourth lane, which arithmetic never sees (<see cref="Centroid"/> masks it).
    /// </summary>
    [StructLayout(LayoutKind.Sequential)]
    private struct Item
    {
        public Vector128<float> Lo;
        public Vector128<float> Hi;

        public readonly int Index => Lo.AsInt32().GetElement(3);
    }

    /// <summary>Bounds of a range of items and of their centroids.</summary>
    private struct RangeBounds
    {
        public Vector128<float> Lo, Hi, CLo, CHi;

        public static RangeBounds Empty => new()
        {
            Lo = Vector128.Create(float.PositiveInfinity, float.PositiveInfinity, float.PositiveInfinity, 0),
            Hi = Vector128.Create(float.NegativeInfinity, float.NegativeInfinity, float.NegativeInfinity, 0),
            CLo = Vector128.Create(float.PositiveInfinity, float.PositiveInfinity, float.PositiveInfinity, 0),
            CHi = Vector128.Create(float.NegativeInfinity, float.NegativeInfinity, float.NegativeInfinity, 0),
        };

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Add(in Item item)
        {
            Vector128<float> c = Centroid(item);
            Lo = Vector128.Min(Lo, item.Lo);
            Hi = Vector128.Max(Hi, item.Hi);
            CLo = Vector128.Min(CLo, c);
            CHi = Vector128.Max(CHi, c);
        }
    }

    /// <summary>
    /// Builds the tree over <paramref name="primitives"/> with leaves of at most
    /// <paramref name="maxLeaf"/> primitives (fewer where the SAH says splitting pays) on up to
    /// <paramref name="threads"/> threads; <c>Order</c> maps leaf positions to input indices.
    /// Node 0 is the root; the array has 2n − 1 slots, some of them unused.
    /// </summary>
    /// <param name="primitives">The primitives.</param>
    /// <param name="maxLeaf">Most primitives in a leaf (at most 255).</param>
    /// <param name="threads">Threads to build on (0: all cores).</param>
    /// <param name="leafSizes">When given (length n, zeroed): each leaf's size is written at its first position.</param>
    /// <param name="sharesLeaf">When given (length n, by input index): which primitives may share a leaf; the others get a leaf of their own.</param>
    public static (Node[] Nodes, int[] Order) Build(Primitive[] primitives, int maxLeaf, int threads = 0, byte[]? leafSizes = null, bool[]? sharesLeaf = null)
    {
        if (primitives.Length == 0)
        {
            throw new ArgumentException("a BVH needs at least one primitive", nameof(primitives));
        }

        int n = primitives.Length;
        threads = threads <= 0 ? Environment.ProcessorCount : threads;
        var items = GC.AllocateUninitializedArray<Item>(n);
        var options = new ParallelOptions { MaxDegreeOfParallelism = threads };
        const int Chunk = 16384;
        Parallel.For(0, (n + Chunk - 1) / Chunk, options, c =>
        {
            for (int i = c * Chunk, end = Math.Min(n, (c + 1) * Chunk); i < end; i++)
            {
                (Vec3d lo, Vec3d hi) = primitives[i].Bounds();
                items[i] = new Item
                {
                    Lo = Vector128.Create(Down(lo.X), Down(lo.Y), Down(lo.Z), BitConverter.Int32BitsToSingle(i)),
                    Hi = Vector128.Create(Up(hi.X), Up(hi.Y), Up(hi.Z), 0),
                };
            }
        });

        RangeBounds root = RangeBounds.Empty;
        foreach (ref readonly Item item in items.AsSpan())
        {
            root.Add(item);
        }

        var nodes = GC.AllocateUninitializedArray<Node>((2 * n) - 1);
        new Builder(items, nodes, maxLeaf, threads > 1 ? options : null, leafSizes, sharesLeaf).Build(0, n, 0, 0, root);
        var order = new int[n];
        for (int i = 0; i < n; i++)
        {
            order[i] = items[i].Index;
        }

        return (nodes, order);
    }

    /// <summary>The largest float not above <paramref name="x"/>.</summary>
    public static float Down(double x)
    {
        float f = (float)x;
        return f > x ? MathF.BitDecrement(f) : f;
    }

    /// <summary>The smallest float not below <paramref name="x"/>.</summary>
    public static float Up(double x)
    {
        float f = (float)x;
        return f < x ? MathF.BitIncrement(f) : f;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector128<float> Centroid(in Item item) =>
        ((item.Lo & Vector128.Create(-1, -1, -1, 0).AsSingle()) + item.Hi) * 0.5f; // the index bits would be a subnormal operand: slow, and meaningless

    private static float HalfArea(Vector128<float> lo, Vector128<float> hi)
    {
        Vector128<float> d = hi - lo;
        Vector128<float> p = d * Vector128.Shuffle(d, Vector128.Create(1, 2, 0, 3)); // xy, yz, zx (fourth lane not a coordinate)
        return p.GetElement(0) + p.GetElement(1) + p.GetElement(2);
    }

    private sealed class Builder(Item[] items, Node[] nodes, int maxLeaf, ParallelOptions? parallel, byte[]? leafSizes, bool[]? sharesLeaf)
    {
        /// <summary>Builds the subtree over items [start, end) into <paramref name="slot"/> and the slots after it.</summary>
        public void Build(int start, int end, int slot, int depth, RangeBounds bounds)
        {
            int count = end - start;
            Vector128<float> extent = bounds.CHi - bounds.CLo;
            // A node of fewer than 16 primitives gets one bin per primitive: more could not all be
            // filled, and the per-node cost of clearing and sweeping bins dominates the lower levels.
            int bins = Math.Min(Bins, Math.Max(2, count));
            // Bin k of axis a holds centroids in [lo + k·e/bins, lo + (k+1)·e/bins); the factor just under 1 keeps the largest in the last bin (Wald 2007, §3.2).
            Vector128<float> scale = Vector128.ConditionalSelect(
                Vector128.GreaterThan(extent, Vector128<float>.Zero),
                Vector128.Create(bins * (1 - 1e-6f)) / extent,
                Vector128<float>.Zero);
            int axis = -1, split = -1;
            // A leaf costs its intersections; up to maxLeaf primitives may stay together when no split
            // is cheaper, except primitives that may not share a leaf, which get one of their own.
            bool mayLeaf = count <= maxLeaf && (count == 1 || !AnyAlone(start, end));
            float bestCost = mayLeaf ? IntersectionCost * count : float.PositiveInfinity;
            if (count > 1 && depth < MaxDepth - 1 && scale != Vector128<float>.Zero)
            {
                (axis, split) = BestSplit(start, end, bins, bounds, scale, ref bestCost);
            }

            if (axis < 0 && (mayLeaf || depth >= MaxDepth - 1))
            {
                nodes[slot] = Node.Leaf(bounds.Lo, bounds.Hi, start, count);
                if (leafSizes is not null)
                {
                    leafSizes[start] = (byte)count;
                }

                return;
            }

            RangeBounds left = RangeBounds.Empty, right = RangeBounds.Empty;
            int mid;
            if (axis < 0)
            {
                // No bin split separates these (all centroids in one bin): halve the range instead.
                mid = start + (count / 2);
                axis = 0;
                for (int i = start; i < end; i++)
                {
                    (i < mid ? ref left : ref right).Add(items[i]);
                }
            }
            else
            {
                mid = Partition(start, end, bins, axis, split, bounds.CLo, scale, ref left, ref right);
            }

            int rightSlot = slot + (2 * (mid - start));
            nodes[slot] = Node.Interior(bounds.Lo, bounds.Hi, rightSlot, axis);
            if (parallel is not null && count >= ParallelGrain)
            {
                Parallel.Invoke(
                    parallel,
                    () => Build(start, mid, slot + 1, depth + 1, left),
                    () => Build(mid, end, rightSlot, depth + 1, right));
            }
            else
            {
                Build(start, mid, slot + 1, depth + 1, left);
                Build(mid, end, rightSlot, depth + 1, right);
            }
        }

        /// <summary>Whether any item in [<paramref name="start"/>, <paramref name="end"/>) may not share a leaf (asked only of ranges small enough to be one).</summary>
        private bool AnyAlone(int start, int end)
        {
            if (sharesLeaf is null)
            {
                return false;
            }

            for (int i = start; i < end; i++)
            {
                if (!sharesLeaf[items[i].Index])
                {
                    return true;
                }
            }

            return false;
        }

        /// <summary>Bins the range's centroids on all three axes in one pass and returns the cheapest split (axis −1 when none beats <paramref name="bestCost"/>).</summary>
        [SkipLocalsInit] // the bins are filled below; the sweep arrays are written before they are read
        private (int Axis, int Split) BestSplit(int start, int end, int bins, in RangeBounds bounds, Vector128<float> scale, ref float bestCost)
        {
            // Two sets of bins, one for even and one for odd positions, merged after the pass:
            // neighbouring items (often in the same bin) then update different memory, so their
            // read-modify-writes need not wait for each other. Min, max and counts are exact, so the
            // merged bins are the ones a single set would hold, whatever the split of the items.
            // Small nodes (most of them) take one set: clearing and merging a second would cost more than it saves.
            Span<Vector128<float>> binLo = stackalloc Vector128<float>[2 * 3 * Bins];
            Span<Vector128<float>> binHi = stackalloc Vector128<float>[2 * 3 * Bins];
            Span<int> binCount = stackalloc int[2 * 3 * Bins];
            int set = 3 * bins;
            int sets = end - start >= DualBinsFrom ? 2 : 1;
            binLo = binLo[..(sets * set)];
            binHi = binHi[..(sets * set)];
            binCount = binCount[..(sets * set)];
            binLo.Fill(RangeBounds.Empty.Lo);
            binHi.Fill(RangeBounds.Empty.Hi);
            binCount.Clear();
            Vector128<float> cLo = bounds.CLo;
            // Bin indices are clamped to [0, Bins): the hot loop indexes the bins unchecked.
            ref Vector128<float> lo0 = ref MemoryMarshal.GetReference(binLo);
            ref Vector128<float> hi0 = ref MemoryMarshal.GetReference(binHi);
            ref int count0 = ref MemoryMarshal.GetReference(binCount);
            Vector128<int> axisOffset = Vector128.Create(0, bins, 2 * bins, 0);
            int i = start;
            for (; sets == 2 && i + 1 < end; i += 2)
            {
                AddToBins(items[i], BinOf(items[i], cLo, scale, bins) + axisOffset, ref lo0, ref hi0, ref count0);
                AddToBins(items[i + 1], BinOf(items[i + 1], cLo, scale, bins) + axisOffset + Vector128.Create(set), ref lo0, ref hi0, ref count0);
            }

            for (; i < end; i++)
            {
                AddToBins(items[i], BinOf(items[i], cLo, scale, bins) + axisOffset, ref lo0, ref hi0, ref count0);
            }

            for (int k = 0; sets == 2 && k < set; k++)
            {
                binLo[k] = Vector128.Min(binLo[k], binLo[set + k]);
                binHi[k] = Vector128.Max(binHi[k], binHi[set + k]);
                binCount[k] += binCount[set + k];
            }

            float parentArea = HalfArea(bounds.Lo, bounds.Hi);
            Span<float> leftArea = stackalloc float[Bins];
            Span<int> leftCount = stackalloc int[Bins];
            int axis = -1, split = -1;
            for (int a = 0; a < 3; a++)
            {
                if (scale.GetElement(a) == 0)
                {
                    continue;
                }

                // Sweep from the left, then evaluate each split with a sweep from the right.
                Vector128<float> lo = RangeBounds.Empty.Lo, hi = RangeBounds.Empty.Hi;
                int lc = 0;
                for (int b = 0; b < bins - 1; b++)
                {
                    lo = Vector128.Min(lo, binLo[(a * bins) + b]);
                    hi = Vector128.Max(hi, binHi[(a * bins) + b]);
                    lc += binCount[(a * bins) + b];
                    leftCount[b] = lc;
                    leftArea[b] = lc > 0 ? HalfArea(lo, hi) : 0;
                }

                lo = RangeBounds.Empty.Lo;
                hi = RangeBounds.Empty.Hi;
                int rc = 0;
                for (int b = bins - 1; b > 0; b--)
                {
                    lo = Vector128.Min(lo, binLo[(a * bins) + b]);
                    hi = Vector128.Max(hi, binHi[(a * bins) + b]);
                    rc += binCount[(a * bins) + b];
                    int l = leftCount[b - 1];
                    if (l == 0 || rc == 0)
                    {
                        continue;
                    }

                    float cost = TraversalCost + (IntersectionCost * ((leftArea[b - 1] * l) + (HalfArea(lo, hi) * rc)) / parentArea);
                    if (cost < bestCost)
                    {
                        bestCost = cost;
                        axis = a;
                        split = b;
                    }
                }
            }

            return (axis, split);
        }

        /// <summary>Adds an item to its bin on each axis (<paramref name="b"/>: the three bin indices into the flat bin arrays).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void AddToBins(in Item item, Vector128<int> b, ref Vector128<float> lo0, ref Vector128<float> hi0, ref int count0)
        {
            for (int a = 0; a < 3; a++)
            {
                int k = b.GetElement(a);
                Unsafe.Add(ref count0, k)++;
                ref Vector128<float> lo = ref Unsafe.Add(ref lo0, k);
                ref Vector128<float> hi = ref Unsafe.Add(ref hi0, k);
                lo = Vector128.Min(lo, item.Lo);
                hi = Vector128.Max(hi, item.Hi);
            }
        }

        /// <summary>
        /// Moves the items whose centroid bin on <paramref name="axis"/> is below
        /// <paramref name="split"/> to the front (Hoare's two-ended scan) and gathers both sides'
        /// bounds on the way; returns the first right-hand position.
        /// </summary>
        private int Partition(int start, int end, int bins, int axis, int split, Vector128<float> cLo, Vector128<float> scale, ref RangeBounds left, ref RangeBounds right)
        {
            int i = start, j = end - 1;
            while (true)
            {
                while (i <= j && BinOf(items[i], cLo, scale, bins).GetElement(axis) < split)
                {
                    left.Add(items[i++]);
                }

                while (i <= j && BinOf(items[j], cLo, scale, bins).GetElement(axis) >= split)
                {
                    right.Add(items[j--]);
                }

                if (i > j)
                {
                    return i;
                }

                (items[i], items[j]) = (items[j], items[i]);
            }
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector128<int> BinOf(in Item item, Vector128<float> cLo, Vector128<float> scale, int bins) =>
            Vector128.Min(Vector128.Max(Vector128.ConvertToInt32((Centroid(item) - cLo) * scale), Vector128<int>.Zero), Vector128.Create(bins - 1));
    }
}
