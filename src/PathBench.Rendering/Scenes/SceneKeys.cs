namespace PathBench.Rendering.Scenes;

/// <summary>The keys one kind of mapping in a scene file accepts, and which of them it requires.</summary>
/// <param name="Name">The kind's name; the same name is the <c>$defs</c> entry in <c>scenes/schema/scene.schema.json</c>.</param>
/// <param name="Keys">Every accepted key, in the order the README documents them.</param>
/// <param name="Required">The keys that must be present.</param>
internal sealed record KeyTable(string Name, IReadOnlyList<string> Keys, IReadOnlyList<string> Required);

/// <summary>
/// The one list of keys the loader accepts. The unknown-key check reads these tables, and the
/// schema agreement test compares them with the JSON Schema, so the two cannot drift apart.
/// </summary>
internal static class SceneKeys
{
    public static readonly KeyTable Scene = Table("scene", "camera!", "render", "environment", "materials!", "shapes!");
    public static readonly KeyTable Camera = Table("camera", "position!", "look_at!", "up", "fov!", "resolution!", "aperture_radius", "focus_distance");
    public static readonly KeyTable Render = Table("render", "spp", "max_depth");
    public static readonly KeyTable Environment = Table("environment", "radiance!");

    public static readonly KeyTable DiffuseMaterial = Table("diffuse_material", "type!", "albedo!", "emission", "two_sided");
    public static readonly KeyTable ConductorMaterial = Table("conductor_material", "type!", "roughness!", "f0!", "emission", "two_sided");
    public static readonly KeyTable DielectricMaterial = Table("dielectric_material", "type!", "ior!", "emission", "two_sided");

    /// <summary>The mapping form of an albedo: <c>{ checker: { … } }</c>.</summary>
    public static readonly KeyTable CheckerTexture = Table("checker_texture", "checker!");
    public static readonly KeyTable Checker = Table("checker", "scale!", "a!", "b!");

    public static readonly KeyTable Sphere = Table("sphere", "type!", "center!", "radius!", "material!");
    public static readonly KeyTable Quad = Table("quad", "type!", "corner!", "edge_u!", "edge_v!", "material!");
    public static readonly KeyTable Disk = Table("disk", "type!", "center!", "normal!", "radius!", "material!");
    public static readonly KeyTable Mesh = Table("mesh", "type!", "file!", "material!", "transform");
    public static readonly KeyTable Transform = Table("transform", "translate", "rotate", "scale");
    public static readonly KeyTable Rotate = Table("rotate", "axis!", "degrees!");

    /// <summary>Material tables by the value of their <c>type</c> key.</summary>
    public static readonly IReadOnlyDictionary<string, KeyTable> MaterialTypes = new Dictionary<string, KeyTable>(StringComparer.Ordinal)
    {
        ["diffuse"] = DiffuseMaterial,
        ["conductor"] = ConductorMaterial,
        ["dielectric"] = DielectricMaterial,
    };

    /// <summary>Shape tables by the value of their <c>type</c> key.</summary>
    public static readonly IReadOnlyDictionary<string, KeyTable> ShapeTypes = new Dictionary<string, KeyTable>(StringComparer.Ordinal)
    {
        ["sphere"] = Sphere,
        ["quad"] = Quad,
        ["disk"] = Disk,
        ["mesh"] = Mesh,
    };

    /// <summary>Every table, for the schema agreement test.</summary>
    public static readonly IReadOnlyList<KeyTable> All =
    [
        Scene, Camera, Render, Environment, DiffuseMaterial, ConductorMaterial, DielectricMaterial,
        CheckerTexture, Checker, Sphere, Quad, Disk, Mesh, Transform, Rotate,
    ];

    // A trailing '!' marks a required key: the tables stay one line each and easy to compare with the README.
    private static KeyTable Table(string name, params string[] keys) =>
        new(name, keys.Select(k => k.TrimEnd('!')).ToArray(), keys.Where(k => k.EndsWith('!')).Select(k => k.TrimEnd('!')).ToArray());
}
