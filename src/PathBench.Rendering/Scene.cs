using PathBench.Rendering.Geometry;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering;

/// <summary>
/// The immutable render-ready scene: primitives in a BVH, runtime materials, the list of
/// lights (every emissive primitive, plus the environment when it is not black) and the camera.
/// </summary>
public sealed class Scene
{
    private Scene(Bvh bvh, Material[] materials, Vec3d[] shadingNormals, LightSet lights, Camera camera, Rgb environment)
    {
        Bvh = bvh;
        MaterialTable = materials;
        ShadingNormalTable = shadingNormals;
        Lights = lights;
        Camera = camera;
        Environment = environment;
    }

    /// <summary>The acceleration structure, which also owns the primitives.</summary>
    public Bvh Bvh { get; }

    /// <summary>Materials by index.</summary>
    public IReadOnlyList<Material> Materials => MaterialTable;

    /// <summary>Per-vertex shading normals of mesh triangles, three per triangle that has them.</summary>
    public IReadOnlyList<Vec3d> ShadingNormals => ShadingNormalTable;

    /// <summary>The materials as the array they are held in: the path tracer indexes it per vertex, without an interface call.</summary>
    internal Material[] MaterialTable { get; }

    /// <summary>The shading normals as the array they are held in (see <see cref="MaterialTable"/>).</summary>
    internal Vec3d[] ShadingNormalTable { get; }

    /// <summary>The lights.</summary>
    public LightSet Lights { get; }

    /// <summary>The camera.</summary>
    public Camera Camera { get; }

    /// <summary>Constant environment radiance.</summary>
    public Rgb Environment { get; }

    /// <summary>Builds the scene from a loaded description.</summary>
    public static Scene Build(SceneDescription d)
    {
        ArgumentNullException.ThrowIfNull(d);
        var names = d.Materials.Keys.Order(StringComparer.Ordinal).ToArray();
        var index = names.Select((n, i) => (n, i)).ToDictionary(t => t.n, t => t.i, StringComparer.Ordinal);
        Material[] materials = names.Select(n => Material.From(d.Materials[n])).ToArray();
        var prims = new List<Primitive>();
        var normals = new List<Vec3d>();
        foreach (ShapeDescription s in d.Shapes)
        {
            int m = index[s.Material];
            switch (s)
            {
                case SphereShape sp:
                    prims.Add(Primitive.Sphere(sp.Center, sp.Radius, m));
                    break;
                case QuadShape q:
                    prims.Add(Primitive.Quad(q.Corner, q.EdgeU, q.EdgeV, m));
                    break;
                case DiskShape dk:
                    prims.Add(Primitive.Disk(dk.Center, dk.Normal, dk.Radius, m));
                    break;
                case MeshShape mesh:
                    for (int t = 0; t < mesh.TriangleCount; t++)
                    {
                        int shading = -1;
                        if (mesh.Normals.Count == mesh.Positions.Count)
                        {
                            shading = normals.Count;
                            normals.Add(mesh.Normals[3 * t]);
                            normals.Add(mesh.Normals[3 * t + 1]);
                            normals.Add(mesh.Normals[3 * t + 2]);
                        }

                        Primitive tri = Primitive.Triangle(mesh.Positions[3 * t], mesh.Positions[3 * t + 1], mesh.Positions[3 * t + 2], m, shading);
                        if (tri.Area > 0)
                        {
                            prims.Add(tri); // degenerate triangles cannot be hit and would poison light sampling
                        }
                    }

                    break;
                default:
                    throw new ArgumentException($"unknown shape {s.GetType().Name}", nameof(d));
            }
        }

        if (prims.Count == 0)
        {
            throw new SceneException($"{d.SourcePath}: no shape has a nonzero area (every mesh triangle is degenerate), so there is nothing to render");
        }

        return Build(prims.ToArray(), materials, normals.ToArray(), Camera.From(d.Camera), d.EnvironmentRadiance);
    }

    /// <summary>Builds a scene from primitives made in code (tests, validation set-ups).</summary>
    public static Scene Build(Primitive[] primitives, Material[] materials, Vec3d[] shadingNormals, Camera camera, Rgb environment)
    {
        ArgumentNullException.ThrowIfNull(primitives);
        ArgumentNullException.ThrowIfNull(materials);
        var bvh = new Bvh(primitives);
        var lights = LightSet.Build(bvh.Primitives, materials, environment);
        return new Scene(bvh, materials, shadingNormals, lights, camera, environment);
    }
}
