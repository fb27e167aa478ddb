using System.Runtime.CompilerServices;
using PathBench.Rendering.Geometry;
using PathBench.Rendering.Materials;
using PathBench.Sampling;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering;

/// <summary>A light sample as seen from a shading point.</summary>
/// <param name="Direction">Unit direction from the shading point to the light.</param>
/// <param name="Distance">Distance to the sampled point (∞ for the environment).</param>
/// <param name="Radiance">Emitted radiance towards the shading point (black when the back side faces it).</param>
/// <param name="Pdf">Density per unit solid angle at the shading point, including the light-selection probability.</param>
public readonly record struct LightSample(Vec3d Direction, double Distance, Rgb Radiance, double Pdf);

/// <summary>
/// Every emissive primitive is an area light, chosen with probability proportional to its
/// power (mean emitted radiance × area × sides); the constant environment, when present, is
/// chosen with probability 1/2 (all of it when there are no area lights) and sampled uniformly
/// over the sphere. Spheres are sampled by the solid angle of their visible cap from outside,
/// by area from inside.
/// </summary>
public sealed class LightSet
{
    private readonly int[] _primitives;      // primitive index per area light
    private readonly double[] _cdf;          // cumulative selection probability over area lights
    private readonly double[] _probability;  // selection probability per area light
    private readonly int[] _lightOfPrimitive; // area light per primitive, or −1
    private readonly Primitive[] _lightPrims;  // copy of each area light's primitive (not of every primitive: the BVH owns those)
    private readonly Material[] _materials;

    private LightSet(int[] primitives, double[] probability, int[] lightOfPrimitive, Primitive[] lightPrims, Material[] materials, Rgb environment, double environmentProbability)
    {
        _primitives = primitives;
        _probability = probability;
        _cdf = new double[probability.Length];
        double c = 0;
        for (int i = 0; i < probability.Length; i++)
        {
            c += probability[i];
            _cdf[i] = c;
        }

        _lightOfPrimitive = lightOfPrimitive;
        _lightPrims = lightPrims;
        _materials = materials;
        Environment = environment;
        EnvironmentProbability = environmentProbability;
    }

    /// <summary>
    /// Bytes the light set holds: its per-light tables and lights' own records, plus one int per
    /// primitive (which light it is). No copy of the other primitives: on a million-triangle
    /// scene with one light this is about 4 MB, not the 130 MB a copy of every record took.
    /// </summary>
    internal long Bytes =>
        ((long)_primitives.Length * sizeof(int)) + ((long)(_cdf.Length + _probability.Length) * sizeof(double))
        + ((long)_lightOfPrimitive.Length * sizeof(int)) + ((long)_lightPrims.Length * System.Runtime.CompilerServices.Unsafe.SizeOf<Primitive>());

    /// <summary>Number of area lights.</summary>
    public int AreaLightCount => _primitives.Length;

    /// <summary>True when there is nothing to sample.</summary>
    public bool IsEmpty => _primitives.Length == 0 && EnvironmentProbability == 0;

    /// <summary>Environment radiance.</summary>
    public Rgb Environment { get; }

    /// <summary>Probability of choosing the environment.</summary>
    public double EnvironmentProbability { get; }

    internal static LightSet Build(ReadOnlySpan<Primitive> prims, Material[] materials, Rgb environment)
    {
        var lights = new List<int>();
        var lightPrims = new List<Primitive>();
        var power = new List<double>();
        var lightOf = new int[prims.Length];
        for (int i = 0; i < prims.Length; i++)
        {
            lightOf[i] = -1;
            Material m = materials[prims[i].Material];
            if (m.IsEmissive)
            {
                lightOf[i] = lights.Count;
                lights.Add(i);
                lightPrims.Add(prims[i]);
                power.Add(m.Emission.Average * prims[i].Area * (m.TwoSided ? 2 : 1));
            }
        }

        bool hasEnvironment = !environment.IsBlack;
        double envP = hasEnvironment ? (lights.Count > 0 ? 0.5 : 1.0) : 0.0;
        double total = power.Sum();
        double[] probability = power.Select(p => total > 0 ? p / total * (1 - envP) : 0).ToArray();
        return new LightSet(lights.ToArray(), probability, lightOf, lightPrims.ToArray(), materials, environment, envP);
    }

