using System.Runtime.CompilerServices;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>The kinds of primitive the BVH holds.</summary>
public enum PrimitiveKind : byte
{
    /// <summary>A sphere: <see cref="Primitive.A"/> centre, <see cref="Primitive.Radius"/>.</summary>
    Sphere,

    /// <summary>A parallelogram: <see cref="Primitive.A"/> corner, <see cref="Primitive.B"/> edge u, <see cref="Primitive.C"/> edge v.</summary>
    Quad,

    /// <summary>A disk: <see cref="Primitive.A"/> centre, <see cref="Primitive.Normal"/>, <see cref="Primitive.Radius"/>.</summary>
    Disk,

    /// <summary>A triangle: vertices <see cref="Primitive.A"/>, <see cref="Primitive.B"/>, <see cref="Primitive.C"/>.</summary>
    Triangle,
}

/// <summary>
/// One primitive, in a flat struct so every kind lives in one array the BVH indexes directly
/// (no per-ray virtual dispatch or allocation).
/// </summary>
public struct Primitive
{
    /// <summary>Which kind.</summary>
    public PrimitiveKind Kind;

    /// <summary>Index into the scene's material table.</summary>
    public int Material;

    /// <summary>See <see cref="PrimitiveKind"/>.</summary>
    public Vec3d A, B, C;

    /// <summary>Unit normal of planar kinds (quad, disk, triangle); unused for spheres.</summary>
    public Vec3d Normal;

    /// <summary>Sphere or disk radius.</summary>
    public double Radius;

    /// <summary>Surface area.</summary>
    public double Area;

    /// <summary>Offset of this triangle's three shading normals in the scene's normal array, or −1.</summary>
    public int ShadingNormals;

    /// <summary>A sphere.</summary>
    public static Primitive Sphere(Vec3d center, double radius, int material) => new()
    {
        Kind = PrimitiveKind.Sphere, A = center, Radius = radius, Material = material, Area = 4 * Math.PI * radius * radius, ShadingNormals = -1,
    };

    /// <summary>A parallelogram with normal normalize(u × v).</summary>
    public static Primitive Quad(Vec3d corner, Vec3d u, Vec3d v, int material)
    {
        Vec3d cross = Vec3d.Cross(u, v);
        return new() { Kind = PrimitiveKind.Quad, A = corner, B = u, C = v, Normal = cross.Normalized(), Area = cross.Length, Material = material, ShadingNormals = -1 };
    }

    /// <summary>A disk.</summary>
    public static Primitive Disk(Vec3d center, Vec3d normal, double radius, int material) => new()
    {
        Kind = PrimitiveKind.Disk, A = center, Normal = normal.Normalized(), Radius = radius, Area = Math.PI * radius * radius, Material = material, ShadingNormals = -1,
    };

    /// <summary>A triangle with normal normalize((b − a) × (c − a)).</summary>
    public static Primitive Triangle(Vec3d a, Vec3d b, Vec3d c, int material, int shadingNormals)
    {
        Vec3d cross = Vec3d.Cross(b - a, c - a);
        return new() { Kind = PrimitiveKind.Triangle, A = a, B = b, C = c, Normal = cross.Normalized(), Area = 0.5 * cross.Length, Material = material, ShadingNormals = shadingNormals };
    }

    /// <summary>The axis-aligned bounds.</summary>
    public readonly (Vec3d Min, Vec3d Max) Bounds()
    {
        switch (Kind)
        {
            case PrimitiveKind.Sphere:
                var r = new Vec3d(Radius, Radius, Radius);
                return (A - r, A + r);
            case PrimitiveKind.Quad:
                Vec3d p1 = A + B, p2 = A + C, p3 = A + B + C;
                return (Vec3d.Min(Vec3d.Min(A, p1), Vec3d.Min(p2, p3)), Vec3d.Max(Vec3d.Max(A, p1), Vec3d.Max(p2, p3)));
            case PrimitiveKind.Disk:
                // Exact bounds of a disk: extent along axis k is r·sqrt(1 − n_k²).
                var e = new Vec3d(
                    Radius * Math.Sqrt(Math.Max(0, 1 - Normal.X * Normal.X)),
                    Radius * Math.Sqrt(Math.Max(0, 1 - Normal.Y * Normal.Y)),
                    Radius * Math.Sqrt(Math.Max(0, 1 - Normal.Z * Normal.Z)));
                return (A - e, A + e);
            default:
                return (Vec3d.Min(A, Vec3d.Min(B, C)), Vec3d.Max(A, Vec3d.Max(B, C)));
        }
    }

