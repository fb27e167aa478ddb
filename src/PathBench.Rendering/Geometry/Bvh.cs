using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// An eight-wide bounding volume hierarchy over all primitives: the binary binned-SAH tree of
/// <see cref="BinnedSah"/> (leaves of up to four triangles; any other primitive alone in its
/// leaf, so the box test culls it before its scalar hit test) collapsed so each node holds the
/// boxes of up to eight children side by side (the collapse of a binary tree into wide nodes of
/// Wald, Benthin &amp; Boulos 2008, "Getting Rid of Packets", and Ernst &amp; Greiner 2008,
/// "Multi Bounding Volume Hierarchies", both IEEE Symposium on Interactive Ray Tracing), and one
/// query tests all eight with one <see cref="Vector256{T}"/> of floats per plane. A node is 256
/// bytes, aligned to 256: 48 floats of boxes (min x, max x, min y, max y, min z, max z, eight
/// lanes each), eight child links (a node's index, or the complement of a leaf's first primitive
/// × 8 + 4 when all its primitives are triangles + its size − 1) and padding. Boxes are stored
/// in single precision rounded outward (each float box contains the double box of its
/// primitives). The slab test runs in single precision with error bounds that make it enter
/// every box the double test on the same float box enters (<see cref="BoxRay"/>; rays outside
/// its range take the double test), so no hit is lost, and since the primitive tests are
/// unchanged the closest hit is the one the double walk finds (only which of two primitives at
/// exactly the same distance wins could depend on the visit order). A triangles-only leaf is
/// tested four triangles at a time from its hit records (nine coordinate planes side by side,
/// 72 bytes a triangle, in leaf order), each lane with the scalar watertight test's arithmetic
/// (Woop, Benthin &amp; Wald 2013); the 128-byte primitives are read only for other leaves and
/// for the final hit. Children are visited nearest first and skipped when they start beyond the
/// best hit. The stack lives on the call stack, unzeroed: no allocation and no clearing per query.
/// </summary>
public sealed class Bvh
{
    /// <summary>Deepest tree a query supports; the build stops splitting before this.</summary>
    public const int MaxDepth = BinnedSah.MaxDepth;

    /// <summary>Most primitives a hierarchy takes: a leaf link packs its start, a triangles-only flag and its size into one int.</summary>
    public const int MaxPrimitives = 1 << 28;

    private const int MaxLeaf = 4;
    private const int Lanes = 8;
    private const int Planes = 6 * Lanes; // minX, maxX, minY, maxY, minZ, maxZ, eight lanes each
    private const int ChildOffset = Planes;
    private const int NodeFloats = 64;    // 256 bytes: 192 of planes, 32 of links, 32 of padding
    private const int NodeAlign = NodeFloats * sizeof(float);

    // A wide node's children lie at least one binary level below it, and a visit adds at most
    // Lanes − 1 entries to the stack (pushes Lanes, pops one), so MaxDepth levels need this many.
    private const int StackSize = ((Lanes - 1) * MaxDepth) + Lanes;

    // The single-precision slab test (see BoxRay): relative widening of the distances, absolute
    // widening of the far end, and the largest origin coordinate and reciprocal it takes.
    private const double Widen = 1.0 / (1 << 20);                 // 2^-20, exact in both precisions
    private const float FarSlack = 1.0f / (1L << 39);             // 2^-39 ≈ 1.82e-12
    private const float LimitSlack = 1.0f / (1L << 62) / (1L << 62) / (1L << 16); // 2^-140, above the subnormal products' error
    private const float OriginMargin = 1.0f / (1 << 22);          // 2^-22
    private const double SingleOriginLimit = 1e30;
    private const double SingleReciprocalLimit = 18446744073709551616.0; // 2^64

    // Doubles of a primitive's hit record: a triangle's nine vertex coordinates.
    private const int RecordDoubles = 9;

    private readonly Primitive[] _primitives;

    // Hit records, RecordDoubles per primitive in leaf order: a triangles-only leaf of c triangles
    // starting at s holds its nine coordinate planes (A x, y, z, B x, y, z, C x, y, z) of c lanes each
    // from RecordDoubles·s on, so the walk reads a leaf's triangles from contiguous memory, four at
    // once, and touches the 128-byte primitives only for the final hit. Other leaves' slots are zero,
    // as are Lanes spare doubles at the end that a four-lane load of the last leaf may read.
    private readonly double[] _records;
    private readonly float[] _nodes;   // pinned; node k at _nodes[_first + NodeFloats·k ..], 256-byte aligned
    private readonly int _first;
    private readonly int _nodeCount;

    /// <summary>Builds the hierarchy on all cores; the primitive array is reordered into leaf order and kept.</summary>
    public Bvh(Primitive[] primitives)
        : this(primitives, 0)
    {
    }

