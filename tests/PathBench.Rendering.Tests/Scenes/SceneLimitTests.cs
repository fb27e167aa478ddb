using System.Text;
using PathBench.Io;
using PathBench.Rendering.Scenes;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>
/// The size limits: each is checked before anything of that size is stored, and hostile input
/// (deep nesting, alias bombs, absurd sizes) is refused quickly with a one-line message instead of
/// exhausting the stack or memory. The limits themselves are our choices (scenes/README.md); common practice.
/// </summary>
public sealed class SceneLimitTests
{
    private const string Head =
        "camera: { position: [0, 0, 4], look_at: [0, 0, 0], fov: 40, resolution: [8, 6] }\n" +
        "materials: { wall: { type: diffuse, albedo: [0.5, 0.5, 0.5] } }\n";

    private static ObjMesh ReadObj(string obj, int maxTriangles, int maxVertices) =>
        ObjReader.Read(new StringReader(obj), "m.obj", maxTriangles, maxVertices);

    [Fact]
    public void A_mesh_stops_at_its_triangle_limit()
    {
        // A pentagon is 3 triangles: exactly the limit. The next face is one too many.
        const string obj = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nv -1 0 0\nf 1 2 3 4 5\n";
        Assert.Equal(3, ReadObj(obj, maxTriangles: 3, maxVertices: 100).TriangleCount);
        SceneException e = Assert.Throws<SceneException>(() => ReadObj(obj + "f 1 2 3\n", maxTriangles: 3, maxVertices: 100));
        Assert.Equal("m.obj:7:1: too many triangles: a mesh may hold at most 3", e.Message);
    }

    [Fact]
    public void One_huge_face_is_refused_before_it_is_triangulated()
    {
        // Six corners make four triangles, one over a limit of 3.
        SceneException e = Assert.Throws<SceneException>(() => ReadObj("v 0 0 0\nf 1 1 1 1 1 1\n", maxTriangles: 3, maxVertices: 100));
        Assert.Equal("m.obj:2:1: too many triangles: a mesh may hold at most 3", e.Message);
    }

    public static TheoryData<string> Statements => new() { "v 0 0 0", "vt 0 0", "vn 0 0 1" };

    [Theory]
    [MemberData(nameof(Statements))]
    public void A_mesh_stops_at_its_entry_limit(string statement)
    {
        string obj = string.Concat(Enumerable.Repeat(statement + "\n", 5));
        SceneException e = Assert.Throws<SceneException>(() => ReadObj(obj, maxTriangles: 100, maxVertices: 4));
        string plural = statement.Split(' ')[0] switch { "v" => "vertices", "vt" => "texture coordinates", _ => "normals" };
        Assert.Equal($"m.obj:5:1: too many {plural}: a mesh may hold at most 4", e.Message);
    }

    [Fact]
    public void An_index_beyond_the_entry_limit_is_refused_at_once()
    {
        SceneException e = Assert.Throws<SceneException>(() => ReadObj("f 1 2 5\n", maxTriangles: 100, maxVertices: 4));
        Assert.Equal("m.obj:1:7: face index 5 out of range (a mesh holds at most 4 vertices)", e.Message);
    }

    [Fact]
    public void The_scene_stops_at_two_to_the_26_triangles_in_all_its_meshes()
    {
        // 1025 instances of a 2^16-triangle mesh: the 1025th brings the total to 1025 · 65536 = 67 174 400 > 2^26.
        // Untransformed instances share the file's arrays, so this costs one small mesh of memory.
        using var folder = new TempFolder();
        var obj = new StringBuilder("v 0 0 0\nv 1 0 0\nv 0 1 0\n");
        for (int i = 0; i < 1 << 16; i++)
            obj.Append("f 1 2 3\n");
        folder.Write("meshes/big.obj", obj.ToString());
        var scene = new StringBuilder(Head).Append("shapes:\n");
        for (int i = 0; i < 1025; i++)
            scene.Append("  - { type: mesh, file: meshes/big.obj, material: wall }\n");

        // The count limit is what is tested here: a budget far above what 2^26 triangles would need.
        SceneException e = WithBudget(1L << 40, () => Assert.Throws<SceneException>(() => SceneLoader.Parse(scene.ToString(), "room.yaml", folder.Path)));
        // Shape k is on line 3 + k; column 25 is the value of 'file'.
        Assert.Equal("room.yaml:1028:25: mesh file 'meshes/big.obj' brings the scene to 67174400 triangles, above the limit of 67108864 (2^26)", e.Message);
    }