    /// <summary>The ray parameter of the nearest hit in (tMin, tMax), or +∞.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public readonly double Intersect(in Ray ray, double tMax)
    {
        switch (Kind)
        {
            case PrimitiveKind.Sphere:
                return IntersectSphere(ray, tMax);
            case PrimitiveKind.Triangle:
                return IntersectTriangle(ray, tMax);
            default:
                return IntersectPlanar(ray, tMax);
        }
    }

    private readonly double IntersectSphere(in Ray ray, double tMax)
    {
        // Haines, Günther & Akenine-Möller (2019), "Precision Improvements for Ray/Sphere
        // Intersection", Ray Tracing Gems ch. 7: the discriminant from the distance to the closest
        // approach, r² − |f − (f·d)d|², and the stable roots q = −b − sign(b)·√Δ, t0 = c/q, t1 = q
        // (d is unit). Beyond that chapter, c = |f|² − r² is taken exactly when it cancels: for a
        // ray starting near a huge sphere (a ground of radius 1e20 seen from 1 above it) |f|² and r²
        // agree in every bit a double holds, and a plain c is pure rounding noise.
        Vec3d oc = ray.Origin - A;
        double b = Vec3d.Dot(oc, ray.Direction);
        Vec3d perp = oc - ray.Direction * b;
        double r2 = Radius * Radius;
        double disc = r2 - perp.LengthSquared;
        if (disc < 0)
        {
            return double.PositiveInfinity;
        }

        double s = Math.Sqrt(disc);
        double f2 = oc.LengthSquared;
        double c = f2 - r2;
        if (Math.Abs(c) < CancellationBound * (f2 + r2))
        {
            // Plain c is off by up to about 2^-52 (|f|² + r²): more than 2^-42 of c here.
            c = OffsetSquaredLessRadiusSquared(ray.Origin, A, Radius);
        }

        // Stable roots: q = −b − sign(b)·s, t0 = c/q, t1 = q (direction is unit).
        double q = b > 0 ? -b - s : -b + s;
        double t0 = q, t1 = q != 0 ? c / q : 0;
        if (t0 > t1)
        {
            (t0, t1) = (t1, t0);
        }

        if (t0 > 0 && t0 < tMax)
        {
            return t0;
        }

        return t1 > 0 && t1 < tMax ? t1 : double.PositiveInfinity;
    }

    // 2^-10: where |c| is below this fraction of |f|² + r², the plain difference has lost ten or more bits.
    private const double CancellationBound = 1.0 / 1024;

    /// <summary>
    /// |o − a|² − r², correctly rounded but for the last bit or so, for the rays that start on or
    /// near a sphere. Each difference o − a is split into its rounded value and exact error (TwoSum,
    /// Knuth 1969), each square and product into its rounded value and exact error (TwoProduct by
    /// fused multiply-add, Dekker 1971, "A floating-point technique for extending the available
    /// precision", Numer. Math. 18), and the up to 20 exact terms are added without error into a
    /// nonoverlapping expansion (Shewchuk 1997, "Adaptive precision floating-point arithmetic and
    /// fast robust geometric predicates", Discrete Comput. Geom. 18, Grow-Expansion). Every step is
    /// an IEEE 754 basic operation (fma included), so the bits are the same on every machine.
    /// </summary>
    private static double OffsetSquaredLessRadiusSquared(Vec3d o, Vec3d a, double r)
    {
        Span<double> expansion = stackalloc double[24];
        int n = 0;
        AddSquaredDifference(expansion, ref n, o.X, a.X);
        AddSquaredDifference(expansion, ref n, o.Y, a.Y);
        AddSquaredDifference(expansion, ref n, o.Z, a.Z);
        double r2 = r * r;
        Grow(expansion, ref n, -r2);
        Grow(expansion, ref n, -Math.FusedMultiplyAdd(r, r, -r2));
        double sum = 0;
        for (int i = 0; i < n; i++)
        {
            sum += expansion[i]; // ascending, nonoverlapping: the rounding happens in the last additions only
        }

        return sum;
    }

    // (x − y)² exactly: x − y = hi + lo exactly, and (hi + lo)² = hi² + 2·hi·lo + lo², each product an exact pair.
    private static void AddSquaredDifference(Span<double> expansion, ref int n, double x, double y)
    {
        double hi = x - y;
        double lo = TwoSumError(x, -y, hi);
        AddProduct(expansion, ref n, hi, hi);
        AddProduct(expansion, ref n, 2 * hi, lo);
        AddProduct(expansion, ref n, lo, lo);
    }

