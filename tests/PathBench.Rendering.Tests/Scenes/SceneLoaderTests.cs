using System.Text;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>Well-formed scenes: every key lands in the right field, every default is filled in.</summary>
public sealed class SceneLoaderTests
{
    /// <summary>A scene that uses every key of the schema at least once (the schema test checks that claim).</summary>
    internal const string EveryKey = """
        camera:
          position: [1, 2, 3]
          look_at: [1, 2, -7]
          up: [0, 0.5, 0]
          fov: 35.5
          resolution: [320, 240]
          aperture_radius: 0.05
          focus_distance: 8
        render: { spp: 256, max_depth: 8 }
        environment: { radiance: [0.1, 0.2, 0.3] }
        materials:
          wall: { type: diffuse, albedo: [0.7, 0.6, 0.5] }
          lamp: { type: diffuse, albedo: [0, 0, 0], emission: [10, 9, 8], two_sided: true }
          metal: { type: conductor, roughness: 0.2, f0: [0.9, 0.6, 0.3] }
          glass: { type: dielectric, ior: 1.5, emission: [0, 0, 0.5], two_sided: false }
          floor: { type: diffuse, albedo: { checker: { scale: 0.25, a: [0.8, 0.8, 0.8], b: [0.1, 0.1, 0.1] } } }
        shapes:
          - { type: sphere, center: [0, 1, 0], radius: 0.5, material: metal }
          - { type: quad, corner: [-1, 3, -1], edge_u: [2, 0, 0], edge_v: [0, 0, 2], material: lamp }
          - { type: disk, center: [0, 0, 0], normal: [0, 3, 0], radius: 4, material: floor }
          - type: mesh
            file: meshes/tri.obj
            material: glass
            transform: { translate: [1, 0, 0], rotate: { axis: [0, 0, 1], degrees: 90 }, scale: 2 }
        """;

    internal const string TriangleObj = "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n";

    // The smallest valid scene; its SHA-256 below is GNU coreutils sha256sum of these exact bytes.
    private const string Minimal =
        "camera: { position: [0, 0, 4], look_at: [0, 0, 0], fov: 40, resolution: [8, 6] }\n" +
        "materials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n" +
        "shapes: [ { type: sphere, center: [0, 0, 0], radius: 1, material: wall } ]\n";

    private const string MinimalSha256 = "3e10e78b71ba4e39074582b05cba39ea3fb97faca3fd5184ef54ce3e81b7d98c";

    // The same bytes behind a UTF-8 byte order mark, also from sha256sum.
    private const string MinimalWithBomSha256 = "83311f59bc46a7e955d6ba4669cb4a150c0356bcb7d90d1f3ccf1469c12266e3";

    [Fact]
    public void Every_key_is_read_into_its_field()
    {
        using var folder = new TempFolder();
        folder.Write("meshes/tri.obj", TriangleObj);
        SceneDescription s = SceneLoader.Parse(EveryKey, "every.yaml", folder.Path);

        Assert.Equal("every.yaml", s.SourcePath);
        Assert.Equal(new CameraDescription(new Vec3d(1, 2, 3), new Vec3d(1, 2, -7), new Vec3d(0, 0.5, 0), 35.5, 320, 240, 0.05, 8), s.Camera);
        Assert.Equal(new RenderSettings(256, 8), s.Render);
        Assert.Equal(new Rgb(0.1, 0.2, 0.3), s.EnvironmentRadiance);

        Assert.Equal(["wall", "lamp", "metal", "glass", "floor"], s.Materials.Keys);
        Assert.Equal(new DiffuseMaterial("wall", Rgb.Black, false, new ConstantTexture(new Rgb(0.7, 0.6, 0.5))), s.Materials["wall"]);
        Assert.Equal(new DiffuseMaterial("lamp", new Rgb(10, 9, 8), true, new ConstantTexture(Rgb.Black)), s.Materials["lamp"]);
        Assert.Equal(new ConductorMaterial("metal", Rgb.Black, false, 0.2, new Rgb(0.9, 0.6, 0.3)), s.Materials["metal"]);
        Assert.Equal(new DielectricMaterial("glass", new Rgb(0, 0, 0.5), false, 1.5), s.Materials["glass"]);
        Assert.Equal(new DiffuseMaterial("floor", Rgb.Black, false, new CheckerTexture(0.25, Rgb.Grey(0.8), Rgb.Grey(0.1))), s.Materials["floor"]);

        Assert.Equal(4, s.Shapes.Count);
        Assert.Equal(new SphereShape("metal", new Vec3d(0, 1, 0), 0.5), s.Shapes[0]);
        Assert.Equal(new QuadShape("lamp", new Vec3d(-1, 3, -1), new Vec3d(2, 0, 0), new Vec3d(0, 0, 2)), s.Shapes[1]);
        // The disk's normal is stored normalized.
        Assert.Equal(new DiskShape("floor", Vec3d.Zero, new Vec3d(0, 1, 0), 4), s.Shapes[2]);
        MeshShape mesh = Assert.IsType<MeshShape>(s.Shapes[3]);
        Assert.Equal(("glass", "meshes/tri.obj", 1), (mesh.Material, mesh.File, mesh.TriangleCount));
        // Scale 2, quarter turn about +z, then +1 in x, worked by hand: (0,0,0)→(1,0,0), (1,0,0)→(1,2,0), (0,1,0)→(−1,0,0).
        Assert.Equal([new Vec3d(1, 0, 0), new Vec3d(1, 2, 0), new Vec3d(-1, 0, 0)], mesh.Positions);
        Assert.Empty(mesh.Normals);
        Assert.Empty(mesh.TexCoords);
    }

