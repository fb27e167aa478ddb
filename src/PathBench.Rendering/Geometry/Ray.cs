using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>A ray origin + t·direction with a unit direction, valid for t in (0, <see cref="TMax"/>).</summary>
public readonly record struct Ray(Vec3d Origin, Vec3d Direction, double TMax)
{
    /// <summary>The point at parameter <paramref name="t"/>.</summary>
    public Vec3d At(double t) => Origin + Direction * t;
}

/// <summary>What a closest-hit query found.</summary>
public struct SurfaceHit
{
    /// <summary>Ray parameter of the hit.</summary>
    public double T;

    /// <summary>Hit point.</summary>
    public Vec3d Point;

    /// <summary>Unit geometric normal, oriented as the shape defines it (sphere outward, quad edge_u × edge_v, triangle winding).</summary>
    public Vec3d GeometricNormal;

    /// <summary>Unit shading normal (interpolated for meshes with normals; the geometric normal otherwise), on the same side as it.</summary>
    public Vec3d ShadingNormal;

    /// <summary>Index of the primitive hit.</summary>
    public int Primitive;
}

/// <summary>Offsets ray origins off surfaces so a new ray does not hit the surface it leaves.</summary>
public static class RayOffset
{
    /// <summary>
    /// The origin for a ray leaving <paramref name="p"/> towards the side of <paramref name="n"/>
    /// that <paramref name="direction"/> points to. The offset scales with the coordinates'
    /// magnitude because double rounding error does (common practice).
    /// </summary>
    public static Vec3d Offset(Vec3d p, Vec3d n, Vec3d direction) => Offset(p, n, Vec3d.Dot(n, direction), Scale(p));

    /// <summary>
    /// <see cref="Offset(Vec3d, Vec3d, Vec3d)"/> given n · direction (<paramref name="cosine"/>) and
    /// <see cref="Scale"/> of <paramref name="p"/>, for a caller that already has them: the same bits.
    /// </summary>
    public static Vec3d Offset(Vec3d p, Vec3d n, double cosine, double scale) => cosine >= 0 ? p + n * scale : p - n * scale;

    /// <summary>The offset distance used at <paramref name="p"/>: 1e-9 · (1 + max |coordinate|).</summary>
    public static double Scale(Vec3d p) => 1e-9 * (1 + Math.Max(Math.Abs(p.X), Math.Max(Math.Abs(p.Y), Math.Abs(p.Z))));

    /// <summary>
    /// The largest ray parameter a shadow ray from <paramref name="from"/> (already offset) may test
    /// against a light point <paramref name="distance"/> away, <paramref name="to"/>: short of the
    /// light's own surface by more than both points' offsets and their rounding, so the light does
    /// not shadow itself at any scale.
    /// </summary>
    public static double ShadowLimit(Vec3d from, Vec3d to, double distance) => ShadowLimit(Scale(from), to, distance);

    /// <summary><see cref="ShadowLimit(Vec3d, Vec3d, double)"/> given <see cref="Scale"/> of the ray's start (<paramref name="fromScale"/>): the same bits.</summary>
    public static double ShadowLimit(double fromScale, Vec3d to, double distance) =>
        distance - 4 * (fromScale + Scale(to)) - 1e-9 * distance;
}
