using System.Runtime.CompilerServices;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Materials;

/// <summary>How diffuse bounces choose directions (the axis the user varies against the generator).</summary>
public enum HemisphereStrategy
{
    /// <summary>Uniform over the hemisphere, pdf 1/(2π).</summary>
    Uniform,

    /// <summary>Cosine-weighted through the concentric map (Shirley &amp; Chiu 1997), pdf cos θ/π.</summary>
    Cosine,
}

/// <summary>The scattering models a surface can have.</summary>
public enum MaterialKind
{
    /// <summary>Lambertian.</summary>
    Diffuse,

    /// <summary>GGX microfacet conductor (a perfect mirror at roughness 0).</summary>
    Conductor,

    /// <summary>Smooth dielectric.</summary>
    Dielectric,
}

/// <summary>A material in the form the integrator evaluates: flat fields, no virtual calls.</summary>
public sealed class Material
{
    /// <summary>Roughness below which a conductor is treated as a perfect mirror (α = roughness² below 1e-6).</summary>
    public const double MirrorRoughness = 1e-3;

    private Material(string name, MaterialKind kind)
    {
        Name = name;
        Kind = kind;
    }

    /// <summary>Scene name.</summary>
    public string Name { get; }

    /// <summary>Scattering model.</summary>
    public MaterialKind Kind { get; }

    /// <summary>Emitted radiance.</summary>
    public Rgb Emission { get; private init; }

    /// <summary>Emit on both sides.</summary>
    public bool TwoSided { get; private init; }

    /// <summary>Diffuse albedo (or checker colour A).</summary>
    public Rgb AlbedoA { get; private init; }

    /// <summary>Checker colour B.</summary>
    public Rgb AlbedoB { get; private init; }

    /// <summary>Checker cell size; 0 for a constant albedo.</summary>
    public double CheckerScale { get; private init; }

    /// <summary>GGX α = roughness² (the common perceptual mapping; common practice).</summary>
    public double Alpha { get; private init; }

    /// <summary>Conductor reflectance at normal incidence, for Schlick's Fresnel.</summary>
    public Rgb F0 { get; private init; }

    /// <summary>Dielectric index of refraction (inside over outside).</summary>
    public double Ior { get; private init; }

    /// <summary>True when every scattered direction is a delta (mirror, smooth dielectric): no light sampling there.</summary>
    public bool IsDelta
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => Kind == MaterialKind.Dielectric || (Kind == MaterialKind.Conductor && Alpha == 0);
    }

    /// <summary>True when the surface emits.</summary>
    public bool IsEmissive
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => !Emission.IsBlack;
    }

    /// <summary>Builds the runtime material from its scene description.</summary>
    public static Material From(MaterialDescription d)
    {
        ArgumentNullException.ThrowIfNull(d);
        return d switch
        {
            DiffuseMaterial m => m.Albedo switch
            {
                CheckerTexture c => new Material(m.Name, MaterialKind.Diffuse) { Emission = m.Emission, TwoSided = m.TwoSided, AlbedoA = c.A, AlbedoB = c.B, CheckerScale = c.Scale },
                ConstantTexture c => new Material(m.Name, MaterialKind.Diffuse) { Emission = m.Emission, TwoSided = m.TwoSided, AlbedoA = c.Value, AlbedoB = c.Value },
                _ => throw new ArgumentException($"unknown texture {m.Albedo.GetType().Name}", nameof(d)),
            },
            ConductorMaterial m => new Material(m.Name, MaterialKind.Conductor)
            {
                Emission = m.Emission, TwoSided = m.TwoSided, F0 = m.F0, Alpha = m.Roughness < MirrorRoughness ? 0 : m.Roughness * m.Roughness,
            },
            DielectricMaterial m => new Material(m.Name, MaterialKind.Dielectric) { Emission = m.Emission, TwoSided = m.TwoSided, Ior = m.Ior },
            _ => throw new ArgumentException($"unknown material {d.GetType().Name}", nameof(d)),
        };
    }

    /// <summary>A material built directly, for tests and validation scenes made in code.</summary>
    public static Material Diffuse(string name, Rgb albedo, Rgb emission = default, bool twoSided = false) =>
        new(name, MaterialKind.Diffuse) { AlbedoA = albedo, AlbedoB = albedo, Emission = emission, TwoSided = twoSided };

    /// <summary>A GGX conductor built directly.</summary>
    public static Material Conductor(string name, double roughness, Rgb f0) =>
        new(name, MaterialKind.Conductor) { F0 = f0, Alpha = roughness < MirrorRoughness ? 0 : roughness * roughness };

    /// <summary>The diffuse albedo at a point (3-D checker: parity of the cell index sum).</summary>
    public Rgb Albedo(Vec3d p)
    {
        if (CheckerScale <= 0)
        {
            return AlbedoA;
        }

        long cell = (long)Math.Floor(p.X / CheckerScale) + (long)Math.Floor(p.Y / CheckerScale) + (long)Math.Floor(p.Z / CheckerScale);
        return (cell & 1) == 0 ? AlbedoA : AlbedoB;
    }

    /// <summary>Radiance emitted from a surface with geometric normal <paramref name="n"/> towards <paramref name="w"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public Rgb Emitted(Vec3d n, Vec3d w) => IsEmissive && (TwoSided || Vec3d.Dot(n, w) > 0) ? Emission : Rgb.Black;

    /// <summary>
    /// <see cref="Emitted"/> of <paramref name="n"/>.Normalized() for a normal of any length: the
    /// same result, without the normalization's root and division where the sign of n · w is clear.
    /// </summary>
    /// <remarks>
    /// Scaling n by 1/|n| (each component rounded, relative error ≤ u = 2^−53) and either dot
    /// product's own rounding (≤ γ₃·Σ|nᵢwᵢ|, γ₃ ≈ 3u; Higham 2002, "Accuracy and Stability of
    /// Numerical Algorithms", §3.1) move the computed dot by under 5u·Σ|nᵢwᵢ| from the exact one,
    /// whose sign decides. So where |n · w| exceeds 1e-12·Σ|nᵢwᵢ|, and 1e-200 (no subnormal product
    /// matters), for an n of ordinary size (1e-50 ≤ Σ|nᵢ| ≤ 1e50: |n|² neither overflows nor
    /// underflows), both forms have the same sign; anywhere else the normalized form is computed.
    /// </remarks>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public Rgb EmittedUnnormalized(Vec3d n, Vec3d w)
    {
        if (!IsEmissive || TwoSided)
        {
            return IsEmissive ? Emission : Rgb.Black;
        }

        double size = Math.Abs(n.X) + Math.Abs(n.Y) + Math.Abs(n.Z);
        if (size >= 1e-50 && size <= 1e50)
        {
            double dot = Vec3d.Dot(n, w);
            double margin = Math.Max(1e-12 * (Math.Abs(n.X * w.X) + Math.Abs(n.Y * w.Y) + Math.Abs(n.Z * w.Z)), 1e-200);
            if (dot > margin)
            {
                return Emission;
            }

            if (dot < -margin)
            {
                return Rgb.Black;
            }
        }

        return Emitted(n.Normalized(), w);
    }
}