    /// <summary>Builds the hierarchy on up to <paramref name="threads"/> threads (0: all cores); the tree is the same for any count.</summary>
    internal Bvh(Primitive[] primitives, int threads)
    {
        ArgumentNullException.ThrowIfNull(primitives);
        if (primitives.Length >= MaxPrimitives)
        {
            throw new ArgumentException($"a BVH takes at most {MaxPrimitives - 1} primitives, not {primitives.Length}", nameof(primitives));
        }

        int n = primitives.Length;
        byte[] leafSizes = new byte[n];
        var options = new ParallelOptions { MaxDegreeOfParallelism = threads <= 0 ? Environment.ProcessorCount : threads };
        const int Chunk = 16384;
        bool[] triangle = GC.AllocateUninitializedArray<bool>(n);
        Parallel.For(0, (n + Chunk - 1) / Chunk, options, c =>
        {
            for (int i = c * Chunk, end = Math.Min(n, (c + 1) * Chunk); i < end; i++)
            {
                triangle[i] = primitives[i].Kind == PrimitiveKind.Triangle;
            }
        });

        // Triangles share leaves (tested four at a time from their hit records); any other
        // primitive gets a leaf of its own, so the node's eight-wide box test culls it before its
        // scalar hit test runs.
        (BinnedSah.Node[] binary, int[] order) = BinnedSah.Build(primitives, MaxLeaf, threads, leafSizes, triangle);

        // The collapse runs beside the primitives' reorder into leaf order and their hit records (a
        // run of positions per task; each leaf is written by the task its first position falls in).
        // Neither reads what the other writes. The root's wide node is made first; the subtrees
        // below its interior lanes are collapsed each on its own (a task each), then laid out one
        // after another as the depth-first collapse of the whole tree lays them out, so the nodes
        // are the same for any thread count.
        _primitives = GC.AllocateUninitializedArray<Primitive>(n);
        _records = GC.AllocateUninitializedArray<double>((RecordDoubles * n) + Lanes);
        _records.AsSpan(RecordDoubles * n).Clear();
        var root = new Collapser(binary, order, triangle, 1);
        var deferred = new List<int>(Lanes);
        root.Collapse(0, deferred);
        var parts = new Collapser[deferred.Count];
        Parallel.Invoke(
            options,
            () => Parallel.For(0, parts.Length, options, p =>
            {
                parts[p] = new Collapser(binary, order, triangle, 64 + (Collapser.Primitives(binary, deferred[p]) / 4));
                parts[p].Collapse(deferred[p], null);
            }),
            () => Parallel.For(0, (n + Chunk - 1) / Chunk, options, c =>
            {
                for (int start = c * Chunk, end = Math.Min(n, (c + 1) * Chunk); start < end; start++)
                {
                    int count = leafSizes[start];
                    if (count == 0)
                    {
                        continue;
                    }

                    bool triangles = true;
                    for (int i = start; i < start + count; i++)
                    {
                        _primitives[i] = primitives[order[i]];
                        triangles &= triangle[order[i]];
                    }

                    WriteRecords(start, count, triangles);
                }
            }));
        int[] offsets = new int[parts.Length];
        _nodeCount = 1;
        for (int p = 0; p < parts.Length; p++)
        {
            offsets[p] = _nodeCount;
            _nodeCount += parts[p].Count;
        }

        PrimitiveOrder = order;
        // Pinned (never moved), so the alignment found here holds for the array's life.
        _nodes = GC.AllocateUninitializedArray<float>((NodeFloats * _nodeCount) + NodeFloats, pinned: true);
        long address = Marshal.UnsafeAddrOfPinnedArrayElement(_nodes, 0);
        _first = (int)((NodeAlign - (address % NodeAlign)) % NodeAlign) / sizeof(float);
        root.CopyTo(_nodes.AsSpan(_first, NodeFloats), 0, offsets);
        Parallel.For(0, parts.Length, options, p => parts[p].CopyTo(_nodes.AsSpan(_first + (NodeFloats * offsets[p]), NodeFloats * parts[p].Count), offsets[p], null));
    }

    /// <summary>Whether queries use the 256-bit box and triangle tests (false: the scalar loops, same arithmetic). Tests switch it to compare the two.</summary>
    internal bool Vectorised { get; set; } = Vector256.IsHardwareAccelerated;

    /// <summary>The primitives in leaf order (hit indices refer to this array).</summary>
    public ReadOnlySpan<Primitive> Primitives => _primitives;

    /// <summary>For each position in <see cref="Primitives"/>, the index in the array given to the constructor.</summary>
    public IReadOnlyList<int> PrimitiveOrder { get; }

    /// <summary>Number of (eight-wide) nodes.</summary>
    public int NodeCount => _nodeCount;

    /// <summary>Bytes of the hierarchy a query walks besides the primitives: 256 per node (boxes, child links, padding).</summary>
    public long NodeBytes => (long)_nodeCount * NodeAlign;

    /// <summary>Bytes of the triangle hit records the walk reads instead of the primitives (72 per primitive).</summary>
    public long HitRecordBytes => (long)_records.Length * sizeof(double);

    /// <summary>The eight-wide nodes of a binary tree, laid out depth first as they are made.</summary>
    private sealed class Collapser(BinnedSah.Node[] binary, int[] order, bool[] triangle, int capacity)
    {
        // Sized from the subtree's primitives (a quarter as many wide nodes; the 1 M-triangle room
        // makes about a sixth), so the array seldom grows and is copied on the way: it is left
        // uninitialised, and pages never written are never touched.
        public float[] Nodes { get; private set; } = GC.AllocateUninitializedArray<float>(NodeFloats * capacity);

        public int Count { get; private set; }

        /// <summary>The number of primitives below binary node <paramref name="b"/>: from its leftmost leaf's start to its rightmost leaf's end.</summary>
        public static int Primitives(BinnedSah.Node[] binary, int b)
        {
            int first = b, last = b;
            while (binary[first].Count == 0)
            {
                first++;
            }

            while (binary[last].Count == 0)
            {
                last = binary[last].Start;
            }

            return binary[last].Start + binary[last].Count - binary[first].Start;
        }

        /// <summary>
        /// Copies the nodes into <paramref name="into"/>, where node 0 lands at global index
        /// <paramref name="offset"/>: interior links (positive; 0 is an empty lane, as no node
        /// links to the first) are moved by the offset, or, in the root's node made with deferred
        /// subtrees, link k + 1 becomes <paramref name="deferredAt"/>[k].
        /// </summary>
        public void CopyTo(Span<float> into, int offset, int[]? deferredAt)
        {
            Nodes.AsSpan(0, NodeFloats * Count).CopyTo(into);
            for (int node = 0; node < Count; node++)
            {
                Span<int> links = MemoryMarshal.Cast<float, int>(into.Slice((NodeFloats * node) + ChildOffset, Lanes));
                for (int lane = 0; lane < Lanes; lane++)
                {
                    if (links[lane] > 0)
                    {
                        links[lane] = deferredAt is null ? links[lane] + offset : deferredAt[links[lane] - 1];
                    }
                }
            }
        }

