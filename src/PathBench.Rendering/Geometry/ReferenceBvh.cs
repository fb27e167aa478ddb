using System.Runtime.CompilerServices;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Geometry;

/// <summary>
/// The plain scalar reference for <see cref="Bvh"/>: the binary binned-SAH tree walked one box
/// at a time with <see cref="Math.Min(double, double)"/>/<see cref="Math.Max(double, double)"/>
/// slab tests, leaves of at most two primitives. It is what the renderer used before the wide
/// hierarchy; tests hold the fast path to the same hits.
/// </summary>
public sealed class ReferenceBvh
{
    private readonly Primitive[] _primitives;
    private readonly BinnedSah.Node[] _nodes;

    /// <summary>Builds the hierarchy over a copy of <paramref name="primitives"/> reordered into leaf order.</summary>
    public ReferenceBvh(Primitive[] primitives)
    {
        ArgumentNullException.ThrowIfNull(primitives);
        (_nodes, int[] order) = BinnedSah.Build(primitives, 2);
        _primitives = new Primitive[primitives.Length];
        for (int i = 0; i < order.Length; i++)
        {
            _primitives[i] = primitives[order[i]];
        }

        PrimitiveOrder = order;
    }

    /// <summary>For each leaf-order position (hit indices), the index in the array given to the constructor.</summary>
    public IReadOnlyList<int> PrimitiveOrder { get; }

    /// <summary>The nearest hit along the ray before <see cref="Ray.TMax"/>; false when there is none.</summary>
    public bool Intersect(in Ray ray, out SurfaceHit hit)
    {
        hit = default;
        double tBest = ray.TMax;
        int best = -1;
        Vec3d inv = InverseDirection(ray.Direction);
        Span<int> stack = stackalloc int[BinnedSah.MaxDepth + 1];
        int sp = 0;
        int node = 0;
        while (true)
        {
            ref readonly BinnedSah.Node nd = ref _nodes[node];
            if (HitsBox(nd.Min, nd.Max, ray.Origin, inv, tBest))
            {
                if (nd.Count > 0)
                {
                    for (int i = nd.Start; i < nd.Start + nd.Count; i++)
                    {
                        double t = _primitives[i].Intersect(ray, tBest);
                        if (t < tBest)
                        {
                            tBest = t;
                            best = i;
                        }
                    }
                }
                else
                {
                    // Visit the child on the ray's near side first.
                    bool negative = ray.Direction[nd.Axis] < 0;
                    stack[sp++] = negative ? node + 1 : nd.Start;
                    node = negative ? nd.Start : node + 1;
                    continue;
                }
            }

            if (sp == 0)
            {
                break;
            }

            node = stack[--sp];
        }

        if (best < 0)
        {
            return false;
        }

        ref readonly Primitive prim = ref _primitives[best];
        hit.T = tBest;
        hit.Point = ray.At(tBest);
        hit.Primitive = best;
        hit.GeometricNormal = prim.NormalAt(hit.Point);
        hit.ShadingNormal = hit.GeometricNormal;
        return true;
    }

    /// <summary>True when anything blocks the ray before <paramref name="tMax"/>: a closest hit there (the reference needs no early exit).</summary>
    public bool Occluded(in Ray ray, double tMax) => Intersect(ray with { TMax = tMax }, out _);

    // A zero component would give 0·∞ = NaN in the slab test when the origin lies on a slab
    // plane; a huge finite reciprocal gives 0 there instead, which keeps the test conservative.
    internal static Vec3d InverseDirection(Vec3d d) => new(Reciprocal(d.X), Reciprocal(d.Y), Reciprocal(d.Z));

    private static double Reciprocal(double x) => x == 0 ? 1e300 : 1.0 / x;

    /// <summary>The reference slab test of one box (<paramref name="inv"/> from <see cref="InverseDirection"/>); tests hold the fast tests to it.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static bool HitsBox(Vec3d min, Vec3d max, Vec3d origin, Vec3d inv, double tMax)
    {
        // Slab test (Kay & Kajiya 1986, "Ray tracing complex scenes", SIGGRAPH).
        double tx1 = (min.X - origin.X) * inv.X, tx2 = (max.X - origin.X) * inv.X;
        double t0 = Math.Min(tx1, tx2), t1 = Math.Max(tx1, tx2);
        double ty1 = (min.Y - origin.Y) * inv.Y, ty2 = (max.Y - origin.Y) * inv.Y;
        t0 = Math.Max(t0, Math.Min(ty1, ty2));
        t1 = Math.Min(t1, Math.Max(ty1, ty2));
        double tz1 = (min.Z - origin.Z) * inv.Z, tz2 = (max.Z - origin.Z) * inv.Z;
        t0 = Math.Max(t0, Math.Min(tz1, tz2));
        t1 = Math.Min(t1, Math.Max(tz1, tz2));
        // Bounds are inflated by a relative 1e-12 against rounding on flat (zero-thickness) boxes.
        double slack = 1e-12 * (1 + Math.Abs(t1));
        return t1 + slack >= Math.Max(t0, 0) && t0 <= tMax;
    }
}
