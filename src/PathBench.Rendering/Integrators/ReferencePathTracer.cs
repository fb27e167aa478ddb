using PathBench.Rendering.Geometry;
using PathBench.Rendering.Materials;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Integrators;

/// <summary>
/// The plain path tracer <see cref="PathTracer"/> was tuned from (issue 12), kept as it was so the
/// tuned one can be tested against it sample by sample: the same estimator in one method, every
/// quantity computed where it is used, every dimension fetched whether the vertex needs it or not.
/// Both must give the same bits for every sample.
/// </summary>
internal sealed class ReferencePathTracer(Scene scene, PathTracerOptions options)
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
                            double w = options.Lights == LightStrategy.Mis ? PathTracer.PowerHeuristic(ls.Pdf, bsdfPdf) : 1.0;
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

            if (options.RussianRoulette && depth >= 3 && !PathTracer.SurvivesRoulette(ref beta, stream, v))
            {
                break;
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
        : PathTracer.PowerHeuristic(bsdfPdf, lightPdf);

    private Vec3d ShadingNormal(in Primitive prim, in SurfaceHit hit) =>
        prim.ShadingNormals < 0 ? hit.GeometricNormal : PathTracer.InterpolatedNormal(prim, hit, scene.ShadingNormalTable);
}