        /// <summary>
        /// Makes the wide node for binary interior node <paramref name="b"/> (or, at the root of a
        /// one-leaf tree, for that leaf): its two children are opened, the largest-area interior
        /// one first, until eight children are gathered or only leaves remain. With
        /// <paramref name="deferred"/>, interior children are not collapsed but listed there, and
        /// linked as their place in the list plus one (see <see cref="CopyTo"/>).
        /// </summary>
        [SkipLocalsInit] // open and area are written before they are read
        public int Collapse(int b, List<int>? deferred)
        {
            Span<int> open = stackalloc int[Lanes];
            Span<double> area = stackalloc double[Lanes]; // of each open child; −1 for a leaf (never opened)
            int count;
            if (binary[b].Count > 0)
            {
                open[0] = b;
                area[0] = -1;
                count = 1;
            }
            else
            {
                open[0] = b + 1;
                area[0] = AreaOf(b + 1);
                open[1] = binary[b].Start;
                area[1] = AreaOf(open[1]);
                count = 2;
            }

            while (count < Lanes)
            {
                int widest = -1;
                double largest = -1;
                for (int i = 0; i < count; i++)
                {
                    if (area[i] > largest)
                    {
                        largest = area[i];
                        widest = i;
                    }
                }

                if (widest < 0)
                {
                    break;
                }

                int opened = open[widest];
                open[widest] = opened + 1;
                area[widest] = AreaOf(opened + 1);
                open[count] = binary[opened].Start;
                area[count] = AreaOf(open[count]);
                count++;
            }

            int node = Count++;
            if (Nodes.Length < NodeFloats * Count)
            {
                float[] grown = new float[Nodes.Length * 2];
                Nodes.CopyTo(grown, 0);
                Nodes = grown;
            }

            Span<int> links = stackalloc int[Lanes];
            links.Clear();
            for (int lane = 0; lane < count; lane++)
            {
                ref readonly BinnedSah.Node c = ref binary[open[lane]];
                if (c.Count > 0)
                {
                    links[lane] = Leaf(c.Start, c.Count);
                }
                else if (deferred is null)
                {
                    links[lane] = Collapse(open[lane], null);
                }
                else
                {
                    deferred.Add(open[lane]);
                    links[lane] = deferred.Count;
                }
            }

            // Written after the children, which may have grown the array.
            Span<float> planes = Nodes.AsSpan(NodeFloats * node, NodeFloats);
            for (int i = 0; i < Planes; i++)
            {
                // Empty lanes get inverted boxes (min +∞, max −∞): their near plane lies beyond the far one for any ray.
                planes[i] = (i / Lanes & 1) == 0 ? float.PositiveInfinity : float.NegativeInfinity;
            }

            for (int lane = 0; lane < count; lane++)
            {
                ref readonly BinnedSah.Node c = ref binary[open[lane]];
                for (int axis = 0; axis < 3; axis++)
                {
                    planes[(Lanes * 2 * axis) + lane] = c.Lo.GetElement(axis);
                    planes[(Lanes * ((2 * axis) + 1)) + lane] = c.Hi.GetElement(axis);
                }
            }

            links.CopyTo(MemoryMarshal.Cast<float, int>(planes[ChildOffset..]));
            planes[(ChildOffset + Lanes)..].Clear(); // padding to 256 bytes
            return node;
        }

        /// <summary>Half the surface area of binary node <paramref name="k"/>'s box, or −1 for a leaf.</summary>
        private double AreaOf(int k)
        {
            ref readonly BinnedSah.Node c = ref binary[k];
            return c.Count > 0 ? -1 : HalfArea(c.Min, c.Max);
        }

        /// <summary>The link of the leaf [start, start + count): its start, whether all its primitives are triangles, its size.</summary>
        private int Leaf(int start, int count)
        {
            bool triangles = true;
            for (int i = start; i < start + count; i++)
            {
                triangles &= triangle[order[i]];
            }

            return ~((start << 3) | (triangles ? 4 : 0) | (count - 1));
        }
    }

    /// <summary>Writes the hit records of the leaf [start, start + count) of <see cref="_primitives"/>: its triangles' coordinate planes, or zeros.</summary>
    private void WriteRecords(int start, int count, bool triangles)
    {
        Span<double> planes = _records.AsSpan(RecordDoubles * start, RecordDoubles * count);
        if (!triangles)
        {
            planes.Clear();
            return;
        }

        for (int i = 0; i < count; i++)
        {
            ref readonly Primitive p = ref _primitives[start + i];
            planes[i] = p.A.X;
            planes[count + i] = p.A.Y;
            planes[(2 * count) + i] = p.A.Z;
            planes[(3 * count) + i] = p.B.X;
            planes[(4 * count) + i] = p.B.Y;
            planes[(5 * count) + i] = p.B.Z;
            planes[(6 * count) + i] = p.C.X;
            planes[(7 * count) + i] = p.C.Y;
            planes[(8 * count) + i] = p.C.Z;
        }
    }

    private static double HalfArea(Vec3d min, Vec3d max)
    {
        Vec3d d = max - min;
        return (d.X * d.Y) + (d.Y * d.Z) + (d.Z * d.X);
    }

    /// <summary>The nearest hit along the ray before <see cref="Ray.TMax"/>; false when there is none.</summary>
    [SkipLocalsInit]
    public bool Intersect(in Ray ray, out SurfaceHit hit)
    {
        Unsafe.SkipInit(out FrameSlot frame);
        frame.Ready = false;
        var query = new ClosestHit(new Leaves(this, in ray, ref frame), ray.TMax);
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
        // Both normals from the local: copied from hit.GeometricNormal, the JIT read the three
        // doubles it had just stored one by one back as 16 + 8 bytes, and a load that spans two
        // stores waits for them to reach the cache (no store forwarding): 1.8 % of a reading-room frame.
        Vec3d normal = prim.NormalAt(hit.Point);
        hit.GeometricNormal = normal;
        hit.ShadingNormal = normal;
        return true;
    }

    /// <summary>True when anything blocks the ray before <paramref name="tMax"/> (shadow rays: any hit ends the walk).</summary>
    [SkipLocalsInit]
    public bool Occluded(in Ray ray, double tMax)
    {
        Unsafe.SkipInit(out FrameSlot frame);
        frame.Ready = false;
        var query = new AnyHit(new Leaves(this, in ray, ref frame), tMax);
        Walk(ray, ref query);
        return query.Found;
    }

    /// <summary>What a walk does at a leaf, and how far it still looks.</summary>
    private interface ILeafQuery
    {
        /// <summary>The far end of the ray segment still searched.</summary>
        double TMax { get; }

        /// <summary>Tests primitives [start, start + count) (<paramref name="triangles"/>: all triangles, with hit records); true ends the walk.</summary>
        bool Leaf(int start, int count, bool triangles);
    }

    private ref struct ClosestHit(Leaves leaves, double tMax) : ILeafQuery
    {
        private readonly Leaves _leaves = leaves;

        public double TMax { get; private set; } = tMax;

        public int Best { get; private set; } = -1;

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public bool Leaf(int start, int count, bool triangles)
        {
            if (triangles && _leaves.Vectorised)
            {
                // The four tests are each the scalar test's arithmetic; taking the lanes in order with
                // a strict comparison keeps the scalar loop's choice (the first of equal distances).
                int mask = _leaves.Triangles(start, count, TMax, out Vector256<double> t);
                for (; mask != 0; mask &= mask - 1)
                {
                    int lane = System.Numerics.BitOperations.TrailingZeroCount(mask);
                    double tl = t.GetElement(lane);
                    if (tl < TMax)
                    {
                        TMax = tl;
                        Best = start + lane;
                    }
                }

                return false;
            }

            for (int i = start; i < start + count; i++)
            {
                double t = _leaves.Test(i, TMax);
                if (t < TMax)
                {
                    TMax = t;
                    Best = i;
                }
            }

            return false;
        }
    }

