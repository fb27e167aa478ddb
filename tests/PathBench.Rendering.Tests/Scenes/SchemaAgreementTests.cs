using System.Text.Json;
using System.Text.RegularExpressions;
using PathBench.Rendering.Scenes;
using YamlDotNet.RepresentationModel;

namespace PathBench.Rendering.Tests.Scenes;

/// <summary>
/// scenes/schema/scene.schema.json (JSON Schema draft 2020-12) and scenes/README.md must describe
/// exactly the keys the loader accepts. The loader's unknown-key check reads <see cref="SceneKeys"/>,
/// so comparing the schema with those tables compares it with the loader's behaviour; the
/// every-key scene closes the loop from the other side (every key the schema allows loads).
/// </summary>
public sealed class SchemaAgreementTests
{
    private static readonly string Docs = Path.Combine(AppContext.BaseDirectory, "Scenes", "Docs");

    private static JsonElement Schema()
    {
        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(Path.Combine(Docs, "scene.schema.json")));
        return doc.RootElement.Clone();
    }

    /// <summary>Every closed object of the schema (additionalProperties: false) by name: the root is "scene", the rest are $defs entries.</summary>
    private static Dictionary<string, JsonElement> ClosedObjects(JsonElement schema)
    {
        var closed = new Dictionary<string, JsonElement>(StringComparer.Ordinal) { ["scene"] = schema };
        foreach (JsonProperty def in schema.GetProperty("$defs").EnumerateObject())
        {
            if (def.Value.TryGetProperty("additionalProperties", out JsonElement ap) && ap.ValueKind == JsonValueKind.False)
                closed.Add(def.Name, def.Value);
        }
        return closed;
    }

    private static string[] Names(JsonElement obj, string member) =>
        obj.TryGetProperty(member, out JsonElement e)
            ? e.ValueKind == JsonValueKind.Object ? e.EnumerateObject().Select(p => p.Name).ToArray() : e.EnumerateArray().Select(x => x.GetString()!).ToArray()
            : [];

    [Fact]
    public void The_schema_declares_draft_2020_12()
    {
        Assert.Equal("https://json-schema.org/draft/2020-12/schema", Schema().GetProperty("$schema").GetString());
    }

    [Fact]
    public void Every_closed_object_of_the_schema_is_a_key_table_of_the_loader_and_back()
    {
        Dictionary<string, JsonElement> closed = ClosedObjects(Schema());
        Assert.Equal(SceneKeys.All.Select(t => t.Name).Order(StringComparer.Ordinal), closed.Keys.Order(StringComparer.Ordinal));
    }

    public static TheoryData<string> Tables => new(SceneKeys.All.Select(t => t.Name));

    [Theory]
    [MemberData(nameof(Tables))]
    public void Schema_and_loader_accept_and_require_the_same_keys(string table)
    {
        KeyTable keys = SceneKeys.All.Single(t => t.Name == table);
        JsonElement obj = ClosedObjects(Schema())[table];
        Assert.Equal(keys.Keys.Order(StringComparer.Ordinal), Names(obj, "properties").Order(StringComparer.Ordinal));
        Assert.Equal(keys.Required.Order(StringComparer.Ordinal), Names(obj, "required").Order(StringComparer.Ordinal));
    }

    [Fact]
    public void Type_values_in_the_schema_are_the_loaders()
    {
        JsonElement defs = Schema().GetProperty("$defs");
        foreach ((string def, IReadOnlyDictionary<string, KeyTable> types) in new[] { ("material", SceneKeys.MaterialTypes), ("shape", SceneKeys.ShapeTypes) })
        {
            string[] schemaTypes = defs.GetProperty(def).GetProperty("properties").GetProperty("type").GetProperty("enum").EnumerateArray().Select(e => e.GetString()!).ToArray();
            Assert.Equal(types.Keys.Order(StringComparer.Ordinal), schemaTypes.Order(StringComparer.Ordinal));
            foreach ((string type, KeyTable table) in types)
                Assert.Equal(type, defs.GetProperty(table.Name).GetProperty("properties").GetProperty("type").GetProperty("const").GetString());
        }
    }

    [Fact]
    public void Bounds_in_the_schema_are_the_loaders()
    {
        Assert.Equal(SceneLoader.MaxShapes, Schema().GetProperty("properties").GetProperty("shapes").GetProperty("maxItems").GetInt32());
        JsonElement defs = Schema().GetProperty("$defs");
        JsonElement render = defs.GetProperty("render").GetProperty("properties");
        Assert.Equal(SceneLoader.MaxSpp, render.GetProperty("spp").GetProperty("maximum").GetInt32());
        Assert.Equal(SceneLoader.DefaultSpp, render.GetProperty("spp").GetProperty("default").GetInt32());
        Assert.Equal(SceneLoader.MaxDepth, render.GetProperty("max_depth").GetProperty("maximum").GetInt32());
        Assert.Equal(SceneLoader.DefaultMaxDepth, render.GetProperty("max_depth").GetProperty("default").GetInt32());
        JsonElement camera = defs.GetProperty("camera").GetProperty("properties");
        Assert.Equal(SceneLoader.MaxPixels, camera.GetProperty("resolution").GetProperty("items").GetProperty("maximum").GetInt32());
        Assert.Equal(0, camera.GetProperty("fov").GetProperty("exclusiveMinimum").GetDouble());
        Assert.Equal(180, camera.GetProperty("fov").GetProperty("exclusiveMaximum").GetDouble());
    }

    [Fact]
    public void The_every_key_scene_uses_every_key_the_schema_allows_and_loads()
    {
        // Keys the scene text uses, from YAML itself (material names excluded: they are names, not keys).
        var stream = new YamlStream();
        stream.Load(new StringReader(SceneLoaderTests.EveryKey));
        var used = new SortedSet<string>(StringComparer.Ordinal);
        Collect(stream.Documents[0].RootNode, isMaterialsMapping: false, used);

        var allowed = new SortedSet<string>(ClosedObjects(Schema()).Values.SelectMany(o => Names(o, "properties")), StringComparer.Ordinal);
        Assert.Equal(allowed, used);

        using var folder = new TempFolder();
        folder.Write("meshes/tri.obj", SceneLoaderTests.TriangleObj);
        Assert.Equal(4, SceneLoader.Parse(SceneLoaderTests.EveryKey, "every.yaml", folder.Path).Shapes.Count);
    }

    private static void Collect(YamlNode node, bool isMaterialsMapping, SortedSet<string> used)
    {
        if (node is YamlMappingNode map)
        {
            foreach ((YamlNode key, YamlNode value) in map.Children)
            {
                string name = ((YamlScalarNode)key).Value!;
                if (!isMaterialsMapping)
                    used.Add(name);
                Collect(value, isMaterialsMapping: !isMaterialsMapping && name == "materials", used);
            }
        }
        else if (node is YamlSequenceNode seq)
        {
            foreach (YamlNode child in seq.Children)
                Collect(child, false, used);
        }
    }

    [Fact]
    public void The_readme_documents_every_key_in_a_table_row()
    {
        string readme = File.ReadAllText(Path.Combine(Docs, "README.md"));
        // A key is documented when a table row starts with it in backticks: | `key` | type | default | unit | meaning |
        var documented = new HashSet<string>(
            Regex.Matches(readme, @"^\| `([a-z_0-9]+)` \|", RegexOptions.Multiline).Select(m => m.Groups[1].Value), StringComparer.Ordinal);
        string[] missing = SceneKeys.All.SelectMany(t => t.Keys).Distinct().Where(k => !documented.Contains(k)).ToArray();
        Assert.True(missing.Length == 0, $"undocumented keys: {string.Join(", ", missing)}");
        string[] extra = documented.Where(k => !SceneKeys.All.Any(t => t.Keys.Contains(k))).ToArray();
        Assert.True(extra.Length == 0, $"documented keys the loader does not know: {string.Join(", ", extra)}");
    }
}
