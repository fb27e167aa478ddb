using System.Runtime.CompilerServices;

namespace PathBench.Sampling.Warps;

/// <summary>A point or direction in three dimensions, in double precision, with the vector algebra a renderer needs.</summary>
public readonly record struct Vec3d(double X, double Y, double Z)
{
    /// <summary>The zero vector.</summary>
    public static Vec3d Zero => default;

    /// <summary>Component <paramref name="axis"/> (0, 1, 2).</summary>
    public double this[int axis] => axis == 0 ? X : axis == 1 ? Y : Z;

    /// <summary>Sum.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d operator +(Vec3d a, Vec3d b) => new(a.X + b.X, a.Y + b.Y, a.Z + b.Z);

    /// <summary>Difference.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d operator -(Vec3d a, Vec3d b) => new(a.X - b.X, a.Y - b.Y, a.Z - b.Z);

    /// <summary>Negation.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d operator -(Vec3d a) => new(-a.X, -a.Y, -a.Z);

    /// <summary>Scaling.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d operator *(Vec3d a, double s) => new(a.X * s, a.Y * s, a.Z * s);

    /// <summary>Scaling.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d operator *(double s, Vec3d a) => new(a.X * s, a.Y * s, a.Z * s);

    /// <summary>Division by a scalar.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d operator /(Vec3d a, double s) => a * (1.0 / s);

    /// <summary>Dot product.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static double Dot(Vec3d a, Vec3d b) => a.X * b.X + a.Y * b.Y + a.Z * b.Z;

    /// <summary>Cross product (right-handed).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vec3d Cross(Vec3d a, Vec3d b) => new(a.Y * b.Z - a.Z * b.Y, a.Z * b.X - a.X * b.Z, a.X * b.Y - a.Y * b.X);

    /// <summary>Component-wise minimum.</summary>
    public static Vec3d Min(Vec3d a, Vec3d b) => new(Math.Min(a.X, b.X), Math.Min(a.Y, b.Y), Math.Min(a.Z, b.Z));

    /// <summary>Component-wise maximum.</summary>
    public static Vec3d Max(Vec3d a, Vec3d b) => new(Math.Max(a.X, b.X), Math.Max(a.Y, b.Y), Math.Max(a.Z, b.Z));

    /// <summary>Squared length.</summary>
    public double LengthSquared => X * X + Y * Y + Z * Z;

    /// <summary>Length.</summary>
    public double Length => Math.Sqrt(LengthSquared);

    /// <summary>The unit vector in this direction.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public Vec3d Normalized() => this * (1.0 / Length);

    /// <summary>True when every component is finite.</summary>
    public bool IsFinite => double.IsFinite(X) && double.IsFinite(Y) && double.IsFinite(Z);
}
