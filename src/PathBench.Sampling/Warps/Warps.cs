using System.Runtime.CompilerServices;

namespace PathBench.Sampling.Warps;


/// <summary>
/// Maps from the unit square to the domains a renderer samples, each with its density.
/// Directions are in the local frame whose +Z is the surface normal (or the cone axis).
/// </summary>
public static class Warp
{
    private const double InvPi = 1.0 / Math.PI;
    private const double InvTwoPi = 0.5 / Math.PI;

    /// <summary>
    /// Uniform over the unit hemisphere z ≥ 0: z = 1 − u, φ = 2πv. (1 − u rather than u so that
    /// u ∈ [0, 1) never gives the horizon, which a point set's first point, 0, would hit exactly.)
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d UniformHemisphere(double u, double v)
    {
        double z = 1.0 - u;
        double r = Math.Sqrt(PortableMath.NonNegative(1.0 - z * z));
        (double s, double c) = PortableMath.SinCos(2 * Math.PI * v);
        return new Vec3d(r * c, r * s, z);
    }

    /// <summary>The density of <see cref="UniformHemisphere"/> per unit solid angle.</summary>
    public static double UniformHemispherePdf(Vec3d w) => w.Z >= 0 ? InvTwoPi : 0.0;

    /// <summary>Cosine-weighted hemisphere: the concentric disk lifted to the hemisphere (Malley's method).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d CosineHemisphere(double u, double v)
    {
        (double x, double y) = ConcentricDisk(u, v);
        return new Vec3d(x, y, Math.Sqrt(PortableMath.NonNegative(1.0 - x * x - y * y)));
    }

    /// <summary>The density of <see cref="CosineHemisphere"/>: cos θ / π.</summary>
    public static double CosineHemispherePdf(Vec3d w) => w.Z >= 0 ? w.Z * InvPi : 0.0;

    /// <summary>Uniform over the unit sphere: z = 1 − 2u, φ = 2πv.</summary>
    public static Vec3d UniformSphere(double u, double v)
    {
        double z = 1.0 - 2.0 * u;
        double r = Math.Sqrt(PortableMath.NonNegative(1.0 - z * z));
        (double s, double c) = PortableMath.SinCos(2 * Math.PI * v);
        return new Vec3d(r * c, r * s, z);
    }

    /// <summary>The density of <see cref="UniformSphere"/>: 1 / 4π.</summary>
    public static double UniformSpherePdf(Vec3d w) => 0.25 * InvPi;

    /// <summary>
    /// The concentric map of the square onto the unit disk (Shirley &amp; Chiu 1997,
    /// "A low distortion map between disk and square", J. Graphics Tools 2(3)), which keeps
    /// strata compact and is area-preserving up to a constant.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (double X, double Y) ConcentricDisk(double u, double v)
    {
        double a = 2.0 * u - 1.0;
        double b = 2.0 * v - 1.0;
        if (a == 0.0 && b == 0.0)
        {
            return (0.0, 0.0);
        }

        // φ lies within π/4 of 0 in the first case and of π/2 in the second: PortableMath's
        // shortcuts for those ranges skip the general reduction and give SinCos's bits.
        if (Math.Abs(a) > Math.Abs(b))
        {
            (double s, double c) = PortableMath.SinCosQuarter(Math.PI / 4 * (b / a));
            return (a * c, a * s);
        }
        else
        {
            (double s, double c) = PortableMath.SinCosNearHalfPi(Math.PI / 2 - Math.PI / 4 * (a / b));
            return (b * c, b * s);
        }
    }

    /// <summary>The density of <see cref="ConcentricDisk"/> per unit area: 1 / π inside the disk.</summary>
    public static double ConcentricDiskPdf(double x, double y) => x * x + y * y <= 1.0 ? InvPi : 0.0;

    /// <summary>
    /// Uniform barycentric coordinates (b1, b2) over a triangle, b0 = 1 − b1 − b2, by the
    /// square-root method of Osada, Funkhouser, Chazelle &amp; Dobkin (2002), "Shape
    /// distributions", ACM TOG 21(4): √u scales along the median, v splits the edge.
    /// </summary>
    public static (double B1, double B2) UniformTriangle(double u, double v)
    {
        double s = Math.Sqrt(u);
        return (s * (1.0 - v), s * v);
    }

    /// <summary>The density of <see cref="UniformTriangle"/> over the barycentric triangle of area 1/2: 2 inside.</summary>
    public static double UniformTrianglePdf(double b1, double b2) => b1 >= 0 && b2 >= 0 && b1 + b2 <= 1.0 ? 2.0 : 0.0;

    /// <summary>Uniform over the spherical cap of directions within θ_max of +Z: cos θ = 1 − u(1 − cos θ_max).</summary>
    public static Vec3d UniformCone(double u, double v, double cosThetaMax)
    {
        double z = 1.0 - u * (1.0 - cosThetaMax);
        double r = Math.Sqrt(PortableMath.NonNegative(1.0 - z * z));
        (double s, double c) = PortableMath.SinCos(2 * Math.PI * v);
        return new Vec3d(r * c, r * s, z);
    }

    /// <summary>The density of <see cref="UniformCone"/>: 1 / (2π(1 − cos θ_max)) inside the cap.</summary>
    public static double UniformConePdf(Vec3d w, double cosThetaMax) =>
        w.Z >= cosThetaMax ? InvTwoPi / (1.0 - cosThetaMax) : 0.0;
}