    [Fact]
    public void A_mesh_is_held_to_the_memory_budget_while_it_is_read()
    {
        // 3 vertex entries (64 bytes each) and 100 one-triangle faces (1280 bytes each): a budget of
        // 192 + 50 · 1280 bytes takes 50 faces; the 51st, on line 3 + 51, is refused before it is stored.
        string obj = "v 0 0 0\nv 1 0 0\nv 0 1 0\n" + string.Concat(Enumerable.Repeat("f 1 2 3\n", 100));
        MemoryBudgetException e = WithBudget(192 + (50 * 1280), () => Assert.Throws<MemoryBudgetException>(() => ReadObj(obj, ObjReader.MaxTriangles, ObjReader.MaxVertices)));
        Assert.StartsWith("m.obj:54:1: reading the scene's meshes up to here (1280 bytes a triangle, 64 a vertex entry) needs about 63.9 KiB, above the memory budget of 62.7 KiB;", e.Message);
        Assert.Contains("--max-memory", e.Message);
        Assert.Equal(100, WithBudget(192 + (100 * 1280), () => ReadObj(obj, ObjReader.MaxTriangles, ObjReader.MaxVertices)).TriangleCount);
    }

    [Fact]
    public void A_mesh_used_twice_counts_its_triangles_twice_against_the_budget()
    {
        using var folder = new TempFolder();
        folder.Write("tile.obj", "v 0 0 0\nv 1 0 0\nv 0 1 0\n" + string.Concat(Enumerable.Repeat("f 1 2 3\n", 100)));
        string scene = Head + "shapes:\n  - { type: mesh, file: tile.obj, material: wall }\n  - { type: mesh, file: tile.obj, material: wall }\n";
        MemoryBudgetException e = WithBudget(150 * 1024, () => Assert.Throws<MemoryBudgetException>(() => SceneLoader.Parse(scene, "room.yaml", folder.Path)));
        // The second shape is on line 5; column 25 is the value of 'file'.
        Assert.StartsWith("room.yaml:5:25: building the scene's 200 mesh triangles (1280 bytes a triangle) needs about 250 KiB, above the memory budget of 150 KiB;", e.Message);
    }

    private static T WithBudget<T>(long bytes, Func<T> body)
    {
        MemoryBudget saved = MemoryBudget.Current;
        MemoryBudget.Current = new MemoryBudget(bytes);
        try
        {
            return body();
        }
        finally
        {
            MemoryBudget.Current = saved;
        }
    }

