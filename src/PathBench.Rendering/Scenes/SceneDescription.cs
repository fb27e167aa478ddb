using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Scenes;

/// <summary>
/// A scene as read from its YAML file: validated, immutable, with every default filled in and
/// every mesh loaded. The renderer builds its acceleration structure from this.
/// </summary>
/// <param name="SourcePath">The scene file, as given.</param>
/// <param name="Sha256">Lower-case hex SHA-256 of the scene file's bytes.</param>
/// <param name="Camera">The camera.</param>
/// <param name="Render">Render defaults from the file (the command line overrides them).</param>
/// <param name="EnvironmentRadiance">Constant sky radiance; black when the file has no <c>environment</c>.</param>
/// <param name="Materials">Materials by name.</param>
/// <param name="Shapes">Shapes in file order.</param>
public sealed record SceneDescription(
    string SourcePath,
    string Sha256,
    CameraDescription Camera,
    RenderSettings Render,
    Rgb EnvironmentRadiance,
    IReadOnlyDictionary<string, MaterialDescription> Materials,
    IReadOnlyList<ShapeDescription> Shapes)
{
    /// <summary>Full paths of the mesh files the loader read, each once; empty for a scene built in code.</summary>
    public IReadOnlyList<string> MeshFiles { get; init; } = [];
}

/// <summary>A pinhole or thin-lens camera.</summary>
/// <param name="Position">Eye point.</param>
/// <param name="LookAt">Point the camera looks at.</param>
/// <param name="Up">Up hint (need not be orthogonal to the view direction, must not be parallel to it).</param>
/// <param name="FovDegrees">Vertical field of view in degrees, in (0, 180).</param>
/// <param name="Width">Image width in pixels.</param>
/// <param name="Height">Image height in pixels.</param>
/// <param name="ApertureRadius">Thin-lens aperture radius; 0 = pinhole.</param>
/// <param name="FocusDistance">Distance to the plane in focus (used when the aperture is open).</param>
public sealed record CameraDescription(Vec3d Position, Vec3d LookAt, Vec3d Up, double FovDegrees, int Width, int Height, double ApertureRadius, double FocusDistance);

/// <summary>Render defaults.</summary>
/// <param name="Spp">Samples per pixel (default 64).</param>
/// <param name="MaxDepth">Longest path in bounces (default 16).</param>
public sealed record RenderSettings(int Spp, int MaxDepth);

/// <summary>A material; <paramref name="Emission"/> may be set on any type.</summary>
/// <param name="Name">Its key in <c>materials</c>.</param>
/// <param name="Emission">Emitted radiance (black = none).</param>
/// <param name="TwoSided">Emit on both sides rather than only the side the normal points to.</param>
public abstract record MaterialDescription(string Name, Rgb Emission, bool TwoSided);

/// <summary>Lambertian reflection.</summary>
public sealed record DiffuseMaterial(string Name, Rgb Emission, bool TwoSided, TextureDescription Albedo) : MaterialDescription(Name, Emission, TwoSided);

/// <summary>GGX microfacet conductor with Schlick Fresnel from <paramref name="F0"/>; roughness 0 is a mirror.</summary>
public sealed record ConductorMaterial(string Name, Rgb Emission, bool TwoSided, double Roughness, Rgb F0) : MaterialDescription(Name, Emission, TwoSided);

/// <summary>Smooth dielectric with Fresnel reflection and refraction.</summary>
public sealed record DielectricMaterial(string Name, Rgb Emission, bool TwoSided, double Ior) : MaterialDescription(Name, Emission, TwoSided);

/// <summary>A reflectance that may vary over a surface.</summary>
public abstract record TextureDescription;

/// <summary>One value everywhere.</summary>
public sealed record ConstantTexture(Rgb Value) : TextureDescription;

/// <summary>A 3-D checkerboard of cell size <paramref name="Scale"/> (world units) alternating <paramref name="A"/> and <paramref name="B"/>.</summary>
public sealed record CheckerTexture(double Scale, Rgb A, Rgb B) : TextureDescription;

/// <summary>A shape with its material's name (checked to exist).</summary>
public abstract record ShapeDescription(string Material);

/// <summary>A sphere; its normal points outward.</summary>
public sealed record SphereShape(string Material, Vec3d Center, double Radius) : ShapeDescription(Material);

/// <summary>A parallelogram corner + s·edge_u + t·edge_v, s, t ∈ [0, 1]; normal = normalize(edge_u × edge_v).</summary>
public sealed record QuadShape(string Material, Vec3d Corner, Vec3d EdgeU, Vec3d EdgeV) : ShapeDescription(Material);

/// <summary>A disk; its normal is the given one, normalized.</summary>
public sealed record DiskShape(string Material, Vec3d Center, Vec3d Normal, double Radius) : ShapeDescription(Material);

/// <summary>
/// A triangle mesh loaded from an OBJ file with its transform applied (world space).
/// <see cref="Normals"/> and <see cref="TexCoords"/> are per-vertex-of-triangle (3 per triangle) or empty.
/// </summary>
/// <param name="Material">Material name.</param>
/// <param name="File">The OBJ path as written in the scene.</param>
/// <param name="Positions">World-space positions, three per triangle (unindexed: simple and cache-friendly for a BVH build).</param>
/// <param name="Normals">World-space unit shading normals, three per triangle, or empty.</param>
/// <param name="TexCoords">Texture coordinates (u, v) pairs flattened, six per triangle, or empty.</param>
public sealed record MeshShape(string Material, string File, IReadOnlyList<Vec3d> Positions, IReadOnlyList<Vec3d> Normals, IReadOnlyList<double> TexCoords) : ShapeDescription(Material)
{
    /// <summary>Number of triangles.</summary>
    public int TriangleCount => Positions.Count / 3;
}

/// <summary>A scene file that cannot be used: the message names the file, line, column and key.</summary>
public sealed class SceneException : Exception
{
    /// <summary>Creates the exception with a one-line message.</summary>
    public SceneException(string message) : base(message) { }

    /// <summary>Creates the exception with a cause.</summary>
    public SceneException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates an empty exception.</summary>
    public SceneException() { }
}