    private static void AddProduct(Span<double> expansion, ref int n, double x, double y)
    {
        double p = x * y;
        Grow(expansion, ref n, p);
        Grow(expansion, ref n, Math.FusedMultiplyAdd(x, y, -p));
    }

    // Shewchuk's Grow-Expansion with zero elimination: adds b to the expansion without error.
    private static void Grow(Span<double> expansion, ref int n, double b)
    {
        if (b == 0)
        {
            return;
        }

        double q = b;
        int m = 0;
        for (int i = 0; i < n; i++)
        {
            double sum = q + expansion[i];
            double error = TwoSumError(q, expansion[i], sum);
            q = sum;
            if (error != 0)
            {
                expansion[m++] = error;
            }
        }

        expansion[m++] = q;
        n = m;
    }

    // Knuth's TwoSum: the exact rounding error of sum = fl(x + y), for any magnitudes.
    private static double TwoSumError(double x, double y, double sum)
    {
        double yVirtual = sum - x;
        return (x - (sum - yVirtual)) + (y - yVirtual);
    }

    private readonly double IntersectPlanar(in Ray ray, double tMax)
    {
        double denom = Vec3d.Dot(Normal, ray.Direction);
        if (denom == 0)
        {
            return double.PositiveInfinity;
        }

        double t = Vec3d.Dot(Normal, A - ray.Origin) / denom;
        if (!(t > 0 && t < tMax))
        {
            return double.PositiveInfinity;
        }

        Vec3d p = ray.At(t) - A;
        if (Kind == PrimitiveKind.Disk)
        {
            return p.LengthSquared <= Radius * Radius ? t : double.PositiveInfinity;
        }

        // Coordinates in the (u, v) frame: w = n_raw / |n_raw|², α = w·(p × v), β = w·(u × p).
        Vec3d n = Vec3d.Cross(B, C);
        double inv = 1.0 / n.LengthSquared;
        double alpha = Vec3d.Dot(n, Vec3d.Cross(p, C)) * inv;
        double beta = Vec3d.Dot(n, Vec3d.Cross(B, p)) * inv;
        return alpha >= 0 && alpha <= 1 && beta >= 0 && beta <= 1 ? t : double.PositiveInfinity;
    }

    private readonly double IntersectTriangle(in Ray ray, double tMax) => IntersectTriangle(new RayShear(ray.Direction), ray.Origin, tMax);

    /// <summary>
    /// The triangle's hit parameter in (0, tMax), or +∞, by the watertight test of Woop, Benthin
    /// &amp; Wald (2013), "Watertight Ray/Triangle Intersection", JCGT 2(1): the vertices are moved
    /// into a frame where the ray is the +z axis, and the three edge functions are 2-D cross
    /// products of the same two vertices for both triangles that share an edge, so a ray through
    /// a shared edge or vertex is never missed by both. Only for triangles (kind not checked).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public readonly double IntersectTriangle(in RayShear shear, Vec3d origin, double tMax)
    {
        Vec3d a = A - origin, b = B - origin, c = C - origin;
        double az = shear.Pick(a), bz = shear.Pick(b), cz = shear.Pick(c);
        double ax = shear.X(a) - shear.Sx * az, ay = shear.Y(a) - shear.Sy * az;
        double bx = shear.X(b) - shear.Sx * bz, by = shear.Y(b) - shear.Sy * bz;
        double cx = shear.X(c) - shear.Sx * cz, cy = shear.Y(c) - shear.Sy * cz;
        double u = cx * by - cy * bx;
        double v = ax * cy - ay * cx;
        double w = bx * ay - by * ax;
        if ((u < 0 || v < 0 || w < 0) && (u > 0 || v > 0 || w > 0))
        {
            return double.PositiveInfinity;
        }

        double det = u + v + w;
        if (det == 0)
        {
            return double.PositiveInfinity;
        }

        double t = (u * az + v * bz + w * cz) * shear.Sz / det;
        return t > 0 && t < tMax ? t : double.PositiveInfinity;
    }

    /// <summary>The geometric normal at a point on the surface.</summary>
    public readonly Vec3d NormalAt(Vec3d p) => Kind == PrimitiveKind.Sphere ? (p - A).Normalized() : Normal;

