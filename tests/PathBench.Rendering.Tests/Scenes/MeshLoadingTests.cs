using PathBench.Rendering.Scenes;
using PathBench.Sampling.Warps;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>
/// OBJ meshes as the loader delivers them: fan-triangulated, indices resolved, transformed into world
/// space. Expected positions are worked by hand; the OBJ rules (1-based and negative indices, the
/// v/vt/vn corner forms) are the Wavefront OBJ format's (from memory).
/// </summary>
public sealed class MeshLoadingTests
{
    private const double Tolerance = 1e-12;

    private static MeshShape LoadMesh(string obj, string transform = "")
    {
        using var folder = new TempFolder();
        folder.Write("meshes/m.obj", obj);
        string t = transform.Length > 0 ? $", transform: {transform}" : "";
        string scene =
            "camera: { position: [0, 0, 4], look_at: [0, 0, 0], fov: 40, resolution: [8, 6] }\n" +
            "materials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n" +
            $"shapes: [ {{ type: mesh, file: meshes/m.obj, material: wall{t} }} ]\n";
        return Assert.IsType<MeshShape>(SceneLoader.Parse(scene, "room.yaml", folder.Path).Shapes[0]);
    }

    private static void Near(Vec3d expected, Vec3d actual)
    {
        Assert.True((expected - actual).Length <= Tolerance, $"expected {expected}, got {actual}");
    }

    private const string Square = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\n";

    [Fact]
    public void A_quad_face_becomes_two_triangles_fanned_from_its_first_corner()
    {
        MeshShape m = LoadMesh(Square + "f 1 2 3 4\n");
        Assert.Equal(2, m.TriangleCount);
        Vec3d a = new(0, 0, 0), b = new(1, 0, 0), c = new(1, 1, 0), d = new(0, 1, 0);
        Assert.Equal([a, b, c, a, c, d], m.Positions);
    }

    [Fact]
    public void A_pentagon_becomes_three_triangles()
    {
        MeshShape m = LoadMesh("v 0 0 0\nv 2 0 0\nv 3 1 0\nv 1 2 0\nv -1 1 0\nf 1 2 3 4 5\n");
        Assert.Equal(3, m.TriangleCount);
        Vec3d[] v = [new(0, 0, 0), new(2, 0, 0), new(3, 1, 0), new(1, 2, 0), new(-1, 1, 0)];
        Assert.Equal([v[0], v[1], v[2], v[0], v[2], v[3], v[0], v[3], v[4]], m.Positions);
    }

    [Fact]
    public void Negative_indices_count_back_from_the_latest_vertex()
    {
        MeshShape relative = LoadMesh(Square + "f -4 -3 -2 -1\n");
        MeshShape absolute = LoadMesh(Square + "f 1 2 3 4\n");
        Assert.Equal(absolute.Positions, relative.Positions);
    }

    [Fact]
    public void Negative_indices_are_relative_to_where_the_face_stands()
    {
        // -1 on line 2 is vertex 1, even though vertices 2 and 3 follow.
        MeshShape m = LoadMesh("v 5 0 0\nf -1 2 3\nv 0 5 0\nv 0 0 5\n");
        Assert.Equal([new Vec3d(5, 0, 0), new Vec3d(0, 5, 0), new Vec3d(0, 0, 5)], m.Positions);
    }

    [Fact]
    public void Faces_may_name_vertices_defined_further_down()
    {
        MeshShape m = LoadMesh("f 1 2 3\nv 0 0 0\nv 1 0 0\nv 0 1 0\n");
        Assert.Equal([new Vec3d(0, 0, 0), new Vec3d(1, 0, 0), new Vec3d(0, 1, 0)], m.Positions);
    }

    [Fact]
    public void Texture_coordinates_and_normals_follow_their_corners()
    {
        const string obj = "v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 0.25 0.75 0.5\nvn 0 0 2\nvn 0 3 4\nf 1/1/1 2/2/2 3/3/1\n";
        MeshShape m = LoadMesh(obj);
        Assert.Equal([0, 0, 1, 0, 0.25, 0.75], m.TexCoords);
        // vn 0 0 2 → (0, 0, 1); vn 0 3 4 → (0, 0.6, 0.8): normals arrive unit length (3-4-5 triangle).
        Assert.Equal(3, m.Normals.Count);
        Near(new Vec3d(0, 0, 1), m.Normals[0]);
        Near(new Vec3d(0, 0.6, 0.8), m.Normals[1]);
        Near(new Vec3d(0, 0, 1), m.Normals[2]);
    }