    [Fact]
    public void Defaults_are_filled_in()
    {
        SceneDescription s = SceneLoader.Parse(Minimal, "minimal.yaml", ".");
        // up [0, 1, 0], pinhole, focus on the look_at point (|look_at − position| = 4), spp 64, max_depth 16, black sky (issue 4).
        Assert.Equal(new CameraDescription(new Vec3d(0, 0, 4), Vec3d.Zero, new Vec3d(0, 1, 0), 40, 8, 6, 0, 4), s.Camera);
        Assert.Equal(new RenderSettings(64, 16), s.Render);
        Assert.Equal(Rgb.Black, s.EnvironmentRadiance);
        MaterialDescription wall = s.Materials["wall"];
        Assert.Equal(Rgb.Black, wall.Emission);
        Assert.False(wall.TwoSided);
    }

    [Fact]
    public void Render_keys_may_be_given_one_at_a_time()
    {
        Assert.Equal(new RenderSettings(4, 16), SceneLoader.Parse(Minimal + "render: { spp: 4 }\n", "r.yaml", ".").Render);
        Assert.Equal(new RenderSettings(64, 1), SceneLoader.Parse(Minimal + "render: { max_depth: 1 }\n", "r.yaml", ".").Render);
    }

    [Fact]
    public void A_tiny_but_valid_disk_normal_is_normalised()
    {
        // 1e-170 squared underflows to 0 in binary64; the direction is still exactly +Y.
        const string text = """
            camera: { position: [0, 1, 3], look_at: [0, 0, 0], fov: 40, resolution: [4, 4] }
            materials: { m: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }
            shapes: [ { type: disk, center: [0, 0, 0], normal: [0, 1e-170, 0], radius: 1, material: m } ]
            """;
        var disk = (DiskShape)SceneLoader.Parse(text, "d.yaml", ".").Shapes[0];
        Assert.Equal(new PathBench.Sampling.Warps.Vec3d(0, 1, 0), disk.Normal);
    }

    public static TheoryData<string, bool> Booleans => new()
    {
        // The YAML 1.2 core schema's boolean spellings (from memory).
        { "true", true }, { "True", true }, { "TRUE", true }, { "false", false }, { "False", false }, { "FALSE", false },
    };

    [Theory]
    [MemberData(nameof(Booleans))]
    public void Two_sided_takes_the_core_schema_booleans(string text, bool expected)
    {
        string scene = Minimal.Replace("albedo: [0.5, 0.5, 0.5] }", $"albedo: [0.5, 0.5, 0.5], two_sided: {text} }}", StringComparison.Ordinal);
        Assert.Equal(expected, SceneLoader.Parse(scene, "b.yaml", ".").Materials["wall"].TwoSided);
    }

    public static TheoryData<string, double> Numbers => new()
    {
        // Decimal forms double.Parse reads with the invariant culture; YAML 1.2 floats include these (from memory).
        { "40", 40 }, { "+40", 40 }, { "40.0", 40 }, { "4e1", 40 }, { "4.0E+1", 40 }, { ".5", 0.5 }, { "1.", 1 },
    };

    [Theory]
    [MemberData(nameof(Numbers))]
    public void Numbers_are_read_in_the_invariant_culture(string text, double expected)
    {
        string scene = Minimal.Replace("fov: 40", $"fov: {text}", StringComparison.Ordinal);
        Assert.Equal(expected, SceneLoader.Parse(scene, "n.yaml", ".").Camera.FovDegrees);
    }

    [Fact]
    public void Limits_at_their_bounds_are_accepted()
    {
        // 8192 × 8192 = 2^26 pixels exactly; spp 2^24; max_depth 1024; albedo and f0 exactly 1; roughness 0 and 1.
        string scene = Minimal.Replace("[8, 6]", "[8192, 8192]", StringComparison.Ordinal)
            .Replace("albedo: [0.5, 0.5, 0.5]", "albedo: [1, 1, 0]", StringComparison.Ordinal)
            + "render: { spp: 16777216, max_depth: 1024 }\n";
        SceneDescription s = SceneLoader.Parse(scene, "l.yaml", ".");
        Assert.Equal((8192, 8192), (s.Camera.Width, s.Camera.Height));
        Assert.Equal(new RenderSettings(SceneLoader.MaxSpp, SceneLoader.MaxDepth), s.Render);

        string metals = Minimal.Replace("wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] }",
            "wall: { type: conductor, roughness: 0, f0: [1, 1, 1] }, rough: { type: conductor, roughness: 1, f0: [0, 0, 0] }", StringComparison.Ordinal);
        SceneDescription m = SceneLoader.Parse(metals, "m.yaml", ".");
        Assert.Equal(0, ((ConductorMaterial)m.Materials["wall"]).Roughness);
        Assert.Equal(1, ((ConductorMaterial)m.Materials["rough"]).Roughness);
    }