    /// <summary>Samples a light from point <paramref name="p"/>: <paramref name="uSelect"/> chooses the light, (u1, u2) the point on it.</summary>
    public LightSample Sample(Vec3d p, double uSelect, double u1, double u2)
    {
        if (uSelect < EnvironmentProbability)
        {
            Vec3d w = Warp.UniformSphere(u1, u2);
            return new LightSample(w, double.PositiveInfinity, Environment, EnvironmentProbability / (4 * Math.PI));
        }

        if (_primitives.Length == 0)
        {
            return default;
        }

        // The area lights' cumulative probabilities run from the environment's share up to 1.
        // With one area light every choice lands on it (whatever the search would return, the
        // clamp below makes it 0), so the search is skipped.
        double u = uSelect - EnvironmentProbability;
        int k = _cdf.Length == 1 ? 0 : Array.BinarySearch(_cdf, u);
        k = k < 0 ? ~k : k + 1;
        k = Math.Min(k, _primitives.Length - 1);
        while (k > 0 && _probability[k] == 0)
        {
            k--;
        }

        return SampleLight(k, p, u1, u2);
    }

    /// <summary>
    /// True when there is one area light and no environment: every light choice picks it, and
    /// <see cref="SampleOnlyLight"/> gives <see cref="Sample"/>'s result without the choice.
    /// </summary>
    public bool HasOnlyOneLight => _primitives.Length == 1 && EnvironmentProbability == 0;

    /// <summary>
    /// <see cref="Sample"/> for a set with <see cref="HasOnlyOneLight"/> (any light choice): the
    /// same arithmetic on the same light, so the same bits, without the choice's tests; quads
    /// (the usual single light) without a call.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public LightSample SampleOnlyLight(Vec3d p, double u1, double u2)
    {
        ref readonly Primitive prim = ref _lightPrims[0];
        double select = _probability[0];
        return prim.Kind == PrimitiveKind.Quad && select > 0
            ? Toward(QuadPoint(prim, u1, u2), prim.Normal, prim.Area, _materials[prim.Material], p, select)
            : SampleLight(0, p, u1, u2);
    }

    // Area light k, chosen with its selection probability, sampled from p.
    private LightSample SampleLight(int k, Vec3d p, double u1, double u2)
    {
        double select = _probability[k];
        if (select <= 0)
        {
            return default;
        }

        ref readonly Primitive prim = ref _lightPrims[k];
        Material m = _materials[prim.Material];
        if (prim.Kind == PrimitiveKind.Sphere)
        {
            Vec3d toCenter = prim.A - p;
            double d2 = toCenter.LengthSquared;
            double r2 = prim.Radius * prim.Radius;
            if (SeesCapFromOutside(d2, r2))
            {
                return SampleCap(prim, m, p, toCenter, d2, r2, select, u1, u2);
            }
        }

        return SampleArea(prim, m, p, select, u1, u2);
    }

    /// <summary>A direction in the cap a sphere light subtends from outside it, and the near point it meets.</summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static LightSample SampleCap(in Primitive prim, Material m, Vec3d p, Vec3d toCenter, double d2, double r2, double select, double u1, double u2)
    {
        double d = Math.Sqrt(d2);
        double oneMinusCos = CapOneMinusCos(d2, r2);
        double cosT = 1 - u1 * oneMinusCos;
        double sinT2 = PortableMath.NonNegative(1 - cosT * cosT);
        var frame = new ShadingFrame(toCenter / d);
        (double s, double c) = PortableMath.SinCos(2 * Math.PI * u2);
        double sinT = Math.Sqrt(sinT2);
        Vec3d w = frame.ToWorld(new Vec3d(sinT * c, sinT * s, cosT));
        // Distance to the near side of the sphere along w.
        double dist = d * cosT - Math.Sqrt(PortableMath.NonNegative(r2 - d2 * sinT2));
        Vec3d y = p + w * dist;
        // The sphere's outward normal at y, unnormalized: only the sign of its cosine with −w counts.
        Rgb le = m.EmittedUnnormalized(y - prim.A, -w);
        return new LightSample(w, dist, le, select / (2 * Math.PI * oneMinusCos));
    }

