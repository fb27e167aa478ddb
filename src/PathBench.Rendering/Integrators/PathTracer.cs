using System.Runtime.CompilerServices;
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

    /// <summary><see cref="Padding(ulong, uint, int)"/> of the run from <paramref name="first"/> into <paramref name="row"/>, eight at a time where the machine can (<see cref="SampleHash.UniformRun"/>, the same bits).</summary>
    public static void Padding(ulong pixel, uint first, int dimension, Span<double> row) =>
        SampleHash.UniformRun(pixel ^ PaddingSalt, first, dimension, row);

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
/// <remarks>
/// Tuned for issue 12 from <see cref="ReferencePathTracer"/>, which it must match bit for bit
/// (tested sample by sample): the loop is split into methods small enough that the JIT inlines the
/// vector and colour arithmetic in each (one method of ~10 kB ran out of inlining budget and called
/// even <see cref="Vec3d"/>'s constructor); the scene's tables are read as arrays, not through
/// interfaces; and a vertex skips the coordinates it cannot use (the lobe choice of a material with
/// one lobe, the light choice of a scene with one light), which only spares the sampler work:
/// every value used is the same one.
/// </remarks>
public sealed class PathTracer
{
    private readonly Bvh _bvh;
    private readonly Material[] _materials;
    private readonly Vec3d[] _shadingNormals;
    private readonly LightSet _lights;
    private readonly Rgb _environment;
    private readonly double _environmentPdf;
    private readonly LightStrategy _strategy;
    private readonly HemisphereStrategy _hemisphere;
    private readonly int _maxDepth;
    private readonly bool _roulette;
    private readonly bool _sampleLights;

    // Whether the light choice can change which light is sampled: not with one area light and no environment.
    private readonly bool _lightChoiceMatters;

    // One area light and no environment: sampled without the choice (LightSet.SampleOnlyLight).
    private readonly bool _onlyOneLight;

    /// <summary>A tracer of <paramref name="scene"/> with <paramref name="options"/>; immutable, so threads share it.</summary>
    public PathTracer(Scene scene, PathTracerOptions options)
    {
        ArgumentNullException.ThrowIfNull(scene);
        ArgumentNullException.ThrowIfNull(options);
        _bvh = scene.Bvh;
        _materials = scene.MaterialTable;
        _shadingNormals = scene.ShadingNormalTable;
        _lights = scene.Lights;
        _environment = scene.Environment;
        _environmentPdf = _lights.EnvironmentPdf;
        _strategy = options.Lights;
        _hemisphere = options.Hemisphere;
        _maxDepth = options.MaxDepth;
        _roulette = options.RussianRoulette;
        _sampleLights = options.Lights != LightStrategy.Bsdf && !_lights.IsEmpty;
        _lightChoiceMatters = _lights.AreaLightCount != 1 || _lights.EnvironmentProbability != 0;
        _onlyOneLight = _lights.HasOnlyOneLight;
    }

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
        // Set in place at each vertex: one struct for the whole path, not a new one copied in per vertex.
        Vertex vertex = default;
        DirectLight direct = default;
        for (int depth = 0; ; depth++)
        {
            rays++;
            if (!_bvh.Intersect(ray, out SurfaceHit hit))
            {
                if (!_environment.IsBlack)
                {
                    l += beta * _environment * EmissionWeight(afterDelta, previousPdf, _environmentPdf);
                }

                break;
            }

            Material m = _materials[_bvh.Primitives[hit.Primitive].Material];
            Vec3d wo = -ray.Direction;
            if (m.IsEmissive)
            {
                AddEmission(ref l, beta, m, hit, wo, afterDelta, previousPdf, previousPoint);
            }

            if (depth >= _maxDepth)
            {
                break;
            }

            vertex.Set(this, m, hit, wo);
            int v = DimensionLayout.Vertex(depth);
            bool lightTest = false;
            if (_sampleLights && !m.IsDelta)
            {
                (double lu, double lv) = stream.Get2D(v + DimensionLayout.LightPosition);
                double choice = _lightChoiceMatters ? stream.Get(v + DimensionLayout.LightChoice) : 0;
                lightTest = SampleDirectLight(beta, vertex, choice, lu, lv, out direct);
            }

            // The next direction is sampled before the shadow ray is traced: the two computations
            // are independent, and done one after the other with nothing between them the processor
            // overlaps their arithmetic (light sample, concentric map, sine) instead of waiting out
            // each chain of divisions and roots in turn. The estimate is the same: the light's
            // contribution was computed with the throughput before this scattering.
            (double u1, double u2) = stream.Get2D(v + DimensionLayout.Direction);
            // Only the dielectric chooses between lobes.
            double lobe = m.Kind == MaterialKind.Dielectric ? stream.Get(v + DimensionLayout.Lobe) : 0;
            bool scattered = Scatter(vertex, u1, u2, lobe, ref beta, ref ray, out afterDelta, out previousPdf);
            if (lightTest)
            {
                rays++;
                AddIfVisible(ref l, direct);
            }

            if (!scattered)
            {
                break;
            }

            previousPoint = hit.Point;
            if (_roulette && depth >= 3 && !SurvivesRoulette(ref beta, stream, v))
            {
                break;
            }
        }

