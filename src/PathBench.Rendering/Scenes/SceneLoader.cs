using System.Security.Cryptography;
using System.Text;
using PathBench.Io;
using PathBench.Rendering.Geometry;
using PathBench.Sampling.Warps;
using YamlDotNet.Core;
using YamlDotNet.Core.Events;
using YamlDotNet.RepresentationModel;

namespace PathBench.Rendering.Scenes;

/// <summary>
/// Reads a scene file (our YAML schema, documented key by key in <c>scenes/README.md</c>) and the
/// OBJ meshes it names into a validated <see cref="SceneDescription"/>. Every problem is a
/// <see cref="SceneException"/> with one line <c>FILE:LINE:COLUMN: message</c>, where LINE and
/// COLUMN are 1-based and point at the first character of the offending YAML node (for an
/// unknown key, the key; for a bad value, the value; for a missing key, the mapping that lacks it).
/// </summary>
public static class SceneLoader
{
    /// <summary>Most pixels an image may have, 2^26 (an 8192 × 8192 image): the film holds several doubles per pixel.</summary>
    public const int MaxPixels = 1 << 26;

    /// <summary>Most samples per pixel, 2^24: far beyond any useful render and well inside the 2^32 index period of the Sobol generator.</summary>
    public const int MaxSpp = 1 << 24;

    /// <summary>Longest path in bounces, 1024: bounds the number of sample dimensions a path consumes.</summary>
    public const int MaxDepth = 1024;

    /// <summary>Most triangles in all of a scene's meshes together, 2^26 (instances of the same file count once each).</summary>
    public const int MaxTriangles = ObjReader.MaxTriangles;

    /// <summary>Largest scene file <see cref="Load"/> reads, 64 MiB; scenes are hand-written or small script output, meshes live in OBJ files.</summary>
    public const long MaxFileBytes = 64L << 20;

    /// <summary>Most shapes in 'shapes', 2^16: a scene is hand-written or small script output; many triangles belong in a mesh file.</summary>
    public const int MaxShapes = 1 << 16;

    /// <summary>
    /// Most nodes all aliases together may stand for, 100 000 (each alias counts the nodes of what it
    /// repeats): enough to share materials and a few shapes, far below what would make loading or
    /// rendering blow up (the "billion laughs" shape of input, CWE-776).
    /// </summary>
    public const long MaxAliasNodes = 100_000;

    /// <summary>Deepest nesting of YAML collections, 32; a valid scene needs 6. Deeper input would overflow the stack of the YAML library.</summary>
    public const int MaxNesting = 32;

    /// <summary>Default samples per pixel when the file has no <c>render.spp</c>.</summary>
    public const int DefaultSpp = 64;

    /// <summary>Default path length when the file has no <c>render.max_depth</c>.</summary>
    public const int DefaultMaxDepth = 16;

    /// <summary>
    /// Two vectors count as parallel when the sine of the angle between them is at most this.
    /// Common practice: far below any deliberate geometry, far above double rounding.
    /// </summary>
    internal const double ParallelTolerance = 1e-9;

    /// <summary>
    /// The scene-scale range, relative part: every length that defines a shape (a radius, a quad
    /// edge, a mesh's extent) and, with a lens, the aperture radius and focus distance must be at least
    /// this times 1 + the largest coordinate magnitude of that shape (of the camera's position). Rays
    /// leave surfaces 1e-9 · (1 + the largest coordinate magnitude) off them (<see cref="Geometry.RayOffset"/>),
    /// so a feature above this floor is at least 1000 offsets across and self-intersection is avoided
    /// at below 0.1 % of its size (common practice); far below it, hits cannot be computed reliably
    /// (a radius of 1e-200 squares to 0). The absolute part is the 1e100 bound on every number.
    /// </summary>
    public const double MinRelativeLength = 1e-6;

    /// <summary>
    /// The scene-scale range, upper part for flat shapes: a quad's edges, a disk's radius and a mesh's
    /// extent are at most this. Their normals and areas come from cross products, whose squared length
    /// is the fourth power of the lengths (a quad with edges of 1e99 overflowed to a NaN normal and
    /// rendered black); 1e60 keeps every such product below 1e240. A sphere's radius may reach the
    /// 1e100 of every number: its hits are computed from the exact |f|² − r² (Primitive).
    /// </summary>
    public const double MaxFlatLength = 1e60;

    private const string AlbedoWhy = "; an albedo above 1 would reflect more light than arrives";
    private const string F0Why = "; an f0 above 1 would reflect more light than arrives";

    /// <summary>Reads the scene file at <paramref name="path"/>; meshes are found relative to its folder.</summary>
    /// <exception cref="SceneException">The file cannot be read or is not a valid scene.</exception>
    public static SceneDescription Load(string path)
    {
        (string text, byte[] bytes) = ReadTextFile(path, "a scene file");
        string directory = Path.GetDirectoryName(Path.GetFullPath(path)) ?? ".";
        return ParseText(text, path, directory, Convert.ToHexStringLower(SHA256.HashData(bytes)));
    }