    [Fact]
    public void Block_and_flow_styles_and_comments_read_the_same()
    {
        const string block = """
            # A scene in block style, with comments.
            camera:
              position: [0, 0, 4]   # eye
              look_at: [0, 0, 0]
              fov: 40
              resolution:
                - 8
                - 6
            materials:
              wall:
                type: diffuse
                albedo: [0.5, 0.5, 0.5]
            shapes:
              - type: sphere
                center: [0, 0, 0]
                radius: 1
                material: wall
            """;
        SceneDescription a = SceneLoader.Parse(block, "a.yaml", ".");
        SceneDescription b = SceneLoader.Parse(Minimal, "b.yaml", ".");
        Assert.Equal(b.Camera, a.Camera);
        Assert.Equal(b.Materials["wall"], a.Materials["wall"]);
        Assert.Equal(b.Shapes, a.Shapes);
    }

    [Fact]
    public void Anchors_and_aliases_may_share_values()
    {
        string scene = Minimal.Replace("look_at: [0, 0, 0]", "look_at: &origin [0, 0, 0]", StringComparison.Ordinal)
            .Replace("center: [0, 0, 0]", "center: *origin", StringComparison.Ordinal);
        Assert.Equal(new SphereShape("wall", Vec3d.Zero, 1), SceneLoader.Parse(scene, "a.yaml", ".").Shapes[0]);
    }

    [Fact]
    public void Parse_hashes_the_utf8_text()
    {
        Assert.Equal(MinimalSha256, SceneLoader.Parse(Minimal, "minimal.yaml", ".").Sha256);
    }

    [Fact]
    public void Load_hashes_the_file_bytes_and_reads_meshes_beside_it()
    {
        using var folder = new TempFolder();
        folder.Write("meshes/tri.obj", TriangleObj);
        string path = folder.Write("every.yaml", EveryKey);
        SceneDescription s = SceneLoader.Load(path);
        Assert.Equal(path, s.SourcePath);
        Assert.Equal(Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(File.ReadAllBytes(path))), s.Sha256);
        Assert.Equal(1, Assert.IsType<MeshShape>(s.Shapes[3]).TriangleCount);

        string minimal = Path.Combine(folder.Path, "minimal.yaml");
        File.WriteAllText(minimal, Minimal, new UTF8Encoding(false));
        Assert.Equal(MinimalSha256, SceneLoader.Load(minimal).Sha256);
    }

    [Fact]
    public void Load_accepts_a_byte_order_mark_and_hashes_it()
    {
        using var folder = new TempFolder();
        string path = Path.Combine(folder.Path, "bom.yaml");
        File.WriteAllBytes(path, [0xEF, 0xBB, 0xBF, .. Encoding.UTF8.GetBytes(Minimal)]);
        SceneDescription s = SceneLoader.Load(path);
        Assert.Equal(MinimalWithBomSha256, s.Sha256);
        Assert.Equal(40, s.Camera.FovDegrees);
    }

    [Fact]
    public void Load_of_a_missing_file_says_it_cannot_read_it()
    {
        using var folder = new TempFolder();
        string path = Path.Combine(folder.Path, "absent.yaml");
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Load(path));
        Assert.StartsWith($"{path}: cannot read file: ", e.Message, StringComparison.Ordinal);
        Assert.DoesNotContain('\n', e.Message);
    }

    [Fact]
    public void Load_refuses_bytes_that_are_not_utf8()
    {
        using var folder = new TempFolder();
        string path = Path.Combine(folder.Path, "latin1.yaml");
        // 0xE9 is 'é' in ISO 8859-1 but starts a three-byte sequence in UTF-8 (RFC 3629), which the following ' ' breaks.
        File.WriteAllBytes(path, [.. Encoding.ASCII.GetBytes("camera: caf"), 0xE9, .. Encoding.ASCII.GetBytes(" x\n")]);
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Load(path));
        Assert.Equal($"{path}: cannot read file: not valid UTF-8 (near byte 11)", e.Message);
    }

    [Fact]
    public void Errors_in_a_second_material_or_shape_name_it()
    {
        string scene = Minimal.Replace("} }\n", "}, lamp: { type: diffuse, albedo: [0, 0, 0], emission: [1, 1] } }\n", StringComparison.Ordinal);
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(scene, "room.yaml", "."));
        // Column 116: the '[' of the two-component emission on line 2 (its offset in the text, plus one).
        Assert.Equal("room.yaml:2:116: 'emission' in material 'lamp' must be an RGB triple [r, g, b], got a sequence of 2 items", e.Message);
    }
}