    /// <summary>A point chosen uniformly by area on a light, as a direction and distance from <paramref name="p"/>.</summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static LightSample SampleArea(in Primitive prim, Material m, Vec3d p, double select, double u1, double u2)
    {
        // Quads (the usual area light) inline; the other shapes in their own method, which keeps
        // this one small enough for the JIT to inline its vector arithmetic.
        (Vec3d point, Vec3d n) = prim.Kind == PrimitiveKind.Quad ? (QuadPoint(prim, u1, u2), prim.Normal) : SamplePoint(prim, u1, u2);
        return Toward(point, n, prim.Area, m, p, select);
    }

    // The point (u1, u2) of a quad light, uniform by area.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vec3d QuadPoint(in Primitive prim, double u1, double u2) => prim.A + prim.B * u1 + prim.C * u2;

    /// <summary>The light sample of a point with normal <paramref name="n"/> on a light of the given area, seen from <paramref name="p"/>.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static LightSample Toward(Vec3d point, Vec3d n, double area, Material m, Vec3d p, double select)
    {
        Vec3d to = point - p;
        double dist2 = to.LengthSquared;
        double dist1 = Math.Sqrt(dist2);
        Vec3d dir = to / dist1;
        double cosLight = Math.Abs(Vec3d.Dot(n, dir));
        if (cosLight <= 0 || dist1 <= 0)
        {
            return default;
        }

        return new LightSample(dir, dist1, m.Emitted(n, -dir), select * dist2 / (cosLight * area));
    }

    /// <summary>
    /// The density, per unit solid angle at <paramref name="p"/>, with which <see cref="Sample"/>
    /// would have chosen the point <paramref name="y"/> on primitive <paramref name="primitive"/>; 0 when it is not a light.
    /// </summary>
    public double Pdf(int primitive, Vec3d p, Vec3d y, Vec3d lightNormal)
    {
        int k = _lightOfPrimitive[primitive];
        if (k < 0)
        {
            return 0;
        }

        ref readonly Primitive prim = ref _lightPrims[k];
        double select = _probability[k];
        if (prim.Kind == PrimitiveKind.Sphere)
        {
            double d2 = (prim.A - p).LengthSquared;
            double r2 = prim.Radius * prim.Radius;
            if (SeesCapFromOutside(d2, r2))
            {
                return select / (2 * Math.PI * CapOneMinusCos(d2, r2));
            }
        }

        Vec3d to = y - p;
        double dist2 = to.LengthSquared;
        double cosLight = Math.Abs(Vec3d.Dot(lightNormal, to)) / Math.Sqrt(dist2);
        return cosLight > 0 ? select * dist2 / (cosLight * prim.Area) : 0;
    }

    /// <summary>The density of choosing an environment direction.</summary>
    public double EnvironmentPdf => EnvironmentProbability / (4 * Math.PI);

    // A sphere is sampled by its visible cap only from clearly outside it; from inside (or on it), by area.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static bool SeesCapFromOutside(double d2, double r2) => d2 > r2 * (1 + 1e-9);

    // 1 − cos θ_max of the cap a sphere of squared radius r2 subtends at squared distance d2,
    // as sin²/(1 + cos) so small caps lose no precision to cancellation.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static double CapOneMinusCos(double d2, double r2)
    {
        double sin2Max = r2 / d2;
        return sin2Max / (1 + Math.Sqrt(PortableMath.NonNegative(1 - sin2Max)));
    }

    // A point uniform by area on a disk, triangle or sphere light (seen from inside); quads are sampled in SampleArea.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static (Vec3d Point, Vec3d Normal) SamplePoint(in Primitive prim, double u1, double u2)
    {
        switch (prim.Kind)
        {
            case PrimitiveKind.Disk:
            {
                (double x, double y) = Warp.ConcentricDisk(u1, u2);
                var frame = new ShadingFrame(prim.Normal);
                return (prim.A + frame.ToWorld(new Vec3d(x * prim.Radius, y * prim.Radius, 0)), prim.Normal);
            }

            case PrimitiveKind.Triangle:
            {
                (double b1, double b2) = Warp.UniformTriangle(u1, u2);
                return (prim.A + (prim.B - prim.A) * b1 + (prim.C - prim.A) * b2, prim.Normal);
            }

            default:
            {
                // Sphere seen from inside: uniform over its area.
                Vec3d n = Warp.UniformSphere(u1, u2);
                return (prim.A + n * prim.Radius, n);
            }
        }
    }
}