    private ref struct AnyHit(Leaves leaves, double tMax) : ILeafQuery
    {
        private readonly Leaves _leaves = leaves;

        public readonly double TMax => tMax;

        public bool Found { get; private set; }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public bool Leaf(int start, int count, bool triangles)
        {
            if (triangles && _leaves.Vectorised)
            {
                Found = _leaves.Triangles(start, count, tMax, out _) != 0;
                return Found;
            }

            for (int i = start; i < start + count; i++)
            {
                if (_leaves.Test(i, tMax) < tMax)
                {
                    Found = true;
                    return true;
                }
            }

            return false;
        }
    }

    /// <summary>
    /// What both queries test leaves with: the primitives, their hit records, and the query's ray
    /// and triangle frame by reference, so a query is built in place without copying the ray (a
    /// query that held them by value was built in a temporary and copied, in pieces whose widths
    /// kept the loads from forwarding the stores). The <see cref="TriangleFrame"/> is set up at the
    /// first triangle the walk tests: a ray that meets only analytic primitives (the demo rooms'
    /// walls) skips the shear's axis choice and division. It is the same whenever it is made, so
    /// are the hits.
    /// </summary>
    private readonly ref struct Leaves
    {
        public readonly bool Vectorised;
        private readonly Primitive[] _primitives;
        private readonly double[] _records;
        private readonly ref readonly Ray _ray;
        private readonly ref FrameSlot _frame;

        public Leaves(Bvh bvh, ref readonly Ray ray, ref FrameSlot frame)
        {
            Vectorised = bvh.Vectorised;
            _primitives = bvh._primitives;
            _records = bvh._records;
            _ray = ref ray;
            _frame = ref frame;
        }

        /// <summary>The triangles-only leaf [start, start + count) from its hit records (see <see cref="TriangleFrame.Triangles"/>).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public int Triangles(int start, int count, double tMax, out Vector256<double> t) =>
            Frame().Triangles(ref _records[RecordDoubles * start], count, tMax, out t);

        /// <summary>Primitive <paramref name="i"/>; triangles reuse the ray's shear (the same arithmetic as <see cref="Primitive.Intersect"/>).</summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public double Test(int i, double tMax)
        {
            ref readonly Primitive p = ref _primitives[i];
            return p.Kind == PrimitiveKind.Triangle ? p.IntersectTriangle(Frame().Shear, _ray.Origin, tMax) : p.Intersect(_ray, tMax);
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private ref readonly TriangleFrame Frame()
        {
            if (!_frame.Ready)
            {
                Make();
            }

            return ref _frame.Frame;
        }

        // Out of line, so the walk's inlined leaf code stays small.
        [MethodImpl(MethodImplOptions.NoInlining)]
        private void Make()
        {
            _frame.Frame = new TriangleFrame(_ray);
            _frame.Ready = true;
        }
    }

    /// <summary>Where a query keeps its triangle frame: a local of the query's caller, left uninitialised but for <see cref="Ready"/>.</summary>
    private struct FrameSlot
    {
        public TriangleFrame Frame;
        public bool Ready;
    }

    /// <summary>
    /// A ray set up for the watertight triangle test (Woop, Benthin &amp; Wald 2013) of four hit
    /// records at once: the shear of <see cref="RayShear"/> and the origin's components in its
    /// axis order, kept as scalars and broadcast to four lanes where the test uses them.
    /// </summary>
    private readonly struct TriangleFrame
    {
        public readonly RayShear Shear;
        // Scalars, broadcast where used (a broadcast load costs what a vector load does), so the query stays small.
        private readonly double _ox, _oy, _oz;
        private readonly int _kx, _ky, _kz;

        public TriangleFrame(in Ray ray)
        {
            Shear = new RayShear(ray.Direction);
            _kx = Shear.Kx;
            _ky = Shear.Ky;
            _kz = Shear.Kz;
            Vec3d o = ray.Origin;
            ref double origin = ref Unsafe.As<Vec3d, double>(ref o); // x, y, z in order (a record struct of three doubles)
            _ox = Unsafe.Add(ref origin, _kx);
            _oy = Unsafe.Add(ref origin, _ky);
            _oz = Unsafe.Add(ref origin, _kz);
        }

        /// <summary>
        /// The triangles of one leaf's hit records (<paramref name="count"/> lanes per plane): the
        /// mask of those hit in (0, <paramref name="tMax"/>) and their distances in
        /// <paramref name="t"/>. Each lane runs <see cref="Primitive.IntersectTriangle(in RayShear, Vec3d, double)"/>'s
        /// operations in its order (no fused multiply-adds), so its distance has the same bits.
        /// Lanes past <paramref name="count"/> read the next plane's values and are masked off.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public int Triangles(ref double records, int count, double tMax, out Vector256<double> t)
        {
            Vector256<double> ox = Vector256.Create(_ox), oy = Vector256.Create(_oy), oz = Vector256.Create(_oz);
            Vector256<double> sx = Vector256.Create(Shear.Sx), sy = Vector256.Create(Shear.Sy), sz = Vector256.Create(Shear.Sz);
            Vector256<double> az = Load(ref records, count, _kz) - oz;
            Vector256<double> bz = Load(ref records, count, 3 + _kz) - oz;
            Vector256<double> cz = Load(ref records, count, 6 + _kz) - oz;
            Vector256<double> ax = (Load(ref records, count, _kx) - ox) - (sx * az);
            Vector256<double> ay = (Load(ref records, count, _ky) - oy) - (sy * az);
            Vector256<double> bx = (Load(ref records, count, 3 + _kx) - ox) - (sx * bz);
            Vector256<double> by = (Load(ref records, count, 3 + _ky) - oy) - (sy * bz);
            Vector256<double> cx = (Load(ref records, count, 6 + _kx) - ox) - (sx * cz);
            Vector256<double> cy = (Load(ref records, count, 6 + _ky) - oy) - (sy * cz);
            Vector256<double> u = (cx * by) - (cy * bx);
            Vector256<double> v = (ax * cy) - (ay * cx);
            Vector256<double> w = (bx * ay) - (by * ax);
            Vector256<double> zero = Vector256<double>.Zero;
            Vector256<double> negative = Vector256.LessThan(u, zero) | Vector256.LessThan(v, zero) | Vector256.LessThan(w, zero);
            Vector256<double> positive = Vector256.GreaterThan(u, zero) | Vector256.GreaterThan(v, zero) | Vector256.GreaterThan(w, zero);
            Vector256<double> det = u + v + w;
            t = (((u * az) + (v * bz) + (w * cz)) * sz) / det;
            // The scalar test's det == 0 rejection is implied: a zero det gives t = ±∞ or NaN, never in (0, tMax).
            Vector256<double> hit = Vector256.AndNot(Vector256.GreaterThan(t, zero) & Vector256.LessThan(t, Vector256.Create(tMax)), negative & positive);
            return (int)hit.ExtractMostSignificantBits() & ((1 << count) - 1);
        }

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static Vector256<double> Load(ref double records, int count, int plane) => Vector256.LoadUnsafe(ref records, (nuint)(count * plane));
    }

    [InlineArray(StackSize)]
    private struct StackRefs
    {
        private int _first;
    }

    [InlineArray(StackSize)]
    private struct StackNears
    {
        private float _first;
    }

    [InlineArray(Lanes)]
    private struct LaneNears
    {
        private float _first;
    }

    /// <summary>How a node's boxes are tested: the forms a query may take, named so tests can run each.</summary>
    internal enum BoxTest
    {
        /// <summary>Single precision, eight lanes in one <see cref="Vector256{T}"/> (rays within <see cref="BoxRay.Single"/>'s range).</summary>
        SingleVector,

        /// <summary>The same single-precision operations, one lane at a time.</summary>
        SingleScalar,

        /// <summary>Double precision, four lanes per <see cref="Vector256{T}"/> (any ray).</summary>
        DoubleVector,

        /// <summary>The double-precision operations one lane at a time.</summary>
        DoubleScalar,
    }

    /// <summary>
    /// A ray prepared for slab tests (Kay &amp; Kajiya 1986, "Ray tracing complex scenes",
    /// SIGGRAPH): its reciprocal direction and, per axis, which plane it meets first, in double
    /// precision; and the single-precision form of the conservative test of Ize 2013 ("Robust BVH
    /// Ray Traversal", JCGT 2(2)), here made to contain the double test (every box the double test
    /// enters, the single test enters too, so no hit is lost and the closest hit is unchanged):
    /// <list type="bullet">
    /// <item>the origin is replaced per axis by a float on the far side of it along the ray for
    /// the near planes and one on the near side for the far planes, so plane − origin is, before
    /// rounding, no larger (near) and no smaller (far) along the ray than the double difference;</item>
    /// <item>the reciprocals are scaled by 1 − 2^-20 (near) and 1 + 2^-20 (far) before rounding to
    /// float. Each single distance is the exact one times (1 + θ), |θ| ≤ 4·2^-24 (rounding of the
    /// reciprocal to double and to float, the subtraction, the product), and the double distance
    /// is within 2·2^-53 of it, so a near distance ≥ 0 is at most the double one and a far
    /// distance ≥ 0 at least the double one (Ize's γ bounds, with margin). Negative near distances
    /// lose to the clamp at 0 either way; a negative far distance matters only above −10^-12
    /// (below, both tests reject), where the far slack covers the scaling;</item>
    /// <item>the double test accepts t0 ≤ t1 + (|t1| + 1)·10^-12; the single test accepts
    /// t0 ≤ t1 + 2^-39, which with the far scaling is larger, and t0 ≤ (the float above tMax) +
    /// 2^-140. Underflow to subnormals (absolute error ≤ 2^-150 per product; a subtraction that
    /// underflows is exact) is inside both slacks.</item>
    /// </list>
    /// The argument needs finite float origins and reciprocals, so the single form is taken only
    /// when every origin coordinate is within ±10^30 and every reciprocal within ±2^64 (a
    /// direction component of 0 has the stand-in reciprocal 10^300, so axis-parallel rays take
    /// the double form); then no operand is infinite except box planes (finite − ∞ = ∓∞, times a
    /// non-zero reciprocal), no NaN arises, and an overflow to +∞ of a near distance happens only
    /// where the double one is ≥ 3.4·10^38, beyond any far distance of the box the double test
    /// could accept (an infinite far end of an infinite box compares equal).
    /// </summary>
    internal readonly struct BoxRay
    {
        public readonly Vec3d Origin, Inv;
        public readonly int Nx, Ny, Nz;
        public readonly bool Single;

        // The single form's origins and reciprocals, lanes x, y, z (and one unused): four vector
        // stores when the ray is set up, one broadcast load per plane in a node's test.
        private readonly Vector128<float> _near, _far, _invNear, _invFar;

        /// <summary>
        /// Sets the ray up; with AVX the three axes at once (one division for the three
        /// reciprocals, four vector stores; on the demo scenes a ray visits about 1.5 nodes, and
        /// the scalar set-up took a quarter of the walk's time, docs/perf-round7-geo.md), otherwise
        /// by <see cref="Reference"/>'s scalar operations. Both are the same IEEE operations per
        /// axis, so the same bits (<c>Box_ray_setup_equals_its_scalar_reference</c>).
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public BoxRay(in Ray ray, bool reference = false)
        {
            if (Avx.IsSupported && !reference)
            {
                Vector256<double> origin = Vector256.Create(ray.Origin.X, ray.Origin.Y, ray.Origin.Z, 0);
                Origin = new(origin.ToScalar(), origin.GetElement(1), origin.GetElement(2));
                Vector256<double> d = Vector256.Create(ray.Direction.X, ray.Direction.Y, ray.Direction.Z, 1);
                // Reciprocal's x == 0 ? 1e300 : 1 / x, lane by lane (−0 equals 0 in both).
                Vector256<double> inv = Vector256.ConditionalSelect(Vector256.Equals(d, Vector256<double>.Zero), Vector256.Create(1e300), Vector256<double>.One / d);
                Inv = new(inv.ToScalar(), inv.GetElement(1), inv.GetElement(2));
                uint negative = Vector256.LessThan(inv, Vector256<double>.Zero).ExtractMostSignificantBits();
                Nx = (int)(negative & 1);
                Ny = (int)((negative >> 1) & 1);
                Nz = (int)((negative >> 2) & 1);
                Vector256<double> fits = Vector256.LessThanOrEqual(Vector256.Abs(origin), Vector256.Create(SingleOriginLimit))
                    & Vector256.LessThanOrEqual(Vector256.Abs(inv), Vector256.Create(SingleReciprocalLimit));
                Single = (fits.ExtractMostSignificantBits() & 7) == 7;

                // Axis's operations, four lanes at a time (no fused multiply-add: the JIT contracts none).
                Vector128<float> f = Avx.ConvertToVector128Single(origin);
                Vector128<float> sign = Avx.ConvertToVector128Single(inv) & Vector128.Create(-0.0f);
                Vector128<float> margin = Vector128.AndNot((Vector128.Abs(f) * Vector128.Create(OriginMargin)) + Vector128.Create(LimitSlack), Vector128.Create(-0.0f)) | sign;
                _near = f + margin;
                _far = f - margin;
                _invNear = Avx.ConvertToVector128Single(inv * Vector256.Create(1 - Widen));
                _invFar = Avx.ConvertToVector128Single(inv * Vector256.Create(1 + Widen));
            }
            else
            {
                Origin = ray.Origin;
                Inv = new(Reciprocal(ray.Direction.X), Reciprocal(ray.Direction.Y), Reciprocal(ray.Direction.Z));
                Nx = Inv.X < 0 ? 1 : 0;
                Ny = Inv.Y < 0 ? 1 : 0;
                Nz = Inv.Z < 0 ? 1 : 0;
                Single = Fits(Origin.X, Inv.X) & Fits(Origin.Y, Inv.Y) & Fits(Origin.Z, Inv.Z);
                (float onx, float ofx, float inx, float ifx) = Axis(Origin.X, Inv.X);
                (float ony, float ofy, float iny, float ify) = Axis(Origin.Y, Inv.Y);
                (float onz, float ofz, float inz, float ifz) = Axis(Origin.Z, Inv.Z);
                _near = Vector128.Create(onx, ony, onz, 0);
                _far = Vector128.Create(ofx, ofy, ofz, 0);
                _invNear = Vector128.Create(inx, iny, inz, 0);
                _invFar = Vector128.Create(ifx, ify, ifz, 0);
            }
        }

        public float Onx => Lane(in _near, 0);

        public float Ony => Lane(in _near, 1);

        public float Onz => Lane(in _near, 2);

        public float Ofx => Lane(in _far, 0);

        public float Ofy => Lane(in _far, 1);

        public float Ofz => Lane(in _far, 2);

        public float Inx => Lane(in _invNear, 0);

        public float Iny => Lane(in _invNear, 1);

        public float Inz => Lane(in _invNear, 2);

        public float Ifx => Lane(in _invFar, 0);

        public float Ify => Lane(in _invFar, 1);

        public float Ifz => Lane(in _invFar, 2);

        /// <summary>The set-up one axis at a time with scalar operations (the form without AVX, and the tests' reference).</summary>
        internal static BoxRay Reference(in Ray ray) => new(ray, reference: true);

        // A lane read from memory (the broadcast in a node's test loads it directly).
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static float Lane(in Vector128<float> v, int lane) => Unsafe.Add(ref Unsafe.As<Vector128<float>, float>(ref Unsafe.AsRef(in v)), lane);

        /// <summary>Whether every field the tests' reference sets has the same bits (lanes x, y, z of the single form).</summary>
        internal bool SameBits(in BoxRay other)
        {
            bool same = BitEquals(Origin, other.Origin) && BitEquals(Inv, other.Inv) && Nx == other.Nx && Ny == other.Ny && Nz == other.Nz && Single == other.Single;
            Vector128<uint> xyz = Vector128.Create(~0u, ~0u, ~0u, 0);
            return same
                && ((_near.AsUInt32() ^ other._near.AsUInt32()) & xyz) == Vector128<uint>.Zero
                && ((_far.AsUInt32() ^ other._far.AsUInt32()) & xyz) == Vector128<uint>.Zero
                && ((_invNear.AsUInt32() ^ other._invNear.AsUInt32()) & xyz) == Vector128<uint>.Zero
                && ((_invFar.AsUInt32() ^ other._invFar.AsUInt32()) & xyz) == Vector128<uint>.Zero;
        }

        private static bool BitEquals(Vec3d a, Vec3d b) =>
            BitConverter.DoubleToInt64Bits(a.X) == BitConverter.DoubleToInt64Bits(b.X)
            && BitConverter.DoubleToInt64Bits(a.Y) == BitConverter.DoubleToInt64Bits(b.Y)
            && BitConverter.DoubleToInt64Bits(a.Z) == BitConverter.DoubleToInt64Bits(b.Z);

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static bool Fits(double origin, double inv) => Math.Abs(origin) <= SingleOriginLimit & Math.Abs(inv) <= SingleReciprocalLimit;

        /// <summary>
        /// Floats beyond the origin coordinate along the ray (near planes) and behind it (far
        /// planes): the nearest float f moved by |f|·2^-22 + 2^-140, more than f's rounding error
        /// (at most |f|·2^-24, or 2^-150 where f is subnormal) and its own rounding; without branches.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        private static (float Near, float Far, float InvNear, float InvFar) Axis(double origin, double inv)
        {
            float f = (float)origin;
            float margin = MathF.CopySign((MathF.Abs(f) * OriginMargin) + LimitSlack, (float)inv);
            return (f + margin, f - margin, (float)(inv * (1 - Widen)), (float)(inv * (1 + Widen)));
        }

        /// <summary>
        /// A float at least <paramref name="tMax"/> (the nearest one times 1 + 2^-22 exceeds it by
        /// more than both roundings; ∞ stays ∞) plus 2^-140 (for subnormal distances): the single test's limit on t0.
        /// </summary>
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public static float Limit(double tMax) => ((float)tMax * (1 + OriginMargin)) + LimitSlack;
    }

    /// <summary>
    /// The one traversal loop of both queries: pop the nearest pending child; a leaf goes to the
    /// query, a node's eight boxes are tested at once and the hit ones pushed farthest first.
    /// Pending children that start beyond the query's current far end are dropped when popped.
    /// </summary>
    [SkipLocalsInit]
    private void Walk<TQuery>(in Ray ray, ref TQuery query)
        where TQuery : struct, ILeafQuery, allows ref struct
    {
        var boxRay = new BoxRay(ray);
        BoxTest form = boxRay.Single
            ? (Vectorised ? BoxTest.SingleVector : BoxTest.SingleScalar)
            : (Vectorised ? BoxTest.DoubleVector : BoxTest.DoubleScalar);
        // Fixed buffers in the frame rather than stackallocs: no stack probes or cookie check per
        // query, and the method takes the tiers (a stackalloc kept it at one unprofiled compile).
        // Indices are in range without checks: a visit adds at most Lanes − 1 entries (StackSize).
        Unsafe.SkipInit(out StackRefs refs);
        Unsafe.SkipInit(out StackNears nears);
        Unsafe.SkipInit(out LaneNears laneNears);
        ref int stackRef = ref Unsafe.As<StackRefs, int>(ref refs);
        ref float stackNear = ref Unsafe.As<StackNears, float>(ref nears);
        Span<float> near = laneNears;
        // Node indices come from the build and are in range; the walk reads nodes without bounds checks.
        ref float nodes = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_nodes), _first);
        int sp = 0;
        int r = 0; // the root is always a node
        while (true)
        {
            if (r < 0)
            {
                if (query.Leaf(~r >> 3, (~r & 3) + 1, (~r & 4) != 0))
                {
                    return;
                }
            }
            else
            {
                ref float node = ref Unsafe.Add(ref nodes, NodeFloats * r);
                int mask = form == BoxTest.SingleVector
                    ? TestSingleVector(ref node, boxRay, query.TMax, near)
                    : Test(ref node, boxRay, query.TMax, near, form);
                if (mask != 0 && (mask & (mask - 1)) == 0)
                {
                    // One child hit: visited next without a trip through the stack (pushed and
                    // popped at once it would pass the pop's test, its near end being within TMax).
                    r = Unsafe.As<float, int>(ref Unsafe.Add(ref node, ChildOffset + System.Numerics.BitOperations.TrailingZeroCount(mask)));
                    continue;
                }

                int first = sp;
                for (; mask != 0; mask &= mask - 1)
                {
                    int lane = System.Numerics.BitOperations.TrailingZeroCount(mask);
                    // Insertion into the pushed run, kept in decreasing near distance so the nearest is on top.
                    float t = Unsafe.Add(ref MemoryMarshal.GetReference(near), lane);
                    int j = sp++;
                    while (j > first && Unsafe.Add(ref stackNear, j - 1) < t)
                    {
                        Unsafe.Add(ref stackRef, j) = Unsafe.Add(ref stackRef, j - 1);
                        Unsafe.Add(ref stackNear, j) = Unsafe.Add(ref stackNear, j - 1);
                        j--;
                    }

                    int child = Unsafe.As<float, int>(ref Unsafe.Add(ref node, ChildOffset + lane));
                    Unsafe.Add(ref stackRef, j) = child;
                    Unsafe.Add(ref stackNear, j) = t;
                    Prefetch(ref nodes, child);
                }
            }

            // Pop the nearest pending child that starts within the query's current far end (the
            // stored near ends are at most the double ones, so no child the double test keeps is dropped).
            do
            {
                if (sp == 0)
                {
                    return;
                }

                sp--;
            }
            while (Unsafe.Add(ref stackNear, sp) > query.TMax);

            r = Unsafe.Add(ref stackRef, sp);
        }
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static double Reciprocal(double x) => x == 0 ? 1e300 : 1.0 / x;

