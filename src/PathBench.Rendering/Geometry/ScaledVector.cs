using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// Length and direction of vectors of any finite size. Squaring the components of a vector such as
/// [0, 1e-200, 0] underflows to 0 (and of [1e200, 0, 0] overflows), so the plain length is 0 (or
/// ∞) and the plain unit vector NaN; dividing by the largest component first keeps every square in
/// [0, 1] and loses nothing (common practice).
/// </summary>
public static class ScaledVector
{
    /// <summary>The unit vector along <paramref name="v"/> (non-zero, finite).</summary>
    /// <remarks>Vectors whose squared length is far from underflow and overflow take the plain path, so their bits are what they always were.</remarks>
    public static Vec3d Unit(Vec3d v) => Tame(v).Normalized();

    /// <summary>
    /// <paramref name="v"/> itself when its squared length is far from underflow and overflow, else
    /// <paramref name="v"/> divided by its largest component: the same direction, with a length in [1, √3].
    /// </summary>
    public static Vec3d Tame(Vec3d v) => IsTame(v.LengthSquared) ? v : v / LargestComponent(v);

    /// <summary>The length of <paramref name="v"/>, without underflow or overflow in the squares.</summary>
    public static double Length(Vec3d v)
    {
        double squared = v.LengthSquared;
        if (IsTame(squared))
        {
            return Math.Sqrt(squared);
        }

        double m = LargestComponent(v);
        return m == 0 ? 0 : (v / m).Length * m;
    }

    private static bool IsTame(double squaredLength) => squaredLength is > 1e-280 and < 1e280;

    private static double LargestComponent(Vec3d v) => Math.Max(Math.Abs(v.X), Math.Max(Math.Abs(v.Y), Math.Abs(v.Z)));
}
