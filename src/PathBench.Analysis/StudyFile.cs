using PathBench.Rendering.Integrators;
using PathBench.Rendering.Materials;
using PathBench.Rendering.Scenes;
using PathBench.Sampling.Generators;
using YamlDotNet.RepresentationModel;

namespace PathBench.Analysis;

/// <summary>
/// Reads a study file (YAML, our schema, documented in <c>scenes/studies.md</c>).
/// Every problem is a <see cref="SceneException"/> with one line <c>FILE:LINE:COLUMN: message</c>,
/// the position of the offending node, as for scene files (the same reader and limits).
/// </summary>
public static class StudyFile
{
    /// <summary>Most replicates per configuration and spp: far beyond what an interval needs.</summary>
    public const int MaxReplicates = 1024;

    /// <summary>Most rungs of the spp ladder.</summary>
    public const int MaxLadder = 32;

    /// <summary>Longest image edge a study may ask for with 'resolution'.</summary>
    public const int MaxEdge = 8192;

    /// <summary>Most configurations in one study.</summary>
    public const int MaxConfigurations = 64;

    internal static readonly KeyTable Top = Table("study", "scene!", "resolution", "reference!", "spp!", "replicates!", "seed", "threads", "configurations!");
    internal static readonly KeyTable Reference = Table("reference", "spp", "path", "generator", "randomize");
    internal static readonly KeyTable Configuration = Table("configuration", "name!", "generator!", "randomize", "hemisphere", "lights", "max_depth", "roulette");

    /// <summary>Reads and validates the study file at <paramref name="path"/>; the scene path is resolved against its folder.</summary>
    /// <exception cref="SceneException">The file cannot be read or is not a valid study.</exception>
    public static StudyDefinition Load(string path)
    {
        (string text, _) = SceneLoader.ReadTextFile(path, "a study file");
        return Parse(text, path, Path.GetDirectoryName(Path.GetFullPath(path)) ?? ".");
    }

    /// <summary>Parses study text; <paramref name="sourcePath"/> names the file in messages, paths resolve against <paramref name="baseDirectory"/>.</summary>
    /// <exception cref="SceneException">The text is not a valid study.</exception>
    public static StudyDefinition Parse(string text, string sourcePath, string baseDirectory)
    {
        ArgumentNullException.ThrowIfNull(text);
        var reader = new YamlNodeReader(sourcePath);
        YamlNode root = SceneLoader.ReadDocument(text, reader);
        MappingView top = reader.Mapping(root, "the study", "the top level").CheckKeys(Top);

        string scene = Path.GetFullPath(Path.Combine(baseDirectory, reader.Name(top.Required("scene"), top.Of("scene"))));
        ReferenceSource reference = ReadReference(reader, top.Required("reference"), baseDirectory);

        List<int> spp = ReadLadder(reader, top.Required("spp"), top.Of("spp"));

        (int Width, int Height)? resolution = null;
        if (top.TryGet("resolution", out YamlNode resNode))
        {
            YamlSequenceNode pair = reader.Sequence(resNode, top.Of("resolution"), 2, "[width, height]");
            resolution = (reader.Integer(pair.Children[0], "the width in 'resolution'", 1, MaxEdge), reader.Integer(pair.Children[1], "the height in 'resolution'", 1, MaxEdge));
        }

        int replicates = reader.Integer(top.Required("replicates"), top.Of("replicates"), 2, MaxReplicates);
        int? threads = top.TryGet("threads", out YamlNode threadsNode) ? reader.Integer(threadsNode, top.Of("threads"), 1, 1024) : null;
        ulong seed = top.TryGet("seed", out YamlNode seedNode) ? (ulong)reader.Integer(seedNode, top.Of("seed"), 0, int.MaxValue) : 0;

        YamlNode configsNode = top.Required("configurations");
        if (configsNode is not YamlSequenceNode configs || configs.Children.Count == 0 || configs.Children.Count > MaxConfigurations)
        {
            throw reader.Error(configsNode, FormattableString.Invariant($"{top.Of("configurations")} must be a list of 1 to {MaxConfigurations} configurations, got {YamlNodeReader.Describe(configsNode)}"));
        }

        var list = new List<StudyConfiguration>();
        var names = new Dictionary<string, YamlNode>(StringComparer.Ordinal);
        for (int i = 0; i < configs.Children.Count; i++)
        {
            YamlNode node = configs.Children[i];
            MappingView c = reader.Mapping(node, FormattableString.Invariant($"configuration {i + 1}"), FormattableString.Invariant($"configuration {i + 1}")).CheckKeys(Configuration);
            YamlNode nameNode = c.Required("name");
            string name = reader.Name(nameNode, c.Of("name"));
            if (!IsFileSafe(name))
            {
                throw reader.Error(nameNode, $"configuration name '{YamlNodeReader.Shown(name)}' may hold only letters, digits, '-', '_' and '.' (it names output files)");
            }

            if (names.TryGetValue(name, out YamlNode? first))
            {
                throw reader.Error(nameNode, FormattableString.Invariant($"duplicate configuration name '{name}' (first used at line {first.Start.Line})"));
            }

            names[name] = nameNode;
            list.Add(ReadConfiguration(reader, c, name, spp[^1]));
        }

        return new StudyDefinition(sourcePath, scene, reference, spp, replicates, seed, list) { Resolution = resolution, Threads = threads };
    }