    /// <summary>Barycentric (b1, b2) of a point on a triangle, for interpolating shading normals.</summary>
    public readonly (double B1, double B2) Barycentric(Vec3d p)
    {
        Vec3d e1 = B - A, e2 = C - A, d = p - A;
        double d11 = Vec3d.Dot(e1, e1), d12 = Vec3d.Dot(e1, e2), d22 = Vec3d.Dot(e2, e2);
        double dp1 = Vec3d.Dot(d, e1), dp2 = Vec3d.Dot(d, e2);
        double inv = 1.0 / (d11 * d22 - d12 * d12);
        return ((d22 * dp1 - d12 * dp2) * inv, (d11 * dp2 - d12 * dp1) * inv);
    }
}

/// <summary>
/// The per-ray part of the watertight triangle test (Woop, Benthin &amp; Wald 2013, §3): the axis
/// kz of the direction's largest component becomes z, kx and ky the others (swapped when
/// d[kz] &lt; 0 to keep the winding), and the shear that maps the direction onto +z.
/// </summary>
public readonly struct RayShear
{
    private readonly int _kx, _ky, _kz;

    /// <summary>Shear coefficients: x' = x − Sx·z, y' = y − Sy·z, and 1/d[kz].</summary>
    public readonly double Sx, Sy, Sz;

    /// <summary>
    /// Sets the frame up for <paramref name="d"/> (any non-zero direction). Without branches: the
    /// axes are picked by comparisons turned into integers and the components read by index, so
    /// incoherent rays pay no mispredicted jumps here (the same choices and arithmetic as
    /// <see cref="Reference"/>, which tests hold it to).
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public RayShear(Vec3d d)
    {
        double ax = Math.Abs(d.X), ay = Math.Abs(d.Y), az = Math.Abs(d.Z);
        // kz = ax > ay ? (ax > az ? 0 : 2) : (ay > az ? 1 : 2): the larger of x and y (the same
        // value the nested form compares; both are ≥ +0) against z.
        int xBeatsY = ax > ay ? 1 : 0;
        int beatsZ = Math.Max(ax, ay) > az ? 1 : 0;
        _kz = 2 - (beatsZ * (1 + xBeatsY));
        _kx = _kz == 2 ? 0 : _kz + 1;
        _ky = _kx == 2 ? 0 : _kx + 1;
        ref double component = ref Unsafe.As<Vec3d, double>(ref d); // x, y, z in order (a record struct of three doubles)
        double dz = Unsafe.Add(ref component, _kz);
        int swap = (_kx ^ _ky) & -(dz < 0 ? 1 : 0);
        _kx ^= swap;
        _ky ^= swap;
        Sz = 1.0 / dz;
        Sx = Unsafe.Add(ref component, _kx) * Sz;
        Sy = Unsafe.Add(ref component, _ky) * Sz;
    }

    /// <summary>The frame as §3 of the paper writes it, with branches and indexed components (tests).</summary>
    internal static (int Kx, int Ky, int Kz, double Sx, double Sy, double Sz) Reference(Vec3d d)
    {
        double ax = Math.Abs(d.X), ay = Math.Abs(d.Y), az = Math.Abs(d.Z);
        int kz = ax > ay ? (ax > az ? 0 : 2) : (ay > az ? 1 : 2);
        int kx = kz == 2 ? 0 : kz + 1;
        int ky = kx == 2 ? 0 : kx + 1;
        if (d[kz] < 0)
        {
            (kx, ky) = (ky, kx);
        }

        double sz = 1.0 / d[kz];
        return (kx, ky, kz, d[kx] * sz, d[ky] * sz, sz);
    }

    /// <summary>The axis that becomes x (0, 1, 2).</summary>
    internal int Kx => _kx;

    /// <summary>The axis that becomes y.</summary>
    internal int Ky => _ky;

    /// <summary>The axis along the ray (the direction's largest component), which becomes z.</summary>
    internal int Kz => _kz;

    /// <summary>Component kx of <paramref name="p"/>.</summary>
    public double X(Vec3d p) => Unsafe.Add(ref Unsafe.As<Vec3d, double>(ref p), _kx);

    /// <summary>Component ky of <paramref name="p"/>.</summary>
    public double Y(Vec3d p) => Unsafe.Add(ref Unsafe.As<Vec3d, double>(ref p), _ky);

    /// <summary>Component kz of <paramref name="p"/>.</summary>
    public double Pick(Vec3d p) => Unsafe.Add(ref Unsafe.As<Vec3d, double>(ref p), _kz);
}