    [Fact]
    public void The_v_vt_form_gives_texture_coordinates_and_no_normals()
    {
        MeshShape m = LoadMesh("v 0 0 0\nv 1 0 0\nv 0 1 0\nvt 0.5\nf 1/1 2/1 3/1\n");
        // A one-value vt has v = 0.
        Assert.Equal([0.5, 0, 0.5, 0, 0.5, 0], m.TexCoords);
        Assert.Empty(m.Normals);
    }

    [Fact]
    public void The_v_vn_form_gives_normals_and_no_texture_coordinates()
    {
        MeshShape m = LoadMesh("v 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\nf 1//1 2//1 3//1\n");
        Assert.Equal([new Vec3d(0, 0, 1), new Vec3d(0, 0, 1), new Vec3d(0, 0, 1)], m.Normals);
        Assert.Empty(m.TexCoords);
    }

    [Fact]
    public void Ignored_statements_comments_blank_lines_and_crlf_are_skipped()
    {
        const string obj = "# exported by hand\r\nmtllib box.mtl\r\no box\r\ng side\r\ns 1\r\nusemtl red\r\n\r\n   \r\n" +
            "v 0 0 0 # origin\r\nv 1 0 0 1\r\nv 0 1 0 0.5 0.5 0.5\r\nf 1 2 3\r\n";
        MeshShape m = LoadMesh(obj);
        // 'v x y z 1' (weight 1) and 'v x y z r g b' (a vertex colour) are accepted, the extras dropped.
        Assert.Equal([new Vec3d(0, 0, 0), new Vec3d(1, 0, 0), new Vec3d(0, 1, 0)], m.Positions);
    }

    [Fact]
    public void Scale_then_rotate_then_translate()
    {
        // Issue 4's worked example: scale 2, rotate 90° about +z, translate (1, 0, 0) maps (1, 0, 0) to (1, 2, 0).
        MeshShape m = LoadMesh("v 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 2 3\n",
            "{ translate: [1, 0, 0], rotate: { axis: [0, 0, 1], degrees: 90 }, scale: 2 }");
        Assert.Equal(new Vec3d(1, 2, 0), m.Positions[0]);
        // By hand: (0,1,0) → (0,2,0) → (−2,0,0) → (−1,0,0); (0,0,1) → (0,0,2) → (0,0,2) → (1,0,2).
        Assert.Equal(new Vec3d(-1, 0, 0), m.Positions[1]);
        Assert.Equal(new Vec3d(1, 0, 2), m.Positions[2]);
    }

    public static TheoryData<string, double[], double[]> Rotations => new()
    {
        // The right-hand rule (from memory): a positive quarter turn about +x takes +y to +z, about +y takes +z to +x, about +z takes +x to +y.
        { "[1, 0, 0]", [0, 1, 0], [0, 0, 1] },
        { "[0, 1, 0]", [0, 0, 1], [1, 0, 0] },
        { "[0, 0, 1]", [1, 0, 0], [0, 1, 0] },
        // The axis is normalized first: a long axis turns the same.
        { "[0, 0, 7]", [1, 0, 0], [0, 1, 0] },
    };

    [Theory]
    [MemberData(nameof(Rotations))]
    public void Rotations_are_right_handed(string axis, double[] from, double[] to)
    {
        MeshShape m = LoadMesh($"v {from[0]} {from[1]} {from[2]}\nv 9 9 9\nv 9 9 8\nf 1 2 3\n", $"{{ rotate: {{ axis: {axis}, degrees: 90 }} }}");
        Assert.Equal(new Vec3d(to[0], to[1], to[2]), m.Positions[0]);
    }

    [Fact]
    public void A_thirty_degree_turn_matches_its_sine_and_cosine()
    {
        // cos 30° = √3/2, sin 30° = 1/2 (exact values); about the diagonal axis a third of a turn (120°) cycles the axes x → y → z.
        MeshShape m = LoadMesh("v 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 2 3\n", "{ rotate: { axis: [0, 0, 1], degrees: 30 } }");
        Near(new Vec3d(Math.Sqrt(3) / 2, 0.5, 0), m.Positions[0]);
        MeshShape cycle = LoadMesh("v 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 2 3\n", "{ rotate: { axis: [1, 1, 1], degrees: 120 } }");
        Near(new Vec3d(0, 1, 0), cycle.Positions[0]);
        Near(new Vec3d(0, 0, 1), cycle.Positions[1]);
        Near(new Vec3d(1, 0, 0), cycle.Positions[2]);
    }