    [Fact]
    public void A_scene_file_over_64_mib_is_not_read()
    {
        using var folder = new TempFolder();
        string path = Path.Combine(folder.Path, "huge.yaml");
        using (var f = new FileStream(path, FileMode.Create))
            f.SetLength(SceneLoader.MaxFileBytes + 1); // sparse on the file systems we run on: no 64 MiB written
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Load(path));
        Assert.Equal($"{path}: cannot read file: it is 67108865 bytes, above the limit of 67108864 (64 MiB) for a scene file", e.Message);
    }

    [Fact]
    public void A_million_nested_brackets_are_refused_without_exhausting_the_stack()
    {
        // Without the nesting check YamlDotNet's recursive node loader overflows the stack (and kills the process) near 100 000 levels.
        string text = "deep: " + new string('[', 1_000_000);
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(text, "room.yaml", "."));
        // The root mapping is level 1; the 32nd '[' (column 6 + 32) would open level 33.
        Assert.Equal("room.yaml:1:38: collections nest deeper than 32 levels", e.Message);
    }

    [Fact]
    public void An_alias_bomb_is_refused_while_parsing()
    {
        // Nine levels of ten aliases each would be 10^9 nodes if expanded. The first pass counts what each alias stands
        // for: l1 … l3 stand for 110 + 1110 + 11 110 nodes, each *l3 for 11 111 more, so the 8th on line 8 crosses 100 000.
        var text = new StringBuilder(Head).Append("shapes: [ { type: sphere, center: [0, 0, 0], radius: 1, material: wall } ]\n");
        text.Append("l0: &l0 [1, 1, 1, 1, 1, 1, 1, 1, 1, 1]\n");
        for (int i = 1; i <= 9; i++)
            text.Append($"l{i}: &l{i} [").AppendJoin(", ", Enumerable.Repeat($"*l{i - 1}", 10)).Append("]\n");
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(text.ToString(), "room.yaml", "."));
        // "l4: &l4 [" is 9 characters; the 8th "*l3" starts at column 10 + 7 · 5.
        Assert.Equal("room.yaml:8:45: aliases expand to more than 100000 nodes (this one, '*l3', to 11111); write repeated shapes out or put repeated geometry in a mesh", e.Message);
    }

    [Fact]
    public void A_hundred_thousand_aliased_shapes_are_refused_before_any_is_built()
    {
        // The reported case: one anchored sphere and 100 000 "- *s0" lines (1.3 MB), which loaded as 100 000 coincident
        // spheres and rendered for minutes. The sphere is 12 nodes (mapping, 4 keys, 4 values, 3 centre items), so the
        // 8334th alias crosses 100 000; the anchor is on line 4 and alias k on line 4 + k, its '*' in column 5.
        var text = new StringBuilder(Head).Append("shapes:\n  - &s0 { type: sphere, center: [0, 0, 0], radius: 1, material: wall }\n");
        for (int i = 0; i < 100_000; i++)
            text.Append("  - *s0\n");
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(text.ToString(), "many.yaml", "."));
        Assert.Equal("many.yaml:8338:5: aliases expand to more than 100000 nodes (this one, '*s0', to 12); write repeated shapes out or put repeated geometry in a mesh", e.Message);
    }

    [Fact]
    public void Aliases_within_the_limit_load()
    {
        // 8333 aliases of the 12-node sphere stand for 99 996 nodes: accepted, one shape each.
        var text = new StringBuilder(Head).Append("shapes:\n  - &s0 { type: sphere, center: [0, 0, 0], radius: 1, material: wall }\n");
        for (int i = 0; i < 8333; i++)
            text.Append("  - *s0\n");
        Assert.Equal(8334, SceneLoader.Parse(text.ToString(), "many.yaml", ".").Shapes.Count);
    }

    [Fact]
    public void More_than_two_to_the_16_shapes_are_refused_while_parsing()
    {
        // Written out (no aliases): 65 536 shapes are the limit, the 65 537th (line 3 + 65 537) is refused at its '{'.
        const string shape = "  - { type: sphere, center: [0, 0, 0], radius: 1, material: wall }\n";
        var text = new StringBuilder(Head).Append("shapes:\n");
        for (int i = 0; i < SceneLoader.MaxShapes; i++)
            text.Append(shape);
        Assert.Equal(SceneLoader.MaxShapes, SceneLoader.Parse(text.ToString(), "crowd.yaml", ".").Shapes.Count);
        text.Append(shape);
        SceneException e = Assert.Throws<SceneException>(() => SceneLoader.Parse(text.ToString(), "crowd.yaml", "."));
        Assert.Equal("crowd.yaml:65540:5: 'shapes' holds more than 65536 shapes (2^16); put large numbers of triangles in a mesh file", e.Message);
    }
}
