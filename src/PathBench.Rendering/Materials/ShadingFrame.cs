using System.Runtime.CompilerServices;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Materials;

/// <summary>
/// An orthonormal frame whose Z axis is a surface normal, built without branches on the
/// normal's direction except its sign (Duff, Burgess, Christensen, Hery, Kensler, Liani &amp;
/// Villemin 2017, "Building an Orthonormal Basis, Revisited", JCGT 6(1)).
/// </summary>
public readonly struct ShadingFrame
{
    /// <summary>Tangent, bitangent, normal.</summary>
    public readonly Vec3d T, B, N;

    /// <summary>The frame around unit normal <paramref name="n"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public ShadingFrame(Vec3d n)
    {
        double sign = n.Z >= 0 ? 1.0 : -1.0;
        double a = -1.0 / (sign + n.Z);
        double b = n.X * n.Y * a;
        T = new Vec3d(1.0 + sign * n.X * n.X * a, sign * b, -sign * n.X);
        B = new Vec3d(b, sign + n.Y * n.Y * a, -n.Y);
        N = n;
    }

    /// <summary>World direction to local (x along T, z along N).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public Vec3d ToLocal(Vec3d w) => new(Vec3d.Dot(w, T), Vec3d.Dot(w, B), Vec3d.Dot(w, N));

    /// <summary>Local direction to world.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public Vec3d ToWorld(Vec3d w) => T * w.X + B * w.Y + N * w.Z;
}
