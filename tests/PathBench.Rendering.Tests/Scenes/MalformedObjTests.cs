using PathBench.Rendering.Scenes;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>
/// Malformed OBJ meshes: each must be refused with one exact message naming the OBJ file (relative to
/// the scene's folder), its 1-based line and the 1-based column of the offending token. The rules
/// come from the Wavefront OBJ format (indices start at 1, negative indices count back from the
/// latest entry, v/vt/vn/f statements; from memory); the messages are the loader's own.
/// </summary>
public sealed class MalformedObjTests
{
    public sealed record Case(string Obj, string Message, int Line, int Column);

    // Lines 1-8: the eight corners of the unit cube; most rows append line 9 onwards.
    private const string Cube = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv 0 0 1\nv 1 0 1\nv 1 1 1\nv 0 1 1\n";

    private static readonly Dictionary<string, Case> Corpus = new()
    {
        ["index_not_an_integer"] = new(Cube + "f 1 2 x\n", "face index 'x' is not an integer", 9, 7),
        ["index_fraction"] = new(Cube + "f 1 2.5 3\n", "face index '2.5' is not an integer", 9, 5),
        ["sign_alone"] = new(Cube + "f - 2 3\n", "face index '-' is not an integer", 9, 3),
        // OBJ indices are 1-based; 0 refers to nothing.
        ["index_zero"] = new(Cube + "f 0 2 3\n", "face index 0 is invalid; OBJ indices start at 1 (negative ones count back from the latest entry)", 9, 3),
        ["index_past_the_end"] = new(Cube + "f 1 2 12\n", "face index 12 out of range (the file has 8 vertices)", 9, 7),
        // A face may name vertices defined further down; this one names one never defined.
        ["forward_index_past_the_end"] = new("f 1 2 3\nv 0 0 0\nv 1 0 0\n", "face index 3 out of range (the file has 2 vertices)", 1, 7),
        // -1 is the latest vertex, so -9 is one before the first of eight.
        ["negative_index_before_the_start"] = new(Cube + "f -1 -2 -9\n", "face index -9 out of range (only 8 vertices before this line)", 9, 9),
        ["absurd_index"] = new(Cube + "f 1 2 3000000000\n", "face index 3000000000 out of range (a mesh holds at most 67108864 vertices)", 9, 7),
        ["index_longer_than_a_long"] = new(Cube + "f 1 2 99999999999999999999999\n",
            "face index 99999999999999999999999 out of range (a mesh holds at most 67108864 vertices)", 9, 7),
        ["face_with_two_vertices"] = new(Cube + "f 1 2\n", "face has 2 vertices; a face needs at least 3", 9, 1),
        ["face_with_no_vertices"] = new(Cube + "f\n", "face has 0 vertices; a face needs at least 3", 9, 1),
        ["coordinate_not_a_number"] = new("v 0 0 0\nv 1 zero 0\n", "coordinate 'zero' is not a number", 2, 5),
        // 1e999 overflows IEEE 754 binary64 and parses to +∞.
        ["coordinate_infinite"] = new("v 0 0 0\nv 1e999 0 0\n", "coordinate '1e999' is not a finite number", 2, 3),
        ["coordinate_nan"] = new("v 0 0 0\nv NaN 0 0\n", "coordinate 'NaN' is not a finite number", 2, 3),
        // The scene's bound on every number (squared lengths must stay finite in binary64).
        ["coordinate_above_the_bound"] = new("v 0 0 0\nv 1e300 0 0\n", "coordinate '1e300' is above 1e100 in magnitude", 2, 3),
        // A file without line breaks (or a device such as /dev/zero) must not become one unbounded string.
        ["line_longer_than_the_limit"] = new("v 0 0 0\n#" + new string('x', 1 << 20) + "\n", "line longer than 1048576 characters", 2, 1),
        ["vertex_with_two_coordinates"] = new("v 0 0 0\nv 1 0\n", "'v' takes 3 coordinates (x y z), got 2", 2, 1),
        ["vertex_weight_not_one"] = new("v 0 0 0\nv 1 0 0 2\n", "vertex weight w = 2 is not supported (only w = 1)", 2, 9),
        ["unknown_statement"] = new(Cube + "l 1 2\n", "unsupported OBJ statement 'l' (read: v, vt, vn, f; ignored: o, g, s, usemtl, mtllib)", 9, 1),
        // Statement names are case-sensitive.
        ["upper_case_statement"] = new("v 0 0 0\nV 1 0 0\n", "unsupported OBJ statement 'V' (read: v, vt, vn, f; ignored: o, g, s, usemtl, mtllib)", 2, 1),
        ["texture_index_past_the_end"] = new(Cube + "vt 0 0\nf 1/1 2/1 3/5\n", "texture coordinate index 5 out of range (the file has 1 texture coordinate)", 10, 11),
        ["normal_index_past_the_end"] = new(Cube + "vn 0 0 1\nf 1//1 2//1 3//2\n", "normal index 2 out of range (the file has 1 normal)", 10, 13),
        ["zero_normal"] = new(Cube + "vn 0 0 0\n", "normal has zero length", 9, 1),
        ["normal_with_two_components"] = new(Cube + "vn 0 1\n", "'vn' takes 3 components (x y z), got 2", 9, 1),
        ["texture_coordinate_with_four_values"] = new(Cube + "vt 0 0 0 0\n", "'vt' takes 1 to 3 coordinates (u [v [w]]), got 4", 9, 1),
        ["corner_forms_mixed_in_a_face"] = new(Cube + "vt 0 0\nf 1/1 2 3/1\n", "face corner '2' has the form v but the face's first corner has the form v/vt", 10, 7),
        ["face_forms_mixed_in_a_mesh"] = new(Cube + "vn 0 0 1\nf 1 2 3\nf 1//1 3//1 4//1\n",
            "face has the form v//vn but the first face (line 10) has the form v; every face of a mesh must use the same form", 11, 1),
        ["corner_with_four_parts"] = new(Cube + "f 1/1/1/1 2 3\n", "malformed face corner '1/1/1/1'; expected v, v/vt, v//vn or v/vt/vn", 9, 3),
        ["corner_with_empty_texture_index"] = new(Cube + "f 1/ 2/ 3/\n", "malformed face corner '1/'; expected v, v/vt, v//vn or v/vt/vn", 9, 3),
        // Columns count characters, a tab being one.
        ["tab_separated_index_past_the_end"] = new(Cube + "f\t1\t2\t12\n", "face index 12 out of range (the file has 8 vertices)", 9, 7),
        // A comment ends the statement; the index before it is still checked.
        ["index_before_a_comment"] = new(Cube + "f 1 2 9 # the ninth vertex\n", "face index 9 out of range (the file has 8 vertices)", 9, 7),
    };