    [Fact]
    public void A_per_axis_scale_scales_each_axis()
    {
        MeshShape m = LoadMesh("v 1 1 1\nv 0 0 0\nv 1 0 0\nf 1 2 3\n", "{ scale: [1, 2, 3] }");
        Assert.Equal(new Vec3d(1, 2, 3), m.Positions[0]);
    }

    [Fact]
    public void Normals_go_through_the_inverse_transpose()
    {
        // The triangle lies in the plane x + y = 1, whose normal is (1, 1, 0)/√2. Scale [2, 1, 1] then a quarter
        // turn about +z. By hand, the inverse transpose R·S⁻¹ takes (1, 1, 0) to R(0.5, 1, 0) = (−1, 0.5, 0),
        // i.e. (−2, 1, 0)/√5 after renormalizing.
        const string obj = "v 1 0 0\nv 0 1 0\nv 0 1 1\nvn 1 1 0\nf 1//1 2//1 3//1\n";
        MeshShape m = LoadMesh(obj, "{ rotate: { axis: [0, 0, 1], degrees: 90 }, scale: [2, 1, 1] }");
        Vec3d expected = new Vec3d(-2, 1, 0) / Math.Sqrt(5);
        foreach (Vec3d n in m.Normals)
            Near(expected, n);

        // The independent check: the transformed triangle's own plane normal, from its edges, is parallel to it.
        Vec3d geometric = Vec3d.Cross(m.Positions[1] - m.Positions[0], m.Positions[2] - m.Positions[0]).Normalized();
        Assert.True(Math.Abs(Vec3d.Dot(geometric, expected)) > 1 - 1e-12, $"geometric normal {geometric}");
    }

    [Fact]
    public void A_mirror_keeps_the_winding_on_the_side_of_the_normals()
    {
        // Counter-clockwise seen from +z, normal +z. Mirroring x reverses the winding; the loader swaps two
        // corners so the edge cross product still points the way the transformed normal does.
        const string obj = "v 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\nf 1//1 2//1 3//1\n";
        MeshShape m = LoadMesh(obj, "{ scale: [-1, 1, 1] }");
        Vec3d winding = Vec3d.Cross(m.Positions[1] - m.Positions[0], m.Positions[2] - m.Positions[0]);
        Near(new Vec3d(0, 0, 1), m.Normals[0]);
        Assert.True(Vec3d.Dot(winding, m.Normals[0]) > 0, $"winding normal {winding}");
        Assert.Equal([new Vec3d(0, 0, 0), new Vec3d(0, 1, 0), new Vec3d(-1, 0, 0)], m.Positions);
    }

    [Fact]
    public void A_uniform_negative_scale_is_a_point_reflection_and_also_keeps_the_winding()
    {
        const string obj = "v 0 0 0\nv 1 0 0\nv 0 1 0\nvn 0 0 1\nf 1//1 2//1 3//1\n";
        MeshShape m = LoadMesh(obj, "{ scale: -1 }");
        Vec3d winding = Vec3d.Cross(m.Positions[1] - m.Positions[0], m.Positions[2] - m.Positions[0]);
        Near(new Vec3d(0, 0, -1), m.Normals[0]);
        Assert.True(Vec3d.Dot(winding, m.Normals[0]) > 0, $"winding normal {winding}");
    }

    [Fact]
    public void One_file_used_by_two_shapes_gives_each_its_own_transform()
    {
        using var folder = new TempFolder();
        folder.Write("meshes/m.obj", "v 1 0 0\nv 0 1 0\nv 0 0 1\nf 1 2 3\n");
        string scene =
            "camera: { position: [0, 0, 4], look_at: [0, 0, 0], fov: 40, resolution: [8, 6] }\n" +
            "materials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n" +
            "shapes:\n" +
            "  - { type: mesh, file: meshes/m.obj, material: wall }\n" +
            "  - { type: mesh, file: ./meshes/m.obj, material: wall, transform: { translate: [0, 0, 10] } }\n";
        IReadOnlyList<ShapeDescription> shapes = SceneLoader.Parse(scene, "room.yaml", folder.Path).Shapes;
        Assert.Equal(new Vec3d(1, 0, 0), ((MeshShape)shapes[0]).Positions[0]);
        Assert.Equal(new Vec3d(1, 0, 10), ((MeshShape)shapes[1]).Positions[0]);
        Assert.Equal("./meshes/m.obj", ((MeshShape)shapes[1]).File);
    }
}
