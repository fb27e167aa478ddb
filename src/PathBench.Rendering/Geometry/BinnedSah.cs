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

    /// <summary>
    /// Bounds of a range of items and of their centroids, held as order keys (<see cref="Key"/>):
    /// integer minimum and maximum of keys are the IEEE 754-2019 <c>minimum</c> and <c>maximum</c>
    /// of the floats (−0 below +0), one instruction each instead of the compare-and-blend sequence
    /// <see cref="Vector128.Min{T}(Vector128{T}, Vector128{T})"/> needs for floats.
    /// </summary>
    private struct RangeBounds
    {
        public Vector128<int> Lo, Hi, CLo, CHi;

        public static RangeBounds Empty => new() { Lo = EmptyLo, Hi = EmptyHi, CLo = EmptyLo, CHi = EmptyHi };

        /// <summary>Key of +∞, above every other key of a number.</summary>
        public static Vector128<int> EmptyLo => Vector128.Create(0x7F800000);

        /// <summary>Key of −∞, below every other key of a number.</summary>
        public static Vector128<int> EmptyHi => Vector128.Create(unchecked((int)0x807FFFFF));

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Add(in Item item)
        {
            Vector128<int> c = Key(Centroid(item));
            Lo = Vector128.Min(Lo, Key(item.Lo));
            Hi = Vector128.Max(Hi, Key(item.Hi));
            CLo = Vector128.Min(CLo, c);
            CHi = Vector128.Max(CHi, c);
        }

        /// <summary>Merges another range's bounds (minimum and maximum are exact, so the order of merges does not matter).</summary>
        public void Add(in RangeBounds other)
        {
            Lo = Vector128.Min(Lo, other.Lo);
            Hi = Vector128.Max(Hi, other.Hi);
            CLo = Vector128.Min(CLo, other.CLo);
            CHi = Vector128.Max(CHi, other.CHi);
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
        var chunkBounds = new RangeBounds[(n + Chunk - 1) / Chunk];
        bool numbers = true;
        Parallel.For(0, chunkBounds.Length, options, c =>
        {
            RangeBounds bounds = RangeBounds.Empty;
            bool chunkNumbers = true;
            for (int i = c * Chunk, end = Math.Min(n, (c + 1) * Chunk); i < end; i++)
            {
                (Vec3d lo, Vec3d hi) = primitives[i].Bounds();
                items[i] = new Item
                {
                    Lo = Vector128.Create(Down(lo.X), Down(lo.Y), Down(lo.Z), BitConverter.Int32BitsToSingle(i)),
                    Hi = Vector128.Create(Up(hi.X), Up(hi.Y), Up(hi.Z), 0),
                };
                bounds.Add(items[i]);
                chunkNumbers &= IsNumber(items[i]);
            }

            chunkBounds[c] = bounds;
            if (!chunkNumbers)
            {
                Volatile.Write(ref numbers, false);
            }
        });

        // Min and max are exact, so merging the chunks' bounds gives the bounds of one pass over all items.
        RangeBounds root = RangeBounds.Empty;
        foreach (ref readonly RangeBounds bounds in chunkBounds.AsSpan())
        {
            root.Add(bounds);
        }

        // Order keys rank a NaN unlike IEEE minimum and maximum do, so a box may not hold one (a
        // centroid may: see Builder.Build).
        if (!numbers)
        {
            int bad = Array.FindIndex(items, item => !IsNumber(item));
            throw new ArgumentException($"primitive {bad} has a bound that is not a number", nameof(primitives));
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

    /// <summary>
    /// The order key of each float: its bits as an integer, with the magnitude bits of a negative
    /// number inverted, so that integer order is the order of the numbers, −0 just below +0, and
    /// integer minimum and maximum give exactly the IEEE 754-2019 <c>minimum</c> and
    /// <c>maximum</c> of the floats (NaN excepted). The map is its own inverse (<see cref="Value"/>),
    /// and the key of −x is the complement of the key of x.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector128<int> Key(Vector128<float> x) => Flip(x.AsInt32());

    /// <summary>The floats whose order keys are <paramref name="key"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector128<float> Value(Vector128<int> key) => Flip(key).AsSingle();

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector128<int> Flip(Vector128<int> bits) => bits ^ Vector128.ShiftRightLogical(Vector128.ShiftRightArithmetic(bits, 31), 1);

    /// <summary>Whether the item's box holds no NaN.</summary>
    private static bool IsNumber(in Item item)
    {
        Vector128<float> ok = Vector128.Equals(item.Lo, item.Lo) & Vector128.Equals(item.Hi, item.Hi);
        return (ok.AsInt32() | Vector128.Create(0, 0, 0, -1)) == Vector128<int>.AllBitsSet;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector128<float> Centroid(in Item item) =>
        ((item.Lo & Vector128.Create(-1, -1, -1, 0).AsSingle()) + item.Hi) * 0.5f; // the index bits would be a subnormal operand: slow, and meaningless

    private static float HalfArea(Vector128<float> lo, Vector128<float> hi)
    {
        // The fourth lane is not a coordinate: bounds kept as order keys carry an item's index bits there (a subnormal
        // as a float), so it is cleared before any arithmetic, which would otherwise take the slow subnormal path.
        Vector128<float> coordinates = Vector128.Create(-1, -1, -1, 0).AsSingle();
        Vector128<float> d = (hi & coordinates) - (lo & coordinates);
        Vector128<float> p = d * Vector128.Shuffle(d, Vector128.Create(1, 2, 0, 3)); // xy, yz, zx
        return p.GetElement(0) + p.GetElement(1) + p.GetElement(2);
    }

    private sealed class Builder(Item[] items, Node[] nodes, int maxLeaf, ParallelOptions? parallel, byte[]? leafSizes, bool[]? sharesLeaf)
    {
        /// <summary>
        /// An empty bin: the lower half holds the order keys of the boxes' lower corners (minimum
        /// taken), the upper half the complemented keys of their upper corners (so the same
        /// minimum takes their maximum: one 256-bit operation updates both). Both halves start at
        /// the key of +∞.
        /// </summary>
        private static Vector256<int> EmptyBin => Vector256.Create(0x7F800000);

        /// <summary>Builds the subtree over items [start, end) into <paramref name="slot"/> and the slots after it.</summary>
        public void Build(int start, int end, int slot, int depth, RangeBounds bounds)
        {
            int count = end - start;
            Vector128<float> lo = Value(bounds.Lo), hi = Value(bounds.Hi), cLo = Value(bounds.CLo);
            Vector128<float> extent = Value(bounds.CHi) - cLo;
            // A NaN centroid (of a box reaching both infinities on an axis) has a key below that of −∞
            // or above that of +∞, so it shows in the bounds' keys; IEEE minimum and maximum would have
            // made that axis's centroid bounds NaN, and its extent NaN: no bins on it.
            Vector128<int> nan = Vector128.LessThan(bounds.CLo, RangeBounds.EmptyHi) | Vector128.GreaterThan(bounds.CHi, RangeBounds.EmptyLo);
            // A node of fewer than 16 primitives gets one bin per primitive: more could not all be
            // filled, and the per-node cost of clearing and sweeping bins dominates the lower levels.
            int bins = Math.Min(Bins, Math.Max(2, count));
            // Bin k of axis a holds centroids in [lo + k·e/bins, lo + (k+1)·e/bins); the factor just under 1 keeps the largest in the last bin (Wald 2007, §3.2).
            Vector128<float> scale = Vector128.ConditionalSelect(
                Vector128.GreaterThan(extent, Vector128<float>.Zero) & ~nan.AsSingle(),
                Vector128.Create(bins * (1 - 1e-6f)) / extent,
                Vector128<float>.Zero);
            int axis = -1, split = -1;
            // A leaf costs its intersections; up to maxLeaf primitives may stay together when no split
            // is cheaper, except primitives that may not share a leaf, which get one of their own.
            bool mayLeaf = count <= maxLeaf && (count == 1 || !AnyAlone(start, end));
            float bestCost = mayLeaf ? IntersectionCost * count : float.PositiveInfinity;
            if (count > 1 && depth < MaxDepth - 1 && scale != Vector128<float>.Zero)
            {
                (axis, split) = BestSplit(start, end, bins, HalfArea(lo, hi), cLo, scale, ref bestCost);
            }

            if (axis < 0 && (mayLeaf || depth >= MaxDepth - 1))
            {
                nodes[slot] = Node.Leaf(lo, hi, start, count);
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
                mid = Partition(start, end, bins, axis, split, cLo, scale, ref left, ref right);
            }

            int rightSlot = slot + (2 * (mid - start));
            nodes[slot] = Node.Interior(lo, hi, rightSlot, axis);
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
        private (int Axis, int Split) BestSplit(int start, int end, int bins, float parentArea, Vector128<float> cLo, Vector128<float> scale, ref float bestCost)
        {
            // Two sets of bins, one for even and one for odd positions, merged after the pass:
            // neighbouring items (often in the same bin) then update different memory, so their
            // read-modify-writes need not wait for each other. Min, max and counts are exact, so the
            // merged bins are the ones a single set would hold, whatever the split of the items.
            // Small nodes (most of them) take one set: clearing and merging a second would cost more than it saves.
            Span<Vector256<int>> bin = stackalloc Vector256<int>[2 * 3 * Bins];
            Span<int> binCount = stackalloc int[2 * 3 * Bins];
            int set = 3 * bins;
            int sets = end - start >= DualBinsFrom ? 2 : 1;
            bin[..(sets * set)].Fill(EmptyBin);
            binCount[..(sets * set)].Clear();
            // Bin indices are clamped to [0, bins): the hot loop indexes the bins unchecked, and the
            // range lies inside the item array.
            ref Vector256<int> bin0 = ref MemoryMarshal.GetReference(bin);
            ref int count0 = ref MemoryMarshal.GetReference(binCount);
            ref Item item0 = ref MemoryMarshal.GetArrayDataReference(items);
            Vector128<int> top = Vector128.Create(bins - 1);
            Vector128<int> axisOffset = Vector128.Create(0, bins, 2 * bins, 0);
            int i = start;
            if (sets == 2)
            {
                Vector128<int> second = axisOffset + Vector128.Create(set);
                for (; i + 1 < end; i += 2)
                {
                    AddToBins(Unsafe.Add(ref item0, i), BinOf(Unsafe.Add(ref item0, i), cLo, scale, top) + axisOffset, ref bin0, ref count0);
                    AddToBins(Unsafe.Add(ref item0, i + 1), BinOf(Unsafe.Add(ref item0, i + 1), cLo, scale, top) + second, ref bin0, ref count0);
                }

                for (; i < end; i++)
                {
                    AddToBins(Unsafe.Add(ref item0, i), BinOf(Unsafe.Add(ref item0, i), cLo, scale, top) + axisOffset, ref bin0, ref count0);
                }

                for (int k = 0; k < set; k++)
                {
                    bin[k] = Vector256.Min(bin[k], bin[set + k]);
                    binCount[k] += binCount[set + k];
                }
            }
            else
            {
                for (; i < end; i++)
                {
                    AddToBins(Unsafe.Add(ref item0, i), BinOf(Unsafe.Add(ref item0, i), cLo, scale, top) + axisOffset, ref bin0, ref count0);
                }
            }

            Span<float> leftArea = stackalloc float[Bins];
            Span<int> leftCount = stackalloc int[Bins];
            int axis = -1, split = -1;
            for (int a = 0; a < 3; a++)
            {
                if (scale.GetElement(a) == 0)
                {
                    continue;
                }

                // Sweep from the left, then evaluate each split with a sweep from the right. A split
                // whose first right-hand bin is empty is skipped: it parts the items as the split one
                // bin higher does, which is priced first at the same cost (or skipped for an empty
                // side), and only a strictly lower cost wins; so the left area it would use is not made.
                Span<Vector256<int>> axisBins = bin.Slice(a * bins, bins);
                Span<int> axisCounts = binCount.Slice(a * bins, bins);
                Vector256<int> box = EmptyBin;
                int lc = 0;
                for (int b = 0; b < bins - 1; b++)
                {
                    box = Vector256.Min(box, axisBins[b]);
                    lc += axisCounts[b];
                    leftCount[b] = lc;
                    leftArea[b] = lc > 0 && axisCounts[b + 1] > 0 ? BinArea(box) : 0;
                }

                box = EmptyBin;
                int rc = 0;
                for (int b = bins - 1; b > 0; b--)
                {
                    if (axisCounts[b] == 0)
                    {
                        continue;
                    }

                    box = Vector256.Min(box, axisBins[b]);
                    rc += axisCounts[b];
                    int l = leftCount[b - 1];
                    if (l == 0)
                    {
                        break; // every bin below is empty too
                    }

                    float cost = TraversalCost + (IntersectionCost * ((leftArea[b - 1] * l) + (BinArea(box) * rc)) / parentArea);
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

        /// <summary>Half the surface area of a bin's box.</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static float BinArea(Vector256<int> box) => HalfArea(Value(box.GetLower()), Value(~box.GetUpper()));

        /// <summary>Adds an item to its bin on each axis (<paramref name="b"/>: the three bin indices into the flat bin arrays).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static void AddToBins(in Item item, Vector128<int> b, ref Vector256<int> bin0, ref int count0)
        {
            Vector256<int> box = Vector256.Create(Key(item.Lo), ~Key(item.Hi));
            int k0 = b.GetElement(0), k1 = b.GetElement(1), k2 = b.GetElement(2);
            Unsafe.Add(ref count0, k0)++;
            Unsafe.Add(ref count0, k1)++;
            Unsafe.Add(ref count0, k2)++;
            ref Vector256<int> b0 = ref Unsafe.Add(ref bin0, k0);
            b0 = Vector256.Min(b0, box);
            ref Vector256<int> b1 = ref Unsafe.Add(ref bin0, k1);
            b1 = Vector256.Min(b1, box);
            ref Vector256<int> b2 = ref Unsafe.Add(ref bin0, k2);
            b2 = Vector256.Min(b2, box);
        }

        /// <summary>
        /// Moves the items whose centroid bin on <paramref name="axis"/> is below
        /// <paramref name="split"/> to the front (Hoare's two-ended scan) and gathers both sides'
        /// bounds on the way; returns the first right-hand position.
        /// </summary>
        private int Partition(int start, int end, int bins, int axis, int split, Vector128<float> cLo, Vector128<float> scale, ref RangeBounds left, ref RangeBounds right)
        {
            ref Item item0 = ref MemoryMarshal.GetArrayDataReference(items);
            Vector128<int> top = Vector128.Create(bins - 1), splitAt = Vector128.Create(split);
            uint axisBit = 1u << axis;
            int i = start, j = end - 1;
            while (true)
            {
                while (i <= j && IsLeft(Unsafe.Add(ref item0, i)))
                {
                    left.Add(Unsafe.Add(ref item0, i++));
                }

                while (i <= j && !IsLeft(Unsafe.Add(ref item0, j)))
                {
                    right.Add(Unsafe.Add(ref item0, j--));
                }

                if (i > j)
                {
                    return i;
                }

                (Unsafe.Add(ref item0, i), Unsafe.Add(ref item0, j)) = (Unsafe.Add(ref item0, j), Unsafe.Add(ref item0, i));
            }

            bool IsLeft(in Item item) => (Vector128.LessThan(BinOf(item, cLo, scale, top), splitAt).ExtractMostSignificantBits() & axisBit) != 0;
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector128<int> BinOf(in Item item, Vector128<float> cLo, Vector128<float> scale, Vector128<int> top) =>
            Vector128.Min(Vector128.Max(Vector128.ConvertToInt32((Centroid(item) - cLo) * scale), Vector128<int>.Zero), top);
    }
}