    /// <summary>
    /// Asks for a pushed child's memory ahead of its visit: a node's four cache lines, or a
    /// triangles-only leaf's first hit-record lines. The siblings of the child visited next then
    /// load while it is tested (a hint only: it changes no result). The record array is not pinned
    /// (a pinned 74 MB array per build made the bench's repeated builds wait on full collections);
    /// should the collector move it mid-walk, a prefetch of the old address only fetches a useless
    /// line, as x86 prefetches never fault.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private unsafe void Prefetch(ref float nodes, int child)
    {
        if (!Sse.IsSupported)
        {
            return;
        }

        if (child >= 0)
        {
            float* p = (float*)Unsafe.AsPointer(ref Unsafe.Add(ref nodes, NodeFloats * child));
            Sse.Prefetch0(p);
            Sse.Prefetch0(p + 16);
            Sse.Prefetch0(p + 32);
            Sse.Prefetch0(p + 48);
        }
        else if ((~child & 4) != 0)
        {
            double* r = (double*)Unsafe.AsPointer(ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_records), RecordDoubles * (~child >> 3)));
            Sse.Prefetch0(r);
            Sse.Prefetch0(r + 8);
            Sse.Prefetch0(r + 16);
        }
    }

    /// <summary>The lanes of node <paramref name="node"/> that <paramref name="form"/> enters for this ray before <paramref name="tMax"/> (tests).</summary>
    internal int EnteredLanes(int node, in Ray ray, double tMax, BoxTest form)
    {
        Span<float> near = stackalloc float[Lanes];
        ref float n = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_nodes), _first + (NodeFloats * node));
        return form == BoxTest.SingleVector ? TestSingleVector(ref n, new BoxRay(ray), tMax, near) : Test(ref n, new BoxRay(ray), tMax, near, form);
    }

    /// <summary>Lane <paramref name="lane"/>'s box of node <paramref name="node"/> (inverted, min +∞ and max −∞, when empty) and whether it is a node (not a leaf) (tests).</summary>
    internal (Vec3d Min, Vec3d Max, int Child) ChildBox(int node, int lane)
    {
        ReadOnlySpan<float> b = _nodes.AsSpan(_first + (NodeFloats * node), NodeFloats);
        return (
            new Vec3d(b[lane], b[(2 * Lanes) + lane], b[(4 * Lanes) + lane]),
            new Vec3d(b[Lanes + lane], b[(3 * Lanes) + lane], b[(5 * Lanes) + lane]),
            MemoryMarshal.Cast<float, int>(b[ChildOffset..])[lane]);
    }

    /// <summary>
    /// The single-precision slab tests of the eight boxes of <paramref name="node"/> (see
    /// <see cref="BoxRay"/>); returns the mask of lanes entered and writes their entry distances
    /// (clamped at 0; at most the double ones) to <paramref name="near"/>. Native min/max: no
    /// operand is NaN for a ray of the single form.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static int TestSingleVector(ref float node, in BoxRay r, double tMax, Span<float> near)
    {
        Vector256<float> tnx = (Vector256.LoadUnsafe(ref node, (nuint)(Lanes * r.Nx)) - Vector256.Create(r.Onx)) * Vector256.Create(r.Inx);
        Vector256<float> tfx = (Vector256.LoadUnsafe(ref node, (nuint)(Lanes * (1 - r.Nx))) - Vector256.Create(r.Ofx)) * Vector256.Create(r.Ifx);
        Vector256<float> tny = (Vector256.LoadUnsafe(ref node, (nuint)(Lanes * (2 + r.Ny))) - Vector256.Create(r.Ony)) * Vector256.Create(r.Iny);
        Vector256<float> tfy = (Vector256.LoadUnsafe(ref node, (nuint)(Lanes * (3 - r.Ny))) - Vector256.Create(r.Ofy)) * Vector256.Create(r.Ify);
        Vector256<float> tnz = (Vector256.LoadUnsafe(ref node, (nuint)(Lanes * (4 + r.Nz))) - Vector256.Create(r.Onz)) * Vector256.Create(r.Inz);
        Vector256<float> tfz = (Vector256.LoadUnsafe(ref node, (nuint)(Lanes * (5 - r.Nz))) - Vector256.Create(r.Ofz)) * Vector256.Create(r.Ifz);
        Vector256<float> t0 = Vector256.MaxNative(Vector256.MaxNative(tnx, tny), Vector256.MaxNative(tnz, Vector256<float>.Zero));
        Vector256<float> t1 = Vector256.MinNative(Vector256.MinNative(tfx, tfy), tfz);
        Vector256<float> hit = Vector256.LessThanOrEqual(t0, t1 + Vector256.Create(FarSlack)) & Vector256.LessThanOrEqual(t0, Vector256.Create(BoxRay.Limit(tMax)));
        t0.StoreUnsafe(ref MemoryMarshal.GetReference(near));
        return (int)hit.ExtractMostSignificantBits();
    }

    /// <summary>The other forms: the single test one lane at a time (the same operations in the same order), and the double test.</summary>
    private static int Test(ref float node, in BoxRay r, double tMax, Span<float> near, BoxTest form)
    {
        ReadOnlySpan<float> b = MemoryMarshal.CreateReadOnlySpan(ref node, Planes);
        int mask = 0;
        if (form == BoxTest.SingleScalar)
        {
            float limit = BoxRay.Limit(tMax);
            for (int lane = 0; lane < Lanes; lane++)
            {
                float tnx = (b[(Lanes * r.Nx) + lane] - r.Onx) * r.Inx, tfx = (b[(Lanes * (1 - r.Nx)) + lane] - r.Ofx) * r.Ifx;
                float tny = (b[(Lanes * (2 + r.Ny)) + lane] - r.Ony) * r.Iny, tfy = (b[(Lanes * (3 - r.Ny)) + lane] - r.Ofy) * r.Ify;
                float tnz = (b[(Lanes * (4 + r.Nz)) + lane] - r.Onz) * r.Inz, tfz = (b[(Lanes * (5 - r.Nz)) + lane] - r.Ofz) * r.Ifz;
                float t0 = MaxOf(MaxOf(tnx, tny), MaxOf(tnz, 0));
                float t1 = MinOf(MinOf(tfx, tfy), tfz);
                near[lane] = t0;
                mask |= t0 <= t1 + FarSlack && t0 <= limit ? 1 << lane : 0;
            }

            return mask;
        }

        if (form == BoxTest.DoubleVector)
        {
            Span<double> t0 = stackalloc double[Lanes / 2];
            for (int half = 0; half < 2; half++)
            {
                mask |= TestDoubleVector(ref node, half * Lanes / 2, r, tMax, t0) << (half * Lanes / 2);
                for (int i = 0; i < Lanes / 2; i++)
                {
                    near[(half * Lanes / 2) + i] = BinnedSah.Down(t0[i]);
                }
            }

            return mask;
        }

        Vec3d o = r.Origin, inv = r.Inv;
        for (int lane = 0; lane < Lanes; lane++)
        {
            double tnx = (b[(Lanes * r.Nx) + lane] - o.X) * inv.X, tfx = (b[(Lanes * (1 - r.Nx)) + lane] - o.X) * inv.X;
            double tny = (b[(Lanes * (2 + r.Ny)) + lane] - o.Y) * inv.Y, tfy = (b[(Lanes * (3 - r.Ny)) + lane] - o.Y) * inv.Y;
            double tnz = (b[(Lanes * (4 + r.Nz)) + lane] - o.Z) * inv.Z, tfz = (b[(Lanes * (5 - r.Nz)) + lane] - o.Z) * inv.Z;
            double t0 = Math.Max(Math.Max(tnx, tny), Math.Max(tnz, 0));
            double t1 = Math.Min(Math.Min(tfx, tfy), tfz);
            double slack = (Math.Abs(t1) + 1) * 1e-12;
            near[lane] = BinnedSah.Down(t0);
            mask |= t0 <= t1 + slack && t0 <= tMax ? 1 << lane : 0;
        }

        return mask;
    }

    // What MaxNative/MinNative do on x86 for operands that are not NaN (the second when equal).
    private static float MaxOf(float a, float b) => a > b ? a : b;

    private static float MinOf(float a, float b) => a < b ? a : b;

    /// <summary>
    /// The double slab tests of lanes [<paramref name="lane"/>, + 4) of <paramref name="node"/>,
    /// the planes widened to double (exact); entry distances to <paramref name="near"/>. Bounds
    /// are inflated by a relative 1e-12 against rounding on flat (zero-thickness) boxes.
    /// </summary>
    private static int TestDoubleVector(ref float node, int lane, in BoxRay r, double tMax, Span<double> near)
    {
        Vector256<double> ix = Vector256.Create(r.Inv.X), iy = Vector256.Create(r.Inv.Y), iz = Vector256.Create(r.Inv.Z);
        Vector256<double> ox = Vector256.Create(r.Origin.X), oy = Vector256.Create(r.Origin.Y), oz = Vector256.Create(r.Origin.Z);
        ref float at = ref Unsafe.Add(ref node, lane);
        Vector256<double> tnx = (Plane(ref at, r.Nx) - ox) * ix;
        Vector256<double> tfx = (Plane(ref at, 1 - r.Nx) - ox) * ix;
        Vector256<double> tny = (Plane(ref at, 2 + r.Ny) - oy) * iy;
        Vector256<double> tfy = (Plane(ref at, 3 - r.Ny) - oy) * iy;
        Vector256<double> tnz = (Plane(ref at, 4 + r.Nz) - oz) * iz;
        Vector256<double> tfz = (Plane(ref at, 5 - r.Nz) - oz) * iz;
        Vector256<double> t0 = Vector256.Max(Vector256.Max(tnx, tny), Vector256.Max(tnz, Vector256<double>.Zero));
        Vector256<double> t1 = Vector256.Min(Vector256.Min(tfx, tfy), tfz);
        Vector256<double> slack = (Vector256.Abs(t1) + Vector256<double>.One) * Vector256.Create(1e-12);
        Vector256<double> hit = Vector256.LessThanOrEqual(t0, t1 + slack) & Vector256.LessThanOrEqual(t0, Vector256.Create(tMax));
        t0.StoreUnsafe(ref MemoryMarshal.GetReference(near));
        return (int)hit.ExtractMostSignificantBits();
    }

    /// <summary>Four floats of one plane from <paramref name="at"/>, widened to double (exact).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> Plane(ref float at, int plane)
    {
        Vector128<float> p = Vector128.LoadUnsafe(ref at, (nuint)(Lanes * plane));
        return Avx.IsSupported ? Avx.ConvertToVector256Double(p) : Vector256.Create(Vector128.WidenLower(p), Vector128.WidenUpper(p));
    }
}