    /// <summary>A sample count or a list of 1 to <see cref="MaxLadder"/> increasing ones.</summary>
    internal static List<int> ReadLadder(YamlNodeReader reader, YamlNode node, string what)
    {
        if (node is YamlScalarNode)
        {
            return [reader.Integer(node, what, 1, SceneLoader.MaxSpp)];
        }

        if (node is not YamlSequenceNode ladder || ladder.Children.Count == 0 || ladder.Children.Count > MaxLadder)
        {
            throw reader.Error(node, FormattableString.Invariant($"{what} must be a sample count or a list of 1 to {MaxLadder} of them, got {YamlNodeReader.Describe(node)}"));
        }

        var spp = new List<int>();
        foreach (YamlNode item in ladder.Children)
        {
            int n = reader.Integer(item, "a sample count in " + what, 1, SceneLoader.MaxSpp);
            if (spp.Count > 0 && n <= spp[^1])
            {
                throw reader.Error(item, FormattableString.Invariant($"the sample counts in {what} must increase, got {n} after {spp[^1]}"));
            }

            spp.Add(n);
        }

        return spp;
    }

    internal static ReferenceSource ReadReference(YamlNodeReader reader, YamlNode node, string baseDirectory)
    {
        MappingView r = reader.Mapping(node, "reference", "'reference'").CheckKeys(Reference);
        bool hasSpp = r.TryGet("spp", out YamlNode sppNode);
        bool hasPath = r.TryGet("path", out YamlNode pathNode);
        if (hasSpp == hasPath)
        {
            throw reader.Error(node, "reference needs exactly one of 'spp' (render it) or 'path' (read it)");
        }

        if (hasPath)
        {
            if (r.Has("generator") || r.Has("randomize"))
            {
                throw reader.Error(node, "reference with 'path' is read, not rendered: 'generator' and 'randomize' do not apply");
            }

            string where = FormattableString.Invariant($"{reader.SourcePath}:{pathNode.Start.Line}:{pathNode.Start.Column}");
            return new ReferenceSource(null, Path.GetFullPath(Path.Combine(baseDirectory, reader.Name(pathNode, r.Of("path"))))) { Location = where };
        }

        int spp = reader.Integer(sppNode, r.Of("spp"), 1, SceneLoader.MaxSpp);
        YamlNode? generatorNode = r.TryGet("generator", out YamlNode g) ? g : null;
        string generator = generatorNode is null ? "sobol" : ResolvePointFile(reader, reader.Name(generatorNode, r.Of("generator")));
        YamlNode? randomizeNode = r.TryGet("randomize", out YamlNode rn) ? rn : null;
        (Randomization kind, bool anti) = ReadSampler(reader, generatorNode ?? node, generator, randomizeNode);
        CheckPoints(reader, generatorNode ?? node, generator, spp);
        if (!SamplerCatalog.Find(generator).IsRandomized(kind))
        {
            throw reader.Error(randomizeNode ?? node, $"the reference must be an unbiased estimate: {generator} needs a randomization");
        }

        return new ReferenceSource(spp, null, generator, new SamplerSpec(generator, kind, anti, 1, 0).RandomizeName);
    }

