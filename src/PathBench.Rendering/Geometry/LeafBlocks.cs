using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// The triangles of each BVH leaf stored for one four-lane test: a 320-byte block per leaf,
/// 64-byte aligned (five cache lines, against two lines per 128-byte primitive record), holding
/// the vertices as nine planes of four doubles (A.x, A.y, A.z, B.x, … C.z; lane i is the leaf's
/// primitive i), the leaf's first primitive and a mask of its lanes that are not triangles
/// (spheres, quads, disks: tested one at a time from their records). Vertices stay in double so
/// each lane's arithmetic is exactly that of <see cref="Primitive.IntersectTriangle(in RayShear, Vec3d, double)"/>, operation
/// for operation (the JIT fuses no multiply-add), and the hits are bit for bit the scalar ones.
/// </summary>
internal sealed class LeafBlocks
{
    /// <summary>Primitives per leaf at most: one per lane.</summary>
    public const int Lanes = 4;

    private const int BlockDoubles = 40;            // 9 planes × 4 lanes, start, other-kinds mask, 2 padding
    private const int StartSlot = 36, OthersSlot = 37;
    private const int Align = 64;

    private readonly double[] _data;                // pinned; block k at _data[_first + BlockDoubles·k ..]
    private readonly int _first;

    /// <summary>Lays out one block per leaf (start, count) over <paramref name="primitives"/> in leaf order.</summary>
    public LeafBlocks(ReadOnlySpan<Primitive> primitives, IReadOnlyList<(int Start, int Count)> leaves)
    {
        Count = leaves.Count;
        // Pinned (never moved), so the alignment found here holds for the array's life.
        _data = GC.AllocateUninitializedArray<double>((BlockDoubles * Count) + (Align / sizeof(double)), pinned: true);
        long address = Marshal.UnsafeAddrOfPinnedArrayElement(_data, 0);
        _first = (int)((Align - (address % Align)) % Align) / sizeof(double);
        for (int leaf = 0; leaf < Count; leaf++)
        {
            (int start, int count) = leaves[leaf];
            Span<double> block = _data.AsSpan(_first + (BlockDoubles * leaf), BlockDoubles);
            // Lanes without a triangle hold NaN vertices: every comparison on them is false, so they never hit.
            block.Fill(double.NaN);
            int others = 0;
            for (int lane = 0; lane < count; lane++)
            {
                ref readonly Primitive p = ref primitives[start + lane];
                if (p.Kind != PrimitiveKind.Triangle)
                {
                    others |= 1 << lane;
                    continue;
                }

                Vec3d[] vertices = [p.A, p.B, p.C];
                for (int v = 0; v < 3; v++)
                {
                    for (int axis = 0; axis < 3; axis++)
                    {
                        block[(Lanes * ((3 * v) + axis)) + lane] = vertices[v][axis];
                    }
                }
            }

            MemoryMarshal.Cast<double, int>(block)[2 * StartSlot] = start;
            MemoryMarshal.Cast<double, int>(block)[2 * OthersSlot] = others;
        }
    }

    /// <summary>Number of blocks (leaves).</summary>
    public int Count { get; }

    /// <summary>Bytes of the blocks.</summary>
    public long Bytes => (long)Count * BlockDoubles * sizeof(double);

    /// <summary>The block of leaf <paramref name="leaf"/> (in range: no bounds check).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public ref double Block(int leaf) => ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_data), _first + (BlockDoubles * leaf));

    /// <summary>The leaf's first primitive.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int Start(ref double block) => Unsafe.As<double, int>(ref Unsafe.Add(ref block, StartSlot));

    /// <summary>Lanes holding a primitive that is not a triangle.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int Others(ref double block) => Unsafe.As<double, int>(ref Unsafe.Add(ref block, OthersSlot));

    /// <summary>
    /// The four lanes' hit parameters in (0, <paramref name="tMax"/>), +∞ where a lane misses:
    /// the watertight test (Woop, Benthin &amp; Wald 2013, "Watertight Ray/Triangle
    /// Intersection", JCGT 2(1)) with <see cref="Primitive.IntersectTriangle(in RayShear, Vec3d, double)"/>'s operations in
    /// its order, one lane per triangle.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static Vector256<double> Times(ref double block, in LeafRay r, double tMax)
    {
        Vector256<double> az = Plane(ref block, 0, r.Kz) - r.Oz;
        Vector256<double> bz = Plane(ref block, 1, r.Kz) - r.Oz;
        Vector256<double> cz = Plane(ref block, 2, r.Kz) - r.Oz;
        Vector256<double> ax = (Plane(ref block, 0, r.Kx) - r.Ox) - (r.Sx * az), ay = (Plane(ref block, 0, r.Ky) - r.Oy) - (r.Sy * az);
        Vector256<double> bx = (Plane(ref block, 1, r.Kx) - r.Ox) - (r.Sx * bz), by = (Plane(ref block, 1, r.Ky) - r.Oy) - (r.Sy * bz);
        Vector256<double> cx = (Plane(ref block, 2, r.Kx) - r.Ox) - (r.Sx * cz), cy = (Plane(ref block, 2, r.Ky) - r.Oy) - (r.Sy * cz);
        Vector256<double> u = (cx * by) - (cy * bx);
        Vector256<double> v = (ax * cy) - (ay * cx);
        Vector256<double> w = (bx * ay) - (by * ax);
        Vector256<double> zero = Vector256<double>.Zero;
        Vector256<double> negative = Vector256.LessThan(u, zero) | Vector256.LessThan(v, zero) | Vector256.LessThan(w, zero);
        Vector256<double> positive = Vector256.GreaterThan(u, zero) | Vector256.GreaterThan(v, zero) | Vector256.GreaterThan(w, zero);
        Vector256<double> det = (u + v) + w;
        Vector256<double> t = ((((u * az) + (v * bz)) + (w * cz)) * r.Sz) / det;
        Vector256<double> hit = Vector256.AndNot(Vector256.GreaterThan(t, zero) & Vector256.LessThan(t, Vector256.Create(tMax)), negative & positive)
            & ~Vector256.Equals(det, zero);
        return Vector256.ConditionalSelect(hit, t, Vector256.Create(double.PositiveInfinity));
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> Plane(ref double block, int vertex, int axis) => Vector256.LoadUnsafe(ref block, (nuint)(Lanes * ((3 * vertex) + axis)));
}

/// <summary>A ray set up once for <see cref="LeafBlocks.Times"/>: the shear frame of <see cref="RayShear"/>, its values in every lane.</summary>
internal readonly struct LeafRay
{
    public readonly int Kx, Ky, Kz;
    public readonly Vector256<double> Ox, Oy, Oz, Sx, Sy, Sz;

    public LeafRay(in RayShear shear, Vec3d origin)
    {
        Kx = shear.AxisX;
        Ky = shear.AxisY;
        Kz = shear.AxisZ;
        Ox = Vector256.Create(origin[Kx]);
        Oy = Vector256.Create(origin[Ky]);
        Oz = Vector256.Create(origin[Kz]);
        Sx = Vector256.Create(shear.Sx);
        Sy = Vector256.Create(shear.Sy);
        Sz = Vector256.Create(shear.Sz);
    }
}