        return l;
    }

    /// <summary>What one path vertex needs for light sampling and scattering, computed once.</summary>
    /// <remarks>
    /// Mutable and set in place (<see cref="Set"/>): built by a constructor, the JIT made it in a
    /// temporary and copied all of it (rep movsq) at every vertex.
    /// </remarks>
    private struct Vertex
    {
        public Material Material;
        public Vec3d Point;
        public Vec3d GeometricNormal;
        public ShadingFrame Frame;
        public Vec3d WoLocal;
        public Rgb Albedo;

        // n_g · wo: the sign tells which side of the surface the path arrived from.
        public double CosWo;

        // RayOffset.Scale(Point): both rays that leave the vertex and the shadow ray's limit use it.
        public double OffsetScale;

        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        public void Set(PathTracer tracer, Material m, in SurfaceHit hit, Vec3d wo)
        {
            Material = m;
            // The hit's point and normal are read coordinate by coordinate: the query has just
            // stored them so, and a copy of the whole vector (16 + 8 bytes) waited for those stores
            // to reach the cache (no store forwarding to a load that spans two stores).
            Vec3d point = new(hit.Point.X, hit.Point.Y, hit.Point.Z);
            Vec3d normal = new(hit.GeometricNormal.X, hit.GeometricNormal.Y, hit.GeometricNormal.Z);
            Point = point;
            GeometricNormal = normal;
            // A dielectric tells entering from leaving by its normal: the geometric one, since an
            // interpolated normal can put the viewer on the wrong side near silhouettes.
            Frame = new ShadingFrame(m.Kind == MaterialKind.Dielectric ? normal : tracer.ShadingNormal(hit, normal));
            WoLocal = Frame.ToLocal(wo);
            Albedo = m.Kind == MaterialKind.Diffuse ? m.Albedo(point) : Rgb.Black;
            CosWo = Vec3d.Dot(normal, wo);
            OffsetScale = RayOffset.Scale(point);
        }
    }

    /// <summary>Emission found by the path (a camera ray or a BSDF-sampled one), weighted against light sampling.</summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void AddEmission(ref Rgb l, Rgb beta, Material m, in SurfaceHit hit, Vec3d wo, bool afterDelta, double previousPdf, Vec3d previousPoint)
    {
        Rgb le = m.Emitted(hit.GeometricNormal, wo);
        if (!le.IsBlack)
        {
            // The light pdf matters only to the MIS weight: not looked up otherwise.
            double lightPdf = _strategy == LightStrategy.Mis && _sampleLights && !afterDelta
                ? _lights.Pdf(hit.Primitive, previousPoint, hit.Point, hit.GeometricNormal) : 0;
            l += beta * le * EmissionWeight(afterDelta, previousPdf, lightPdf);
        }
    }

    /// <summary>A light sample's shadow ray and what it adds to the estimate when nothing blocks it.</summary>
    private struct DirectLight
    {
        public Ray Shadow;
        public double TMax;
        public Rgb Contribution;
    }

    /// <summary>
    /// Next-event estimation at a vertex, up to its shadow ray: one light sample, and when it can
    /// contribute (true), the shadow ray to test and the contribution (throughput
    /// <paramref name="beta"/> times f·L·|cos|·w/pdf) to add if the ray is unblocked.
    /// </summary>
    /// <remarks>Not inlined: the loop stays small enough that the JIT inlines the arithmetic in both.</remarks>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private bool SampleDirectLight(Rgb beta, in Vertex vertex, double choice, double lu, double lv, out DirectLight direct)
    {
        Unsafe.SkipInit(out direct);
        LightSample ls = _onlyOneLight ? _lights.SampleOnlyLight(vertex.Point, lu, lv) : _lights.Sample(vertex.Point, choice, lu, lv);
        double cosGeometric = Vec3d.Dot(vertex.GeometricNormal, ls.Direction);
        if (!(ls.Pdf > 0) || ls.Radiance.IsBlack
            // Light arriving from below the geometric surface cannot reach a one-sided reflector's front.
            || !(cosGeometric * vertex.CosWo > 0))
        {
            return false;
        }

        Vec3d wiLocal = vertex.Frame.ToLocal(ls.Direction);
        (Rgb f, double bsdfPdf) = Bsdf.Evaluate(vertex.Material, vertex.Albedo, vertex.WoLocal, wiLocal, _hemisphere);
        if (f.IsBlack)
        {
            return false;
        }

        direct.Shadow = new Ray(RayOffset.Offset(vertex.Point, vertex.GeometricNormal, cosGeometric, vertex.OffsetScale), ls.Direction, double.PositiveInfinity);
        direct.TMax = double.IsPositiveInfinity(ls.Distance)
            ? double.PositiveInfinity
            : RayOffset.ShadowLimit(vertex.OffsetScale, vertex.Point + ls.Direction * ls.Distance, ls.Distance);
        double w = _strategy == LightStrategy.Mis ? PowerHeuristic(ls.Pdf, bsdfPdf) : 1.0;
        direct.Contribution = beta * f * ls.Radiance * (Math.Abs(wiLocal.Z) * w / ls.Pdf);
        return true;
    }

    /// <summary>Adds a light sample's contribution when its shadow ray reaches the light.</summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private void AddIfVisible(ref Rgb l, in DirectLight direct)
    {
        if (!_bvh.Occluded(direct.Shadow, direct.TMax))
        {
            l += direct.Contribution;
        }
    }

    /// <summary>
    /// Samples the BSDF at a vertex; on success multiplies the throughput, sets the next ray and
    /// gives whether the sample was a delta and its pdf, else the path ends.
    /// </summary>
    [MethodImpl(MethodImplOptions.NoInlining)]
    private bool Scatter(in Vertex vertex, double u1, double u2, double lobe, ref Rgb beta, ref Ray ray, out bool delta, out double pdf)
    {
        Unsafe.SkipInit(out delta);
        Unsafe.SkipInit(out pdf);
        BsdfSample bs = Bsdf.Sample(vertex.Material, vertex.Albedo, vertex.WoLocal, u1, u2, lobe, _hemisphere);
        if (bs.Weight.IsBlack)
        {
            return false;
        }

        Vec3d wi = vertex.Frame.ToWorld(bs.Direction);
        // A shading-normal direction that crosses the geometric surface the wrong way
        // would leak light through it; such samples end the path (common practice).
        bool reflect = bs.Direction.Z * vertex.WoLocal.Z > 0;
        double cosGeometric = Vec3d.Dot(vertex.GeometricNormal, wi);
        if ((cosGeometric * vertex.CosWo > 0) != reflect)
        {
            return false;
        }

        beta *= bs.Weight;
        delta = bs.IsDelta;
        pdf = bs.Pdf;
        ray = new Ray(RayOffset.Offset(vertex.Point, vertex.GeometricNormal, cosGeometric, vertex.OffsetScale), wi, double.PositiveInfinity);
        return true;
    }

    /// <summary>
    /// The weight of emission found by a BSDF-sampled ray: 1 where light sampling could not
    /// have found it (camera rays, after a delta bounce, or no light sampling), 0 under pure
    /// next-event estimation (light sampling counts it instead), else the MIS weight.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private double EmissionWeight(bool afterDelta, double bsdfPdf, double lightPdf) =>
        afterDelta || !_sampleLights ? 1.0
        : _strategy == LightStrategy.Nee ? 0.0
        : PowerHeuristic(bsdfPdf, lightPdf);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private Vec3d ShadingNormal(in SurfaceHit hit, Vec3d geometricNormal)
    {
        ref readonly Primitive prim = ref _bvh.Primitives[hit.Primitive];
        return prim.ShadingNormals < 0 ? geometricNormal : InterpolatedNormal(prim, hit, _shadingNormals);
    }

    /// <summary>A mesh triangle's shading normal at a hit, interpolated from its vertices' normals and turned to the geometric normal's side.</summary>
    internal static Vec3d InterpolatedNormal(in Primitive prim, in SurfaceHit hit, ReadOnlySpan<Vec3d> normals)
    {
        (double b1, double b2) = prim.Barycentric(hit.Point);
        int i = prim.ShadingNormals;
        Vec3d s = (normals[i] * (1 - b1 - b2) + normals[i + 1] * b1 + normals[i + 2] * b2).Normalized();
        // Keep the shading normal on the geometric normal's side so the frame's orientation matches the geometry's.
        return Vec3d.Dot(s, hit.GeometricNormal) < 0 ? -s : s;
    }

    /// <summary>
    /// Russian roulette at the vertex whose dimensions start at <paramref name="v"/>: survive with
    /// probability q = min(1, max throughput), at least 5 %, dividing the survivor's throughput by q,
    /// which keeps the estimate unbiased (Arvo &amp; Kirk 1990, "Particle transport and image synthesis").
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static bool SurvivesRoulette<TStream>(ref Rgb beta, TStream stream, int v)
        where TStream : struct, ISampleStream
    {
        double q = Math.Clamp(beta.Max, 0.05, 1.0);
        if (q < 1)
        {
            if (stream.Get(v + DimensionLayout.Roulette) >= q)
            {
                return false;
            }

            beta /= q;
        }

        return true;
    }

    /// <summary>The power heuristic with β = 2: w = a² / (a² + b²).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double PowerHeuristic(double a, double b)
    {
        double a2 = a * a, b2 = b * b;
        return a2 + b2 > 0 ? a2 / (a2 + b2) : 0;
    }
}
