using PathBench.Rendering.Geometry;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Generators;
using PathBench.Sampling.Hashing;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Integrators;

/// <summary>Which light-transport estimator the path tracer uses at each diffuse or glossy vertex.</summary>
public enum LightStrategy
{
    /// <summary>BSDF sampling only: emission is found by hitting it (the hemisphere sampler carries all the noise).</summary>
    Bsdf,

    /// <summary>Next-event estimation only: lights are sampled, and emission hit by BSDF-sampled rays is not counted (except after a delta bounce).</summary>
    Nee,

    /// <summary>Both, combined by multiple importance sampling with the power heuristic (Veach &amp; Guibas 1995).</summary>
    Mis,
}

/// <summary>Everything the path tracer's estimate depends on besides the scene and the sample point.</summary>
public sealed record PathTracerOptions(HemisphereStrategy Hemisphere, LightStrategy Lights, int MaxDepth, bool RussianRoulette);

/// <summary>
/// The fixed dimension layout of one path sample. A generator's consecutive dimensions then
/// mean the same thing in every path: 0–1 the position in the pixel, 2–3 the lens, and per
/// path vertex k (0-based) eight dimensions from 4 + 8k: direction (2), position on the light
/// (2), lobe choice, light choice, Russian roulette, and one unused. Eight keeps every 2-D
/// quantity on an even-aligned pair (2j, 2j+1), which pair-padded generators (jittered,
/// multi-jittered) stratify together; with an odd stride every other vertex would straddle two pairs.
/// </summary>
public static class DimensionLayout
{
    /// <summary>Film position (two dimensions).</summary>
    public const int Pixel = 0;

    /// <summary>Lens position (two dimensions).</summary>
    public const int Lens = 2;

    /// <summary>First per-vertex dimension.</summary>
    public const int FirstVertex = 4;

    /// <summary>Dimensions per path vertex.</summary>
    public const int PerVertex = 8;

    /// <summary>Offset of the direction pair within a vertex.</summary>
    public const int Direction = 0;

    /// <summary>Offset of the light position pair within a vertex.</summary>
    public const int LightPosition = 2;

    /// <summary>Offset of the lobe choice within a vertex.</summary>
    public const int Lobe = 4;

    /// <summary>Offset of the light choice within a vertex.</summary>
    public const int LightChoice = 5;

    /// <summary>Offset of the roulette decision within a vertex.</summary>
    public const int Roulette = 6;

    /// <summary>Dimensions a path of <paramref name="maxDepth"/> bounces can use.</summary>
    public static int Total(int maxDepth) => FirstVertex + PerVertex * (maxDepth + 1);

    /// <summary>The first dimension of vertex <paramref name="depth"/>.</summary>
    public static int Vertex(int depth) => FirstVertex + PerVertex * depth;
}

/// <summary>
/// One pixel sample's stream of numbers: the generator's coordinates up to its dimension limit,
/// then independent hash values (padding), so any generator serves any path length.
/// </summary>
public readonly struct SampleStream : ISampleStream
{
    private const ulong PaddingSalt = 0x50414444494E4700UL;

    private readonly PointSampler _sampler;
    private readonly ulong _pixel;
    private readonly uint _index;
    private readonly int _limit;

    /// <summary>Creates the stream of sample <paramref name="index"/> of the pixel with key <paramref name="pixel"/>.</summary>
    public SampleStream(PointSampler sampler, ulong pixel, uint index)
    {
        ArgumentNullException.ThrowIfNull(sampler);
        _sampler = sampler;
        _pixel = pixel;
        _index = index;
        _limit = sampler.MaxDimensions;
    }

    /// <summary>The padding value of dimension <paramref name="dimension"/> (at or past the generator's limit) of sample <paramref name="index"/>.</summary>
    public static double Padding(ulong pixel, uint index, int dimension) => SampleHash.Uniform(pixel ^ PaddingSalt, index, dimension);

    /// <inheritdoc/>
    public double Get(int dimension) =>
        dimension < _limit ? _sampler.Sample(_pixel, _index, dimension) : Padding(_pixel, _index, dimension);

    /// <inheritdoc/>
    public (double X, double Y) Get2D(int dimension) =>
        dimension + 1 < _limit ? _sampler.Sample2D(_pixel, _index, dimension) : (Get(dimension), Get(dimension + 1));
}