    /// <summary>
    /// Reads a YAML input file of at most <see cref="MaxFileBytes"/> as strict UTF-8 (a leading
    /// byte-order mark dropped), with one-line <see cref="SceneException"/>s naming the file.
    /// </summary>
    internal static (string Text, byte[] Bytes) ReadTextFile(string path, string what)
    {
        byte[] bytes;
        using (FileStream stream = InputFile.OpenRead(path, reason => new SceneException($"{path}: cannot read file: {OneLine(reason)}")))
        {
            if (stream.Length > MaxFileBytes)
                throw new SceneException(FormattableString.Invariant($"{path}: cannot read file: it is {stream.Length} bytes, above the limit of {MaxFileBytes} (64 MiB) for {what}"));
            bytes = new byte[stream.Length];
            try
            {
                stream.ReadExactly(bytes);
            }
            catch (IOException e)
            {
                throw new SceneException($"{path}: cannot read file: {OneLine(e.Message)}", e);
            }
        }

        string text;
        try
        {
            text = new UTF8Encoding(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true).GetString(bytes);
        }
        catch (DecoderFallbackException e)
        {
            throw new SceneException(FormattableString.Invariant($"{path}: cannot read file: not valid UTF-8 (near byte {e.Index})"), e);
        }
        if (text.StartsWith('\uFEFF'))
            text = text[1..];
        return (text, bytes);
    }

