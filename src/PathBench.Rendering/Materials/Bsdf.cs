using System.Runtime.CompilerServices;
using PathBench.Sampling;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Materials;

/// <summary>A sampled direction: its throughput weight f·|cos θ|/pdf, its pdf (solid angle; 0 for deltas) and whether it is a delta.</summary>
public readonly record struct BsdfSample(Vec3d Direction, Rgb Weight, double Pdf, bool IsDelta)
{
    /// <summary>No direction: the path ends.</summary>
    public static BsdfSample None => default;
}

/// <summary>
/// Scattering in the local shading frame (+Z the normal as the geometry orients it).
/// Diffuse and conductor reflect on whichever side the outgoing direction lies; the dielectric
/// uses the orientation to tell entering from leaving.
/// </summary>
public static class Bsdf
{
    /// <summary>f(wo, wi) and the pdf with which <see cref="Sample"/> would choose wi (both 0 for deltas).</summary>
    public static (Rgb F, double Pdf) Evaluate(Material m, Rgb albedo, Vec3d wo, Vec3d wi, HemisphereStrategy hemisphere)
    {
        ArgumentNullException.ThrowIfNull(m);
        if (wo.Z * wi.Z <= 0 || m.IsDelta)
        {
            return (Rgb.Black, 0);
        }

        double cosI = Math.Abs(wi.Z);
        if (m.Kind == MaterialKind.Diffuse)
        {
            double pdf = hemisphere == HemisphereStrategy.Cosine ? cosI / Math.PI : 0.5 / Math.PI;
            return (albedo * (1 / Math.PI), pdf);
        }

        return EvaluateConductor(m, wo, wi);
    }

    // GGX conductor, reflection only: kept out of the diffuse path's inlined code.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static (Rgb F, double Pdf) EvaluateConductor(Material m, Vec3d wo, Vec3d wi)
    {
        // Flip to the upper hemisphere (two-sided reflection).
        if (wo.Z < 0)
        {
            wo = -wo;
            wi = -wi;
        }

        Vec3d h = (wo + wi).Normalized();
        double a = m.Alpha;
        double d = Ggx.D(h, a);
        double lo = Ggx.Lambda(wo, a), li = Ggx.Lambda(wi, a);
        double g2 = 1 / (1 + lo + li);
        Rgb fresnel = Ggx.Schlick(m.F0, Vec3d.Dot(wo, h));
        Rgb f = fresnel * (d * g2 / (4 * wo.Z * wi.Z));
        // VNDF pdf (Heitz 2018, eq. 17 with the reflection Jacobian 1/(4 wo·h)): G1(wo)·D(h)/(4·wo.z).
        double pdfGgx = d / (1 + lo) / (4 * wo.Z);
        return (f, pdfGgx);
    }

    /// <summary>Samples wi given wo and three uniform numbers (u1, u2: direction; u3: lobe choice).</summary>
    public static BsdfSample Sample(Material m, Rgb albedo, Vec3d wo, double u1, double u2, double u3, HemisphereStrategy hemisphere)
    {
        ArgumentNullException.ThrowIfNull(m);
        if (wo.Z == 0)
        {
            return BsdfSample.None;
        }

        double side = wo.Z > 0 ? 1 : -1;
        switch (m.Kind)
        {
            case MaterialKind.Diffuse:
            {
                Vec3d wi = hemisphere == HemisphereStrategy.Cosine ? Warp.CosineHemisphere(u1, u2) : Warp.UniformHemisphere(u1, u2);
                if (wi.Z <= 0)
                {
                    return BsdfSample.None;
                }

                double pdf = hemisphere == HemisphereStrategy.Cosine ? wi.Z / Math.PI : 0.5 / Math.PI;
                // f·cos/pdf: albedo for cosine sampling, 2·albedo·cos for uniform. For cosine
                // sampling the factor is x / x with x = pdf, exactly 1 in IEEE 754 for any finite
                // positive x, so the weight is the albedo itself (the same bits, two divisions fewer).
                Rgb weight = hemisphere == HemisphereStrategy.Cosine && pdf > 0 && double.IsFinite(pdf)
                    ? albedo
                    : albedo * (wi.Z / Math.PI / pdf);
                return new BsdfSample(new Vec3d(wi.X, wi.Y, wi.Z * side), weight, pdf, false);
            }

            case MaterialKind.Conductor:
                return SampleConductor(m, wo, side, u1, u2);

            default:
                return SampleDielectric(m.Ior, wo, u3);
        }
    }

    // GGX conductor: kept out of the diffuse path's inlined code.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static BsdfSample SampleConductor(Material m, Vec3d wo, double side, double u1, double u2)
    {
        Vec3d o = new(wo.X, wo.Y, wo.Z * side);
        if (m.Alpha == 0)
        {
            Rgb mirror = Ggx.Schlick(m.F0, o.Z);
            return new BsdfSample(new Vec3d(-wo.X, -wo.Y, wo.Z), mirror, 0, true);
        }

        Vec3d h = Ggx.SampleVisibleNormal(o, m.Alpha, u1, u2);
        double oh = Vec3d.Dot(o, h);
        Vec3d wi = h * (2 * oh) - o;
        if (wi.Z <= 0)
        {
            return BsdfSample.None;
        }

        double lo = Ggx.Lambda(o, m.Alpha), li = Ggx.Lambda(wi, m.Alpha);
        // Weight f·cos/pdf = F · G2/G1(wo) for VNDF sampling (Heitz 2018, §2).
        Rgb weight = Ggx.Schlick(m.F0, oh) * ((1 + lo) / (1 + lo + li));
        double pdf = Ggx.D(h, m.Alpha) / (1 + lo) / (4 * o.Z);
        return new BsdfSample(new Vec3d(wi.X, wi.Y, wi.Z * side), weight, pdf, false);
    }