/// <summary>
/// Unbiased path tracing with next-event estimation and multiple importance sampling
/// (power heuristic, Veach &amp; Guibas 1995, "Optimally combining sampling techniques for
/// Monte Carlo rendering", SIGGRAPH), Russian roulette after the third vertex.
/// </summary>
public sealed class PathTracer(Scene scene, PathTracerOptions options)
{
    /// <summary>Radiance along the camera ray of one sample; <paramref name="rays"/> counts every ray traced.</summary>
    /// <remarks>Generic over the stream so the JIT compiles one copy per stream type and inlines its calls.</remarks>
    public Rgb Radiance<TStream>(Ray ray, TStream stream, ref long rays)
        where TStream : struct, ISampleStream
    {
        Rgb l = Rgb.Black;
        Rgb beta = Rgb.Grey(1);
        bool afterDelta = true; // camera rays see emission directly, like rays leaving a delta bounce
        double previousPdf = 0;
        Vec3d previousPoint = ray.Origin;
        LightSet lights = scene.Lights;
        bool sampleLights = options.Lights != LightStrategy.Bsdf && !lights.IsEmpty;
        for (int depth = 0; ; depth++)
        {
            rays++;
            if (!scene.Bvh.Intersect(ray, out SurfaceHit hit))
            {
                if (!scene.Environment.IsBlack)
                {
                    l += beta * scene.Environment * EmissionWeight(afterDelta, sampleLights, previousPdf, lights.EnvironmentPdf);
                }

                break;
            }

            ref readonly Primitive prim = ref scene.Bvh.Primitives[hit.Primitive];
            Material m = scene.Materials[prim.Material];
            Vec3d wo = -ray.Direction;
            if (m.IsEmissive)
            {
                Rgb le = m.Emitted(hit.GeometricNormal, wo);
                if (!le.IsBlack)
                {
                    // The light pdf matters only to the MIS weight: not looked up otherwise.
                    double lightPdf = options.Lights == LightStrategy.Mis && sampleLights && !afterDelta
                        ? lights.Pdf(hit.Primitive, previousPoint, hit.Point, hit.GeometricNormal) : 0;
                    l += beta * le * EmissionWeight(afterDelta, sampleLights, previousPdf, lightPdf);
                }
            }

            if (depth >= options.MaxDepth)
            {
                break;
            }

            // A dielectric tells entering from leaving by its normal: the geometric one, since an
            // interpolated normal can put the viewer on the wrong side near silhouettes.
            Vec3d ns = m.Kind == MaterialKind.Dielectric ? hit.GeometricNormal : ShadingNormal(prim, hit);
            var frame = new ShadingFrame(ns);
            Vec3d woLocal = frame.ToLocal(wo);
            Rgb albedo = m.Kind == MaterialKind.Diffuse ? m.Albedo(hit.Point) : Rgb.Black;
            int v = DimensionLayout.Vertex(depth);

            if (sampleLights && !m.IsDelta)
            {
                (double lu, double lv) = stream.Get2D(v + DimensionLayout.LightPosition);
                LightSample ls = lights.Sample(hit.Point, stream.Get(v + DimensionLayout.LightChoice), lu, lv);
                if (ls.Pdf > 0 && !ls.Radiance.IsBlack)
                {
                    Vec3d wiLocal = frame.ToLocal(ls.Direction);
                    (Rgb f, double bsdfPdf) = Bsdf.Evaluate(m, albedo, woLocal, wiLocal, options.Hemisphere);
                    // Light arriving from below the geometric surface cannot reach a one-sided reflector's front.
                    bool sameSide = Vec3d.Dot(hit.GeometricNormal, ls.Direction) * Vec3d.Dot(hit.GeometricNormal, wo) > 0;
                    if (!f.IsBlack && sameSide)
                    {
                        rays++;
                        var shadow = new Ray(RayOffset.Offset(hit.Point, hit.GeometricNormal, ls.Direction), ls.Direction, double.PositiveInfinity);
                        double tMax = double.IsPositiveInfinity(ls.Distance)
                            ? double.PositiveInfinity
                            : RayOffset.ShadowLimit(hit.Point, hit.Point + ls.Direction * ls.Distance, ls.Distance);
                        if (!scene.Bvh.Occluded(shadow, tMax))
                        {
                            double w = options.Lights == LightStrategy.Mis ? PowerHeuristic(ls.Pdf, bsdfPdf) : 1.0;
                            l += beta * f * ls.Radiance * (Math.Abs(wiLocal.Z) * w / ls.Pdf);
                        }
                    }
                }
            }

            (double u1, double u2) = stream.Get2D(v + DimensionLayout.Direction);
            BsdfSample bs = Bsdf.Sample(m, albedo, woLocal, u1, u2, stream.Get(v + DimensionLayout.Lobe), options.Hemisphere);
            if (bs.Weight.IsBlack)
            {
                break;
            }

            Vec3d wi = frame.ToWorld(bs.Direction);
            // A shading-normal direction that crosses the geometric surface the wrong way
            // would leak light through it; such samples end the path (common practice).
            bool reflect = bs.Direction.Z * woLocal.Z > 0;
            if ((Vec3d.Dot(hit.GeometricNormal, wi) * Vec3d.Dot(hit.GeometricNormal, wo) > 0) != reflect)
            {
                break;
            }

            beta *= bs.Weight;
            afterDelta = bs.IsDelta;
            previousPdf = bs.Pdf;
            previousPoint = hit.Point;
            ray = new Ray(RayOffset.Offset(hit.Point, hit.GeometricNormal, wi), wi, double.PositiveInfinity);

            if (options.RussianRoulette && depth >= 3)
            {
                // Survive with probability q = min(1, max throughput), at least 5 %: unbiased
                // because survivors are divided by q (Arvo & Kirk 1990, "Particle transport and image synthesis").
                double q = Math.Clamp(beta.Max, 0.05, 1.0);
                if (q < 1)
                {
                    if (stream.Get(v + DimensionLayout.Roulette) >= q)
                    {
                        break;
                    }

                    beta /= q;
                }
            }
        }

        return l;
    }