    internal static StudyConfiguration ReadConfiguration(YamlNodeReader reader, MappingView c, string name, int maxSpp)
    {
        YamlNode generatorNode = c.Required("generator");
        string generator = ResolvePointFile(reader, reader.Name(generatorNode, c.Of("generator")));
        (Randomization kind, bool anti) = ReadSampler(reader, generatorNode, generator, c.TryGet("randomize", out YamlNode rn) ? rn : null);
        CheckPoints(reader, generatorNode, generator, maxSpp);

        HemisphereStrategy hemisphere = HemisphereStrategy.Cosine;
        if (c.TryGet("hemisphere", out YamlNode h))
        {
            hemisphere = reader.Name(h, c.Of("hemisphere")) switch
            {
                "uniform" => HemisphereStrategy.Uniform,
                "cosine" => HemisphereStrategy.Cosine,
                string other => throw reader.Error(h, $"{c.Of("hemisphere")} must be uniform or cosine, got '{YamlNodeReader.Shown(other)}'"),
            };
        }

        LightStrategy lights = LightStrategy.Mis;
        if (c.TryGet("lights", out YamlNode l))
        {
            lights = reader.Name(l, c.Of("lights")) switch
            {
                "bsdf" => LightStrategy.Bsdf,
                "nee" => LightStrategy.Nee,
                "mis" => LightStrategy.Mis,
                string other => throw reader.Error(l, $"{c.Of("lights")} must be bsdf, nee or mis, got '{YamlNodeReader.Shown(other)}'"),
            };
        }

        int? depth = c.TryGet("max_depth", out YamlNode d) ? reader.Integer(d, c.Of("max_depth"), 1, SceneLoader.MaxDepth) : null;
        bool roulette = !c.TryGet("roulette", out YamlNode ro) || reader.Boolean(ro, c.Of("roulette"));
        return new StudyConfiguration(name, generator, kind, anti, hemisphere, lights, depth, roulette);
    }

    /// <summary><c>file:PATH</c> with a relative path is relative to the study or suite file, as every path in it.</summary>
    private static string ResolvePointFile(YamlNodeReader reader, string generator)
    {
        if (!generator.StartsWith(SamplerCatalog.FilePrefix, StringComparison.Ordinal))
        {
            return generator;
        }

        string path = generator[SamplerCatalog.FilePrefix.Length..];
        string folder = Path.GetDirectoryName(Path.GetFullPath(reader.SourcePath)) ?? ".";
        return path.Length == 0 || Path.IsPathRooted(path) ? generator : SamplerCatalog.FilePrefix + Path.GetFullPath(Path.Combine(folder, path));
    }

    /// <summary>A generator kept in finite tables (pmj02 and its family) cannot reach every spp.</summary>
    private static void CheckPoints(YamlNodeReader reader, YamlNode generatorNode, string generator, int spp)
    {
        int max = SamplerCatalog.Find(generator).MaxPoints;
        if (spp > max)
        {
            throw reader.Error(generatorNode, FormattableString.Invariant($"'{generator}' defines at most {max} points per pixel, the study asks for {spp} spp"));
        }
    }

    /// <summary>The generator and randomization, checked by the catalog (its message, at the node it concerns).</summary>
    private static (Randomization Kind, bool Antithetic) ReadSampler(YamlNodeReader reader, YamlNode generatorNode, string generator, YamlNode? randomizeNode)
    {
        GeneratorInfo info;
        try
        {
            info = SamplerCatalog.Find(generator);
        }
        catch (SamplerSpecException e)
        {
            throw reader.Error(generatorNode, e.Message);
        }

        if (randomizeNode is null)
        {
            return (info.DefaultRandomization, false);
        }

        string text = reader.Name(randomizeNode, "'randomize'");
        try
        {
            (Randomization kind, bool anti) = SamplerCatalog.ParseRandomization(text);
            SamplerCatalog.Create(new SamplerSpec(generator, kind, anti, 1, 0), 1); // the catalog's compatibility rules
            return (kind, anti);
        }
        catch (SamplerSpecException e)
        {
            throw reader.Error(randomizeNode, e.Message);
        }
    }

    internal static bool IsFileSafe(string name) =>
        name.Length <= 64 && name.All(ch => char.IsAsciiLetterOrDigit(ch) || ch is '-' or '_' or '.') && name[0] != '.';

    internal static KeyTable Table(string name, params string[] keys) =>
        new(name, [.. keys.Select(k => k.TrimEnd('!'))], [.. keys.Where(k => k.EndsWith('!')).Select(k => k.TrimEnd('!'))]);
}