    private static BsdfSample SampleDielectric(double ior, Vec3d wo, double u)
    {
        bool entering = wo.Z > 0;
        double etaI = entering ? 1.0 : ior, etaT = entering ? ior : 1.0;
        double cosI = Math.Abs(wo.Z);
        double eta = etaI / etaT;
        double sin2T = eta * eta * PortableMath.NonNegative(1 - cosI * cosI);
        double fresnel;
        double cosT = 0;
        if (sin2T >= 1)
        {
            fresnel = 1; // total internal reflection
        }
        else
        {
            cosT = Math.Sqrt(1 - sin2T);
            fresnel = FresnelDielectric(cosI, cosT, etaI, etaT);
        }

        if (u < fresnel)
        {
            return new BsdfSample(new Vec3d(-wo.X, -wo.Y, wo.Z), Rgb.Grey(1), 0, true);
        }

        // Snell's law; radiance crossing the interface scales by (η_i/η_t)² (Veach 1997, §5.2).
        var wt = new Vec3d(-eta * wo.X, -eta * wo.Y, entering ? -cosT : cosT);
        return new BsdfSample(wt, Rgb.Grey(eta * eta), 0, true);
    }

    /// <summary>Unpolarised Fresnel reflectance of a dielectric interface (Born &amp; Wolf, "Principles of Optics", §1.5).</summary>
    public static double FresnelDielectric(double cosI, double cosT, double etaI, double etaT)
    {
        double rs = (etaI * cosI - etaT * cosT) / (etaI * cosI + etaT * cosT);
        double rp = (etaT * cosI - etaI * cosT) / (etaT * cosI + etaI * cosT);
        return 0.5 * (rs * rs + rp * rp);
    }
}

/// <summary>The GGX (Trowbridge–Reitz) microfacet distribution with Smith shadowing.</summary>
public static class Ggx
{
    /// <summary>Normal distribution D(h) = α² / (π ((α² − 1) cos²θ_h + 1)²) (Walter, Marschner, Li &amp; Torrance 2007, eq. 33).</summary>
    public static double D(Vec3d h, double alpha)
    {
        if (h.Z <= 0)
        {
            return 0;
        }

        double a2 = alpha * alpha;
        double t = h.Z * h.Z * (a2 - 1) + 1;
        return a2 / (Math.PI * t * t);
    }

    /// <summary>Smith Λ(w) = (−1 + √(1 + α² tan²θ)) / 2 (Heitz 2014, "Understanding the Masking-Shadowing Function", eq. 72).</summary>
    public static double Lambda(Vec3d w, double alpha)
    {
        double z2 = w.Z * w.Z;
        if (z2 <= 0)
        {
            return double.PositiveInfinity;
        }

        double tan2 = PortableMath.NonNegative(1 - z2) / z2;
        return 0.5 * (-1 + Math.Sqrt(1 + alpha * alpha * tan2));
    }

    /// <summary>Schlick's (1994) approximation F0 + (1 − F0)(1 − cos)^5.</summary>
    public static Rgb Schlick(Rgb f0, double cos)
    {
        double c = Math.Clamp(1 - cos, 0, 1);
        double c5 = c * c * c * c * c;
        return new Rgb(f0.R + (1 - f0.R) * c5, f0.G + (1 - f0.G) * c5, f0.B + (1 - f0.B) * c5);
    }

    /// <summary>
    /// A microfacet normal from the distribution of normals visible from <paramref name="wo"/>
    /// (Heitz 2018, "Sampling the GGX Distribution of Visible Normals", JCGT 7(4), listing 1).
    /// </summary>
    public static Vec3d SampleVisibleNormal(Vec3d wo, double alpha, double u1, double u2)
    {
        Vec3d vh = new Vec3d(alpha * wo.X, alpha * wo.Y, wo.Z).Normalized();
        double lensq = vh.X * vh.X + vh.Y * vh.Y;
        Vec3d t1 = lensq > 0 ? new Vec3d(-vh.Y, vh.X, 0) * (1 / Math.Sqrt(lensq)) : new Vec3d(1, 0, 0);
        Vec3d t2 = Vec3d.Cross(vh, t1);
        double r = Math.Sqrt(u1);
        double phi = 2 * Math.PI * u2;
        (double sinPhi, double cosPhi) = PortableMath.SinCos(phi);
        double p1 = r * cosPhi, p2 = r * sinPhi;
        double s = 0.5 * (1 + vh.Z);
        p2 = (1 - s) * Math.Sqrt(PortableMath.NonNegative(1 - p1 * p1)) + s * p2;
        Vec3d nh = t1 * p1 + t2 * p2 + vh * Math.Sqrt(PortableMath.NonNegative(1 - p1 * p1 - p2 * p2));
        return new Vec3d(alpha * nh.X, alpha * nh.Y, Math.Max(1e-12, nh.Z)).Normalized();
    }
}