    public static TheoryData<string> Names => new(Corpus.Keys);

    [Theory]
    [MemberData(nameof(Names))]
    public void Malformed_mesh_is_refused_with_its_message_and_position(string name)
    {
        Case c = Corpus[name];
        using var folder = new TempFolder();
        folder.Write("meshes/thing.obj", c.Obj);
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(SceneWith("meshes/thing.obj"), "room.yaml", folder.Path));
        Assert.Equal($"meshes/thing.obj:{c.Line}:{c.Column}: {c.Message}", e.Message);
    }

    [Fact]
    public void Missing_mesh_file_is_named_at_its_key_in_the_scene()
    {
        using var folder = new TempFolder();
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(SceneWith("meshes/absent.obj"), "room.yaml", folder.Path));
        // Line 3, column 31: the value of 'file' in the scene below (counted by hand).
        Assert.StartsWith("room.yaml:3:31: cannot read mesh file 'meshes/absent.obj': ", e.Message, StringComparison.Ordinal);
        Assert.DoesNotContain('\n', e.Message);
    }

    [Fact]
    public void Mesh_that_is_a_folder_is_refused()
    {
        using var folder = new TempFolder();
        Directory.CreateDirectory(Path.Combine(folder.Path, "meshes", "thing.obj"));
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(SceneWith("meshes/thing.obj"), "room.yaml", folder.Path));
        Assert.StartsWith("room.yaml:3:31: cannot read mesh file 'meshes/thing.obj': ", e.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Mesh_errors_name_the_obj_relative_to_the_scene_file_as_given()
    {
        // A scene loaded as "<dir>/room.yaml" names its mesh "<dir>/meshes/thing.obj", a path that opens from where the command ran.
        using var folder = new TempFolder();
        string scene = folder.Write("room.yaml", SceneWith("meshes/thing.obj"));
        folder.Write("meshes/thing.obj", "v 0 0 0\nf 1 1 7\n");
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Load(scene));
        Assert.Equal($"{Path.Combine(folder.Path, "meshes/thing.obj")}:2:7: face index 7 out of range (the file has 1 vertex)", e.Message);
    }

    private static string SceneWith(string file) =>
        "camera: { position: [0, 0, 4], look_at: [0, 0, 0], fov: 40, resolution: [8, 6] }\n" +
        "materials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n" +
        $"shapes: [ {{ type: mesh, file: {file}, material: wall }} ]\n";
}