    /// <summary>
    /// The weight of emission found by a BSDF-sampled ray: 1 where light sampling could not
    /// have found it (camera rays, after a delta bounce, or no light sampling), 0 under pure
    /// next-event estimation (light sampling counts it instead), else the MIS weight.
    /// </summary>
    private double EmissionWeight(bool afterDelta, bool sampleLights, double bsdfPdf, double lightPdf) =>
        afterDelta || !sampleLights ? 1.0
        : options.Lights == LightStrategy.Nee ? 0.0
        : PowerHeuristic(bsdfPdf, lightPdf);

    private Vec3d ShadingNormal(in Primitive prim, in SurfaceHit hit)
    {
        if (prim.ShadingNormals < 0)
        {
            return hit.GeometricNormal;
        }

        (double b1, double b2) = prim.Barycentric(hit.Point);
        IReadOnlyList<Vec3d> n = scene.ShadingNormals;
        Vec3d s = (n[prim.ShadingNormals] * (1 - b1 - b2) + n[prim.ShadingNormals + 1] * b1 + n[prim.ShadingNormals + 2] * b2).Normalized();
        // Keep the shading normal on the geometric normal's side so the frame's orientation matches the geometry's.
        return Vec3d.Dot(s, hit.GeometricNormal) < 0 ? -s : s;
    }

    /// <summary>The power heuristic with β = 2: w = a² / (a² + b²).</summary>
    public static double PowerHeuristic(double a, double b)
    {
        double a2 = a * a, b2 = b * b;
        return a2 + b2 > 0 ? a2 / (a2 + b2) : 0;
    }
}