    /// <summary>Parses scene text; <paramref name="sourcePath"/> names the file in messages, meshes are read relative to <paramref name="baseDirectory"/>.</summary>
    /// <param name="yamlText">The scene file's text.</param>
    /// <param name="sourcePath">The name messages use for the file; mesh paths in messages are relative to its folder.</param>
    /// <param name="baseDirectory">The folder mesh paths are resolved against.</param>
    /// <returns>The scene; its <see cref="SceneDescription.Sha256"/> is that of the UTF-8 encoding of <paramref name="yamlText"/>.</returns>
    /// <exception cref="SceneException">The text is not a valid scene or a mesh cannot be read.</exception>
    public static SceneDescription Parse(string yamlText, string sourcePath, string baseDirectory)
    {
        ArgumentNullException.ThrowIfNull(yamlText);
        string sha = Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(yamlText)));
        return ParseText(yamlText, sourcePath, baseDirectory, sha);
    }

    private static SceneDescription ParseText(string text, string sourcePath, string baseDirectory, string sha256)
    {
        var reader = new YamlNodeReader(sourcePath);
        YamlNode root = ReadDocument(text, reader);
        if (root is not YamlMappingNode)
            throw reader.Error(root, $"the top level must be a mapping with keys camera, materials and shapes, got {YamlNodeReader.Describe(root)}");
        MappingView top = new MappingView(reader, (YamlMappingNode)root, "the scene").CheckKeys(SceneKeys.Scene);

        CameraDescription camera = ReadCamera(reader, top.Required("camera"));
        RenderSettings render = top.TryGet("render", out YamlNode renderNode)
            ? ReadRender(reader, renderNode)
            : new RenderSettings(DefaultSpp, DefaultMaxDepth);
        Rgb environment = top.TryGet("environment", out YamlNode environmentNode)
            ? ReadEnvironment(reader, environmentNode)
            : Rgb.Black;
        Dictionary<string, MaterialDescription> materials = ReadMaterials(reader, top.Required("materials"));
        var meshes = new MeshFiles(reader, sourcePath, baseDirectory);
        List<ShapeDescription> shapes = ReadShapes(reader, top.Required("shapes"), materials, meshes);
        return new SceneDescription(sourcePath, sha256, camera, render, environment, materials, shapes) { MeshFiles = meshes.Paths };
    }

    /// <summary>
    /// Parses the YAML twice: first as an event stream, to reject what the representation model
    /// cannot take safely (nesting deep enough to overflow its recursion, recursive or undefined
    /// aliases, aliases that expand to more than <see cref="MaxAliasNodes"/> nodes, more than
    /// <see cref="MaxShapes"/> shapes, collections as keys) and what a scene never uses (tags,
    /// several documents); then into the representation model, whose nodes carry the positions
    /// every later message needs. Nothing is built before the first pass has accepted the text.
    /// </summary>
    internal static YamlNode ReadDocument(string text, YamlNodeReader reader)
    {
        int documents = 0;
        try
        {
            var parser = new Parser(new StringReader(text));
            var open = new Stack<Frame>();
            // The size, in nodes, of every anchored node once complete (its aliases stand for that many).
            var complete = new Dictionary<string, long>(StringComparer.Ordinal);
            string? topKey = null;
            long aliasNodes = 0;
            while (parser.MoveNext())
            {
                ParsingEvent e = parser.Current!;
                switch (e)
                {
                    case DocumentStart:
                        if (++documents > 1)
                            throw reader.Error(e.Start, "the file holds more than one YAML document; a scene is one document");
                        break;
                    case AnchorAlias alias:
                        string name = alias.Value.Value;
                        if (open.Any(f => f.Anchor == name))
                            throw reader.Error(e.Start, $"alias '*{YamlNodeReader.Shown(name)}' refers to a collection that contains it");
                        if (!complete.TryGetValue(name, out long size))
                            throw reader.Error(e.Start, $"alias '*{YamlNodeReader.Shown(name)}' refers to no anchor defined before it");
                        if (IsKey(open))
                            throw reader.Error(e.Start, "keys must be written out, not aliases");
                        aliasNodes += size;
                        if (aliasNodes > MaxAliasNodes)
                        {
                            throw reader.Error(e.Start, FormattableString.Invariant(
                                $"aliases expand to more than {MaxAliasNodes} nodes (this one, '*{YamlNodeReader.Shown(name)}', to {size}); write repeated shapes out or put repeated geometry in a mesh"));
                        }

                        NodeDone(open, size, reader, e.Start);
                        break;
                    case NodeEvent node:
                        if (!node.Tag.IsEmpty)
                            throw reader.Error(e.Start, $"YAML tags are not used in scene files, got '{YamlNodeReader.Shown(node.Tag.Value)}'");
                        string? anchor = node.Anchor.IsEmpty ? null : node.Anchor.Value;
                        if (node is Scalar scalar)
                        {
                            if (open.Count == 1 && IsKey(open))
                                topKey = scalar.Value;
                            if (anchor is not null)
                                complete[anchor] = 1;
                            NodeDone(open, 1, reader, e.Start);
                            break;
                        }
                        if (IsKey(open))
                            throw reader.Error(e.Start, $"keys must be names, got a {(node is MappingStart ? "mapping" : "sequence")}");
                        if (open.Count >= MaxNesting)
                            throw reader.Error(e.Start, FormattableString.Invariant($"collections nest deeper than {MaxNesting} levels"));
                        bool isShapes = node is SequenceStart && open.Count == 1 && topKey == "shapes";
                        open.Push(new Frame(node is MappingStart, anchor, isShapes, e.Start));
                        break;
                    case SequenceEnd or MappingEnd:
                        Frame closed = open.Pop();
                        if (closed.Anchor is not null)
                            complete[closed.Anchor] = closed.Size;
                        NodeDone(open, closed.Size, reader, closed.Start);
                        break;
                }
            }
        }
        catch (YamlException e)
        {
            throw reader.Error(e.Start, $"YAML syntax error: {OneLine(e.Message)}");
        }
        catch (InvalidOperationException)
        {
            // YamlDotNet's scanner throws this on some unclosed flow collections ("[0, 1," then a
            // plain scalar on the next line) instead of a YamlException with a position.
            throw reader.Error(LastPosition(text), "YAML syntax error: an unclosed '[' or '{' (a missing ']' or '}')");
        }
        if (documents == 0)
            throw reader.Error(1, 1, "the file is empty; a scene is a mapping with keys camera, materials and shapes");

        var stream = new YamlStream();
        try
        {
            stream.Load(new StringReader(text));
        }
        catch (YamlException e) when (e.Message.StartsWith(DuplicateKeyPrefix, StringComparison.Ordinal))
        {
            // YamlDotNet refuses a repeated key; its message is reworded so every loader message has one style.
            throw reader.Error(e.Start, $"duplicate key '{YamlNodeReader.Shown(e.Message[DuplicateKeyPrefix.Length..])}'");
        }
        catch (YamlException e)
        {
            throw reader.Error(e.Start, $"YAML syntax error: {OneLine(e.Message)}");
        }
        catch (InvalidOperationException)
        {
            throw reader.Error(LastPosition(text), "YAML syntax error: an unclosed '[' or '{' (a missing ']' or '}')");
        }
        return stream.Documents[0].RootNode;
    }

    private const string DuplicateKeyPrefix = "Duplicate key ";

    /// <summary>
    /// Where the scanner gave up when it reports no position: the last unclosed '[' or '{' before
    /// the end, found by a plain bracket count that ignores quoted text and comments.
    /// </summary>
    private static Mark LastPosition(string text)
    {
        var open = new Stack<(int Line, int Column)>();
        int line = 1, column = 1;
        char quote = '\0';
        bool comment = false;
        foreach (char c in text)
        {
            if (c == '\n')
            {
                line++;
                column = 1;
                comment = false;
                continue;
            }

            if (!comment)
            {
                if (quote != '\0')
                {
                    if (c == quote)
                        quote = '\0';
                }
                else if (c is '"' or '\'')
                    quote = c;
                else if (c == '#')
                    comment = true;
                else if (c is '[' or '{')
                    open.Push((line, column));
                else if (c is ']' or '}' && open.Count > 0)
                    open.Pop();
            }

            column++;
        }

        (int l, int col) = open.Count > 0 ? open.Peek() : (1, 1);
        return new Mark(0, l, col);
    }

    private static bool IsKey(Stack<Frame> open) => open.Count > 0 && open.Peek() is { IsMapping: true, ExpectKey: true };

    /// <summary>Counts a finished node of <paramref name="size"/> nodes into the collection it belongs to.</summary>
    private static void NodeDone(Stack<Frame> open, long size, YamlNodeReader reader, Mark start)
    {
        if (open.Count == 0)
            return;
        Frame parent = open.Peek();
        parent.Size += size;
        if (parent.IsMapping)
        {
            parent.ExpectKey = !parent.ExpectKey;
        }
        else if (parent.IsShapes && ++parent.Items > MaxShapes)
        {
            throw reader.Error(start, FormattableString.Invariant(
                $"'shapes' holds more than {MaxShapes} shapes (2^16); put large numbers of triangles in a mesh file"));
        }
    }

    /// <summary>One open collection of the first pass.</summary>
    private sealed class Frame(bool isMapping, string? anchor, bool isShapes, Mark start)
    {
        /// <summary>Where the collection starts, for messages about it as an item.</summary>
        public Mark Start { get; } = start;

        public bool IsMapping { get; } = isMapping;

        public string? Anchor { get; } = anchor;

        /// <summary>Whether this is the top-level 'shapes' sequence, whose items are counted.</summary>
        public bool IsShapes { get; } = isShapes;

        /// <summary>For a mapping, whether the next node is a key.</summary>
        public bool ExpectKey { get; set; } = true;

        /// <summary>Nodes so far, this collection included, with aliases counted at their anchor's size.</summary>
        public long Size { get; set; } = 1;

        public int Items { get; set; }
    }

    private static CameraDescription ReadCamera(YamlNodeReader reader, YamlNode node)
    {
        MappingView cam = reader.Mapping(node, "camera", "'camera'").CheckKeys(SceneKeys.Camera);
        Vec3d position = reader.Vector(cam.Required("position"), cam.Of("position"));
        YamlNode lookAtNode = cam.Required("look_at");
        Vec3d lookAt = reader.Vector(lookAtNode, cam.Of("look_at"));

        Vec3d up = new(0, 1, 0);
        YamlNode? upNode = null;
        if (cam.TryGet("up", out YamlNode u))
        {
            upNode = u;
            up = reader.Vector(u, cam.Of("up"));
            if (IsZero(up))
                throw reader.Error(u, $"{cam.Of("up")} must not be the zero vector");
        }

        YamlNode fovNode = cam.Required("fov");
        double fov = reader.Number(fovNode, cam.Of("fov"));
        if (!(fov > 0 && fov < 180))
            throw reader.Error(fovNode, $"{cam.Of("fov")} must be in (0, 180) degrees, got {YamlNodeReader.Text(fovNode)}");

        YamlNode resolutionNode = cam.Required("resolution");
        YamlSequenceNode res = reader.Sequence(resolutionNode, cam.Of("resolution"), 2, "[width, height]");
        int width = reader.Integer(res.Children[0], $"the width in {cam.Of("resolution")}", 1, MaxPixels);
        int height = reader.Integer(res.Children[1], $"the height in {cam.Of("resolution")}", 1, MaxPixels);
        if ((long)width * height > MaxPixels)
        {
            throw reader.Error(resolutionNode, FormattableString.Invariant(
                $"{cam.Of("resolution")} is {width} × {height} = {(long)width * height} pixels, above the limit of {MaxPixels} (2^26)"));
        }

        double aperture = 0;
        if (cam.TryGet("aperture_radius", out YamlNode apertureNode))
        {
            aperture = reader.Number(apertureNode, cam.Of("aperture_radius"));
            if (aperture < 0)
                throw reader.Error(apertureNode, $"{cam.Of("aperture_radius")} must be >= 0, got {YamlNodeReader.Text(apertureNode)}");
        }

        Vec3d view = lookAt - position;
        if (IsZero(view))
            throw reader.Error(lookAtNode, $"{cam.Of("look_at")} equals 'position'; the camera has no view direction");
        if (!view.IsFinite)
            throw reader.Error(lookAtNode, $"{cam.Of("look_at")} is too far from 'position': their difference overflows");
        if (Parallel(up, view))
        {
            throw upNode is null
                ? reader.Error(cam.Node, "the default 'up' [0, 1, 0] of camera is parallel to the view direction (look_at - position); give 'up'")
                : reader.Error(upNode, $"{cam.Of("up")} is parallel to the view direction (look_at - position)");
        }

        double focus = ScaledVector.Length(view); // focusing on the look_at point is what a user who set no distance expects
        bool focusGiven = cam.TryGet("focus_distance", out YamlNode focusNode);
        if (focusGiven)
        {
            focus = reader.Number(focusNode, cam.Of("focus_distance"));
            if (!(focus > 0))
                throw reader.Error(focusNode, $"{cam.Of("focus_distance")} must be > 0, got {YamlNodeReader.Text(focusNode)}");
        }

        if (aperture > 0)
        {
            // A pinhole uses neither; with a lens both are lengths of the scene.
            RequireScale(reader, apertureNode!, cam.Of("aperture_radius"), aperture, Largest(position));
            RequireScale(reader, focusGiven ? focusNode : lookAtNode, !focusGiven ? $"the focus distance (from 'position' to {cam.Of("look_at")})" : cam.Of("focus_distance"), focus, Largest(position));
        }
        return new CameraDescription(position, lookAt, up, fov, width, height, aperture, focus);
    }

    private static RenderSettings ReadRender(YamlNodeReader reader, YamlNode node)
    {
        MappingView render = reader.Mapping(node, "render", "'render'").CheckKeys(SceneKeys.Render);
        int spp = render.TryGet("spp", out YamlNode sppNode) ? reader.Integer(sppNode, render.Of("spp"), 1, MaxSpp) : DefaultSpp;
        int depth = render.TryGet("max_depth", out YamlNode depthNode) ? reader.Integer(depthNode, render.Of("max_depth"), 1, MaxDepth) : DefaultMaxDepth;
        return new RenderSettings(spp, depth);
    }

    private static Rgb ReadEnvironment(YamlNodeReader reader, YamlNode node)
    {
        MappingView env = reader.Mapping(node, "environment", "'environment'").CheckKeys(SceneKeys.Environment);
        return reader.Colour(env.Required("radiance"), env.Of("radiance"), double.PositiveInfinity, "");
    }

    private static Dictionary<string, MaterialDescription> ReadMaterials(YamlNodeReader reader, YamlNode node)
    {
        MappingView all = reader.Mapping(node, "materials", "'materials'");
        var materials = new Dictionary<string, MaterialDescription>(StringComparer.Ordinal);
        foreach ((string name, _, YamlNode value) in all.Entries)
            materials.Add(name, ReadMaterial(reader, name, value));
        if (materials.Count == 0)
            throw reader.Error(node, "'materials' must define at least one material");
        return materials;
    }

    private static MaterialDescription ReadMaterial(YamlNodeReader reader, string name, YamlNode node)
    {
        string what = $"material '{YamlNodeReader.Shown(name)}'";
        MappingView m = reader.Mapping(node, what, what);
        YamlNode typeNode = m.Required("type");
        string type = reader.Name(typeNode, m.Of("type"));
        if (!SceneKeys.MaterialTypes.TryGetValue(type, out KeyTable? table))
            throw reader.Error(typeNode, $"unknown material type '{YamlNodeReader.Shown(type)}' in {what}{Hint(type, SceneKeys.MaterialTypes.Keys)}");
        m.CheckKeys(table);

        MaterialDescription material;
        switch (type)
        {
            case "diffuse":
                material = new DiffuseMaterial(name, Rgb.Black, false, ReadTexture(reader, m.Required("albedo"), what));
                break;
            case "conductor":
                YamlNode roughnessNode = m.Required("roughness");
                double roughness = reader.Number(roughnessNode, m.Of("roughness"));
                if (roughness is < 0 or > 1)
                    throw reader.Error(roughnessNode, $"{m.Of("roughness")} must be in [0, 1], got {YamlNodeReader.Text(roughnessNode)}");
                Rgb f0 = reader.Colour(m.Required("f0"), m.Of("f0"), 1, F0Why);
                material = new ConductorMaterial(name, Rgb.Black, false, roughness, f0);
                break;
            default:
                YamlNode iorNode = m.Required("ior");
                double ior = reader.Number(iorNode, m.Of("ior"));
                if (!(ior > 0))
                    throw reader.Error(iorNode, $"{m.Of("ior")} must be > 0, got {YamlNodeReader.Text(iorNode)}");
                material = new DielectricMaterial(name, Rgb.Black, false, ior);
                break;
        }

        Rgb emission = m.TryGet("emission", out YamlNode emissionNode)
            ? reader.Colour(emissionNode, m.Of("emission"), double.PositiveInfinity, "")
            : Rgb.Black;
        bool twoSided = m.TryGet("two_sided", out YamlNode twoSidedNode) && reader.Boolean(twoSidedNode, m.Of("two_sided"));
        return material with { Emission = emission, TwoSided = twoSided };
    }

    private static TextureDescription ReadTexture(YamlNodeReader reader, YamlNode node, string materialWhat)
    {
        string what = $"'albedo' in {materialWhat}";
        if (node is YamlSequenceNode)
            return new ConstantTexture(reader.Colour(node, what, 1, AlbedoWhy));
        if (node is not YamlMappingNode)
            throw reader.Error(node, $"{what} must be an RGB triple [r, g, b] or a mapping {{ checker: ... }}, got {YamlNodeReader.Describe(node)}");

        MappingView texture = new MappingView(reader, (YamlMappingNode)node, $"the albedo of {materialWhat}").CheckKeys(SceneKeys.CheckerTexture);
        MappingView checker = reader.Mapping(texture.Required("checker"), $"the checker of {materialWhat}", texture.Of("checker")).CheckKeys(SceneKeys.Checker);
        YamlNode scaleNode = checker.Required("scale");
        double scale = reader.Number(scaleNode, checker.Of("scale"));
        if (!(scale > 0))
            throw reader.Error(scaleNode, $"{checker.Of("scale")} must be > 0, got {YamlNodeReader.Text(scaleNode)}");
        Rgb a = reader.Colour(checker.Required("a"), checker.Of("a"), 1, AlbedoWhy);
        Rgb b = reader.Colour(checker.Required("b"), checker.Of("b"), 1, AlbedoWhy);
        return new CheckerTexture(scale, a, b);
    }

    private static List<ShapeDescription> ReadShapes(YamlNodeReader reader, YamlNode node, Dictionary<string, MaterialDescription> materials, MeshFiles meshes)
    {
        if (node is not YamlSequenceNode seq)
            throw reader.Error(node, $"'shapes' must be a sequence of shapes, got {YamlNodeReader.Describe(node)}");
        if (seq.Children.Count == 0)
            throw reader.Error(node, "'shapes' must hold at least one shape");

        var shapes = new List<ShapeDescription>(seq.Children.Count);
        for (int i = 0; i < seq.Children.Count; i++)
        {
            string numbered = FormattableString.Invariant($"shape {i + 1}");
            MappingView untyped = reader.Mapping(seq.Children[i], numbered, numbered);
            YamlNode typeNode = untyped.Required("type");
            string type = reader.Name(typeNode, untyped.Of("type"));
            if (!SceneKeys.ShapeTypes.TryGetValue(type, out KeyTable? table))
                throw reader.Error(typeNode, $"unknown shape type '{YamlNodeReader.Shown(type)}' in {numbered}{Hint(type, SceneKeys.ShapeTypes.Keys)}");
            MappingView s = new MappingView(reader, untyped.Node, $"{numbered} ({type})").CheckKeys(table);
            shapes.Add(type switch
            {
                "sphere" => ReadSphere(reader, s, materials),
                "quad" => ReadQuad(reader, s, materials),
                "disk" => ReadDisk(reader, s, materials),
                _ => ReadMesh(reader, s, materials, meshes),
            });
        }
        return shapes;
    }

    private static SphereShape ReadSphere(YamlNodeReader reader, MappingView s, Dictionary<string, MaterialDescription> materials)
    {
        Vec3d center = reader.Vector(s.Required("center"), s.Of("center"));
        double radius = PositiveNumber(reader, s, "radius");
        RequireScale(reader, s.Required("radius"), s.Of("radius"), radius, Largest(center));
        return new SphereShape(MaterialName(reader, s, materials), center, radius);
    }

    private static QuadShape ReadQuad(YamlNodeReader reader, MappingView s, Dictionary<string, MaterialDescription> materials)
    {
        Vec3d corner = reader.Vector(s.Required("corner"), s.Of("corner"));
        Vec3d edgeU = NonZeroVector(reader, s, "edge_u");
        YamlNode edgeVNode = s.Required("edge_v");
        Vec3d edgeV = NonZeroVector(reader, s, "edge_v");
        double reach = Math.Max(Largest(corner), Math.Max(Largest(corner + edgeU), Math.Max(Largest(corner + edgeV), Largest(corner + edgeU + edgeV))));
        RequireScale(reader, s.Required("edge_u"), $"the length of {s.Of("edge_u")}", ScaledVector.Length(edgeU), reach, flat: true);
        RequireScale(reader, edgeVNode, $"the length of {s.Of("edge_v")}", ScaledVector.Length(edgeV), reach, flat: true);
        if (Parallel(edgeU, edgeV))
            throw reader.Error(edgeVNode, $"'edge_u' and 'edge_v' in {s.What} are parallel; the quad has no area");
        return new QuadShape(MaterialName(reader, s, materials), corner, edgeU, edgeV);
    }

    private static DiskShape ReadDisk(YamlNodeReader reader, MappingView s, Dictionary<string, MaterialDescription> materials)
    {
        Vec3d center = reader.Vector(s.Required("center"), s.Of("center"));
        Vec3d normal = NonZeroVector(reader, s, "normal");
        double radius = PositiveNumber(reader, s, "radius");
        RequireScale(reader, s.Required("radius"), s.Of("radius"), radius, Largest(center), flat: true);
        // Scale by the largest component before normalising: a tiny but valid normal such as
        // [0, 1e-170, 0] would square to 0 and normalise to NaN.
        normal /= Math.Max(Math.Abs(normal.X), Math.Max(Math.Abs(normal.Y), Math.Abs(normal.Z)));
        return new DiskShape(MaterialName(reader, s, materials), center, normal.Normalized(), radius);
    }

    private static MeshShape ReadMesh(YamlNodeReader reader, MappingView s, Dictionary<string, MaterialDescription> materials, MeshFiles meshes)
    {
        YamlNode fileNode = s.Required("file");
        string file = reader.Name(fileNode, s.Of("file"));
        MeshTransform transform = s.TryGet("transform", out YamlNode transformNode)
            ? ReadTransform(reader, transformNode, s)
            : MeshTransform.Identity;
        string material = MaterialName(reader, s, materials);
        ObjMesh obj = meshes.Get(file, fileNode);

        if (!s.Has("transform"))
        {
            RequireMeshScale(reader, fileNode, s, file, obj.Positions);
            return new MeshShape(material, file, obj.Positions, obj.Normals, obj.TexCoords);
        }

        int corners = obj.Positions.Length;
        var positions = new Vec3d[corners];
        var normals = new Vec3d[obj.Normals.Length];
        var texCoords = (double[])obj.TexCoords.Clone();
        for (int i = 0; i < corners; i++)
        {
            positions[i] = transform.Point(obj.Positions[i]);
            if (!positions[i].IsFinite)
                throw reader.Error(transformNode, $"the transform of {s.What} takes a vertex of '{YamlNodeReader.Shown(file)}' to a non-finite position");
        }
        for (int i = 0; i < normals.Length; i++)
        {
            normals[i] = transform.Normal(obj.Normals[i]);
            if (!normals[i].IsFinite)
                throw reader.Error(transformNode, $"the transform of {s.What} takes a normal of '{YamlNodeReader.Shown(file)}' to a non-finite direction");
        }
        RequireMeshScale(reader, transformNode, s, file, positions);
        if (transform.FlipsWinding)
        {
            // A mirror reverses the winding; swapping corners 1 and 2 keeps the winding-order normal on the side the shading normals say is outside.
            for (int t = 0; t < corners; t += 3)
            {
                (positions[t + 1], positions[t + 2]) = (positions[t + 2], positions[t + 1]);
                if (normals.Length > 0)
                    (normals[t + 1], normals[t + 2]) = (normals[t + 2], normals[t + 1]);
                if (texCoords.Length > 0)
                {
                    (texCoords[2 * t + 2], texCoords[2 * t + 4]) = (texCoords[2 * t + 4], texCoords[2 * t + 2]);
                    (texCoords[2 * t + 3], texCoords[2 * t + 5]) = (texCoords[2 * t + 5], texCoords[2 * t + 3]);
                }
            }
        }
        return new MeshShape(material, file, positions, normals, texCoords);
    }

    private static MeshTransform ReadTransform(YamlNodeReader reader, YamlNode node, MappingView shape)
    {
        MappingView t = reader.Mapping(node, $"the transform of {shape.What}", shape.Of("transform")).CheckKeys(SceneKeys.Transform);

        Vec3d translate = t.TryGet("translate", out YamlNode translateNode) ? reader.Vector(translateNode, t.Of("translate")) : Vec3d.Zero;

        Vec3d axis = new(0, 0, 1);
        double degrees = 0;
        if (t.TryGet("rotate", out YamlNode rotateNode))
        {
            MappingView r = reader.Mapping(rotateNode, $"the rotation of {shape.What}", t.Of("rotate")).CheckKeys(SceneKeys.Rotate);
            axis = NonZeroVector(reader, r, "axis");
            degrees = reader.Number(r.Required("degrees"), r.Of("degrees"));
        }

        Vec3d scale = new(1, 1, 1);
        if (t.TryGet("scale", out YamlNode scaleNode))
        {
            if (scaleNode is YamlSequenceNode seq)
            {
                scale = reader.Vector(scaleNode, t.Of("scale"));
                for (int i = 0; i < 3; i++)
                {
                    if (scale[i] == 0)
                        throw reader.Error(seq.Children[i], FormattableString.Invariant($"component {i + 1} of {t.Of("scale")} must not be 0; the mesh would collapse to a plane"));
                }
            }
            else if (scaleNode is YamlScalarNode)
            {
                double s = reader.Number(scaleNode, t.Of("scale"));
                if (s == 0)
                    throw reader.Error(scaleNode, $"{t.Of("scale")} must not be 0; the mesh would collapse to a point");
                scale = new Vec3d(s, s, s);
            }
            else
            {
                throw reader.Error(scaleNode, $"{t.Of("scale")} must be a number or a 3-vector [x, y, z], got {YamlNodeReader.Describe(scaleNode)}");
            }
        }
        return MeshTransform.Create(scale, axis, degrees, translate);
    }

    private static string MaterialName(YamlNodeReader reader, MappingView s, Dictionary<string, MaterialDescription> materials)
    {
        YamlNode node = s.Required("material");
        string name = reader.Name(node, s.Of("material"));
        if (materials.ContainsKey(name))
            return name;
        string? near = NameSuggestion.Closest(name, materials.Keys);
        string hint = near is not null
            ? $"; did you mean '{YamlNodeReader.Shown(near)}'?"
            : $"; the scene defines: {string.Join(", ", materials.Keys.Take(10).Select(YamlNodeReader.Shown))}{(materials.Count > 10 ? ", ..." : "")}";
        throw reader.Error(node, $"unknown material '{YamlNodeReader.Shown(name)}' in {s.What}{hint}");
    }

    private static double Largest(Vec3d p) => Math.Max(Math.Abs(p.X), Math.Max(Math.Abs(p.Y), Math.Abs(p.Z)));

    /// <summary>Refuses a length below the scene-scale range (<see cref="MinRelativeLength"/>) for a shape whose coordinates reach <paramref name="reach"/> in magnitude.</summary>
    private static void RequireScale(YamlNodeReader reader, YamlNode node, string what, double length, double reach, bool flat = false)
    {
        double floor = MinRelativeLength * (1 + reach);
        if (!(length >= floor))
        {
            throw reader.Error(node, string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"{what} is {length:G4}, below the scene-scale range: lengths must be at least 1e-6 · (1 + the largest coordinate magnitude, here {reach:G4}) = {floor:G4}"));
        }

        if (flat && length > MaxFlatLength)
        {
            throw reader.Error(node, string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"{what} is {length:G4}, above the scene-scale range: quads, disks and meshes must be at most 1e60 across"));
        }
    }

    /// <summary>A mesh's extent (the longest side of its bounding box) in the scene-scale range; a triangle smaller than that is allowed (a degenerate one is never hit).</summary>
    private static void RequireMeshScale(YamlNodeReader reader, YamlNode node, MappingView s, string file, Vec3d[] positions)
    {
        if (positions.Length == 0)
        {
            return;
        }

        Vec3d lo = positions[0], hi = positions[0];
        foreach (Vec3d p in positions)
        {
            lo = Vec3d.Min(lo, p);
            hi = Vec3d.Max(hi, p);
        }

        Vec3d extent = hi - lo;
        RequireScale(reader, node, $"the extent of '{YamlNodeReader.Shown(file)}' in {s.What}", Largest(extent), Math.Max(Largest(lo), Largest(hi)), flat: true);
    }

    private static double PositiveNumber(YamlNodeReader reader, MappingView s, string key)
    {
        YamlNode node = s.Required(key);
        double value = reader.Number(node, s.Of(key));
        if (!(value > 0))
            throw reader.Error(node, $"{s.Of(key)} must be > 0, got {YamlNodeReader.Text(node)}");
        return value;
    }

    private static Vec3d NonZeroVector(YamlNodeReader reader, MappingView s, string key)
    {
        YamlNode node = s.Required(key);
        Vec3d v = reader.Vector(node, s.Of(key));
        if (IsZero(v))
            throw reader.Error(node, $"{s.Of(key)} must not be the zero vector");
        return v;
    }

    private static string Hint(string value, IEnumerable<string> allowed)
    {
        string? near = NameSuggestion.Closest(value, allowed);
        return near is not null ? $"; did you mean '{near}'?" : $"; expected one of: {string.Join(", ", allowed)}";
    }

    private static bool IsZero(Vec3d v) => v.X == 0 && v.Y == 0 && v.Z == 0;

    /// <summary>Whether two non-zero vectors are parallel within <see cref="ParallelTolerance"/> (sine of their angle).</summary>
    internal static bool Parallel(Vec3d a, Vec3d b)
    {
        // Scaling by the largest component first keeps the products finite for any finite input.
        a /= Math.Max(Math.Abs(a.X), Math.Max(Math.Abs(a.Y), Math.Abs(a.Z)));
        b /= Math.Max(Math.Abs(b.X), Math.Max(Math.Abs(b.Y), Math.Abs(b.Z)));
        return Vec3d.Cross(a, b).Length <= ParallelTolerance * a.Length * b.Length;
    }

    private static string OneLine(string message) => message.ReplaceLineEndings(" ").Trim();

    /// <summary>The OBJ files of one scene, each read once however many shapes use it, with the scene-wide triangle budget.</summary>
    private sealed class MeshFiles(YamlNodeReader reader, string sourcePath, string baseDirectory)
    {
        private readonly Dictionary<string, ObjMesh> _read = new(StringComparer.Ordinal);
        private long _triangles;

        /// <summary>The full paths read so far, each once.</summary>
        public IReadOnlyList<string> Paths => [.. _read.Keys];

        public ObjMesh Get(string file, YamlNode fileNode)
        {
            string full;
            try
            {
                full = Path.GetFullPath(Path.Combine(baseDirectory, file));
            }
            catch (Exception e) when (e is ArgumentException or NotSupportedException or PathTooLongException)
            {
                throw reader.Error(fileNode, $"cannot read mesh file '{YamlNodeReader.Shown(file)}': {OneLine(e.Message)}");
            }

            if (!_read.TryGetValue(full, out ObjMesh? mesh))
            {
                // Messages name the OBJ relative to the scene file as the user gave it, so it can be opened from where they ran the command.
                string display = Path.Combine(Path.GetDirectoryName(sourcePath) ?? "", file);
                try
                {
                    // Strict UTF-8: a binary file is refused as "not UTF-8 text" without quoting any of it.
                    using FileStream stream = InputFile.OpenRead(full, reason => reader.Error(fileNode, $"cannot read mesh file '{YamlNodeReader.Shown(file)}': {OneLine(reason)}"));
                    using var text = new StreamReader(stream, new UTF8Encoding(false, throwOnInvalidBytes: true), detectEncodingFromByteOrderMarks: true);
                    mesh = ObjReader.Read(text, display, bytesBefore: _triangles * ObjReader.BytesPerTriangle);
                }
                catch (DecoderFallbackException)
                {
                    throw reader.Error(fileNode, $"cannot read mesh file '{YamlNodeReader.Shown(file)}': not UTF-8 text (an OBJ file is text)");
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException or ArgumentException or NotSupportedException)
                {
                    throw reader.Error(fileNode, $"cannot read mesh file '{YamlNodeReader.Shown(file)}': {OneLine(e.Message)}");
                }
                if (mesh.TriangleCount == 0)
                    throw reader.Error(fileNode, $"mesh file '{YamlNodeReader.Shown(file)}' has no faces");
                _read.Add(full, mesh);
            }

            _triangles += mesh.TriangleCount;
            if (_triangles > MaxTriangles)
            {
                throw reader.Error(fileNode, FormattableString.Invariant(
                    $"mesh file '{YamlNodeReader.Shown(file)}' brings the scene to {_triangles} triangles, above the limit of {MaxTriangles} (2^26)"));
            }

            // A mesh used again is not read again, but its triangles are built again.
            MemoryBudget.Current.Require(_triangles * ObjReader.BytesPerTriangle, FormattableString.Invariant(
                $"{reader.SourcePath}:{fileNode.Start.Line}:{fileNode.Start.Column}: building the scene's {_triangles} mesh triangles ({ObjReader.BytesPerTriangle} bytes a triangle)"));
            return mesh;
        }
    }
}
