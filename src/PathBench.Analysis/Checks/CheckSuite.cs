using System.Globalization;
using PathBench.Rendering.Scenes;
using YamlDotNet.RepresentationModel;

namespace PathBench.Analysis.Checks;

/// <summary>A check suite as its file states it, validated (format: <c>scenes/checks.md</c>).</summary>
/// <param name="SourcePath">The suite file, as named in messages.</param>
/// <param name="Reference">The suite's reference, for cases without their own; null when every case has one.</param>
/// <param name="Cases">The cases, names unique.</param>
public sealed record CheckSuite(string SourcePath, ReferenceSource? Reference, IReadOnlyList<CheckCase> Cases);

/// <summary>Where a case's replicate images come from.</summary>
public abstract record CaseSource;

/// <summary>Our renderer: one configuration on a scene.</summary>
/// <param name="ScenePath">The scene, resolved against the suite's folder.</param>
/// <param name="Configuration">Generator, randomization and strategies.</param>
/// <param name="Resolution">Render size overriding the scene's, or null.</param>
public sealed record RenderSource(string ScenePath, StudyConfiguration Configuration, (int Width, int Height)? Resolution) : CaseSource;

/// <summary>Images the user already has: per spp, the files (globs expanded, sorted by name).</summary>
/// <param name="Files">Per sample count, the replicate files.</param>
/// <param name="Location">Where the suite names them (<c>FILE:LINE:COLUMN</c>).</param>
public sealed record ImagesSource(IReadOnlyDictionary<int, IReadOnlyList<string>> Files, string Location) : CaseSource;

/// <summary>The user's renderer, run once per replicate and spp.</summary>
/// <param name="Template">The command line with placeholders <c>{seed}</c>, <c>{spp}</c>, <c>{out}</c>, <c>{replicate}</c>.</param>
/// <param name="Shell">Run through <c>/bin/sh -c</c> (placeholders substituted shell-quoted) instead of directly.</param>
/// <param name="OutputFormat"><c>pfm</c>, <c>exr</c> or <c>png</c>: the extension of <c>{out}</c>.</param>
/// <param name="TimeoutSeconds">Longest run before it is stopped and the case fails.</param>
/// <param name="WorkingDirectory">Where the command runs: the suite's folder.</param>
public sealed record CommandSource(string Template, bool Shell, string OutputFormat, int TimeoutSeconds, string WorkingDirectory) : CaseSource;

/// <summary>One case: a source of replicate images, its sample counts and seeds, and what must hold.</summary>
/// <param name="Name">Unique name (it names files and JUnit test cases).</param>
/// <param name="Source">Where the images come from.</param>
/// <param name="Spp">Sample counts, increasing.</param>
/// <param name="Seeds">One seed per replicate.</param>
/// <param name="Reference">The case's reference.</param>
/// <param name="Assertions">What must hold, in file order.</param>
/// <param name="Location">Where the case starts in the suite (<c>FILE:LINE:COLUMN</c>).</param>
public sealed record CheckCase(string Name, CaseSource Source, IReadOnlyList<int> Spp, IReadOnlyList<ulong> Seeds, ReferenceSource Reference, IReadOnlyList<Assertion> Assertions, string Location);

/// <summary>One assertion of a case.</summary>
/// <param name="Kind">Its key: <c>unbiased</c>, <c>mse_at_most</c>, <c>slope_at_most</c>, <c>structure_at_most</c>, <c>ssim_at_least</c>, <c>nonfinite_at_most</c>.</param>
/// <param name="Bound">The bound (for <c>unbiased</c>, unused; for <c>mse_at_most</c> with a baseline, the factor).</param>
/// <param name="Alpha">The false-alarm rate of the assertion's test.</param>
/// <param name="AgainstBaseline">For <c>mse_at_most</c>: the bound is the baseline's MSE times <see cref="Bound"/>.</param>
public sealed record Assertion(string Kind, double Bound, double Alpha, bool AgainstBaseline = false);

/// <summary>Reads check suites. Every problem is one line <c>FILE:LINE:COLUMN: message</c>.</summary>
public static class CheckSuiteFile
{
    /// <summary>The default false-alarm rate of a test assertion (common practice for CI gates: rare enough to trust a red build).</summary>
    public const double DefaultAlpha = 0.001;

    /// <summary>Default replicates of a render or command case.</summary>
    public const int DefaultReplicates = 8;

    /// <summary>Default per-run timeout of a command, in seconds.</summary>
    public const int DefaultTimeoutSeconds = 600;

    /// <summary>Most cases in one suite.</summary>
    public const int MaxCases = 256;

    /// <summary>Most files one <c>images</c> entry may match.</summary>
    public const int MaxImages = 4096;

    internal static readonly KeyTable Top = StudyFile.Table("suite", "reference", "cases!");
    internal static readonly KeyTable Case = StudyFile.Table("case", "name!", "render", "images", "command", "shell", "output_format", "timeout", "spp!", "replicates", "seeds", "reference", "assert!");
    internal static readonly KeyTable Render = StudyFile.Table("render", "scene!", "resolution", "generator!", "randomize", "hemisphere", "lights", "max_depth", "roulette");
    internal static readonly KeyTable Assert = StudyFile.Table("assert", "unbiased", "mse_at_most", "slope_at_most", "structure_at_most", "ssim_at_least", "nonfinite_at_most");
    internal static readonly KeyTable Test = StudyFile.Table("the test", "alpha");
    internal static readonly KeyTable BaselineBound = StudyFile.Table("the bound", "baseline!", "alpha");
    internal static readonly KeyTable ValueBound = StudyFile.Table("the bound", "value!", "alpha");

    /// <summary>Reads and validates the suite at <paramref name="path"/>.</summary>
    /// <exception cref="SceneException">The file cannot be read or is not a valid suite.</exception>
    public static CheckSuite Load(string path)
    {
        (string text, _) = SceneLoader.ReadTextFile(path, "a check suite");
        return Parse(text, path, Path.GetDirectoryName(Path.GetFullPath(path)) ?? ".");
    }

    /// <summary>Parses suite text; paths resolve against <paramref name="baseDirectory"/>.</summary>
    /// <exception cref="SceneException">The text is not a valid suite.</exception>
    public static CheckSuite Parse(string text, string sourcePath, string baseDirectory)
    {
        ArgumentNullException.ThrowIfNull(text);
        var reader = new YamlNodeReader(sourcePath);
        YamlNode root = SceneLoader.ReadDocument(text, reader);
        MappingView top = reader.Mapping(root, "the suite", "the top level").CheckKeys(Top);
        ReferenceSource? reference = top.TryGet("reference", out YamlNode r) ? StudyFile.ReadReference(reader, r, baseDirectory) : null;
        YamlNode casesNode = top.Required("cases");
        if (casesNode is not YamlSequenceNode cases || cases.Children.Count == 0 || cases.Children.Count > MaxCases)
        {
            throw reader.Error(casesNode, FormattableString.Invariant($"{top.Of("cases")} must be a list of 1 to {MaxCases} cases, got {YamlNodeReader.Describe(casesNode)}"));
        }

        var list = new List<CheckCase>();
        var names = new Dictionary<string, YamlNode>(StringComparer.Ordinal);
        for (int i = 0; i < cases.Children.Count; i++)
        {
            YamlNode node = cases.Children[i];
            string what = FormattableString.Invariant($"case {i + 1}");
            MappingView c = reader.Mapping(node, what, what).CheckKeys(Case);
            YamlNode nameNode = c.Required("name");
            string name = reader.Name(nameNode, c.Of("name"));
            if (!StudyFile.IsFileSafe(name))
            {
                throw reader.Error(nameNode, $"case name '{YamlNodeReader.Shown(name)}' may hold only letters, digits, '-', '_' and '.' (it names files)");
            }

            if (names.TryGetValue(name, out YamlNode? first))
            {
                throw reader.Error(nameNode, FormattableString.Invariant($"duplicate case name '{name}' (first used at line {first.Start.Line})"));
            }

            names[name] = nameNode;
            list.Add(ReadCase(reader, c, name, reference, baseDirectory, Where(reader, node)));
        }

        return new CheckSuite(sourcePath, reference, list);
    }

    private static CheckCase ReadCase(YamlNodeReader reader, MappingView c, string name, ReferenceSource? suiteReference, string baseDirectory, string location)
    {
        string[] kinds = [.. new[] { "render", "images", "command" }.Where(c.Has)];
        if (kinds.Length != 1)
        {
            throw reader.Error(c.Node, $"case '{name}' needs exactly one of 'render', 'images' or 'command', got {(kinds.Length == 0 ? "none" : string.Join(" and ", kinds))}");
        }

        foreach (string key in new[] { "shell", "output_format", "timeout" })
        {
            if (c.TryGet(key, out YamlNode stray) && kinds[0] != "command")
            {
                throw reader.Error(stray, $"'{key}' applies to 'command' cases only");
            }
        }

        List<int> spp = StudyFile.ReadLadder(reader, c.Required("spp"), c.Of("spp"));
        ReferenceSource? reference = c.TryGet("reference", out YamlNode refNode) ? StudyFile.ReadReference(reader, refNode, baseDirectory) : suiteReference;
        CaseSource source;
        int replicates;
        switch (kinds[0])
        {
            case "render":
                MappingView render = reader.Mapping(c.Required("render"), $"'render' in case '{name}'", c.Of("render")).CheckKeys(Render);
                string scene = Path.GetFullPath(Path.Combine(baseDirectory, reader.Name(render.Required("scene"), render.Of("scene"))));
                (int, int)? resolution = null;
                if (render.TryGet("resolution", out YamlNode res))
                {
                    YamlSequenceNode pair = reader.Sequence(res, render.Of("resolution"), 2, "[width, height]");
                    resolution = (reader.Integer(pair.Children[0], "the width in 'resolution'", 1, StudyFile.MaxEdge), reader.Integer(pair.Children[1], "the height in 'resolution'", 1, StudyFile.MaxEdge));
                }

                source = new RenderSource(scene, StudyFile.ReadConfiguration(reader, render, name, spp[^1]), resolution);
                replicates = ReadReplicates(reader, c);
                break;
            case "images":
                if (c.Has("replicates") || c.Has("seeds"))
                {
                    throw reader.Error(c.Node, $"case '{name}' reads images: its replicates are the files, so 'replicates' and 'seeds' do not apply");
                }

                source = ReadImages(reader, c.Required("images"), spp, baseDirectory, name);
                replicates = ((ImagesSource)source).Files.Values.Min(f => f.Count);
                break;
            default:
                YamlNode templateNode = c.Required("command");
                string template = reader.Name(templateNode, c.Of("command"));
                if (!template.Contains("{out}", StringComparison.Ordinal))
                {
                    throw reader.Error(templateNode, "the command must contain {out}, the path it writes its image to");
                }

                bool shell = c.TryGet("shell", out YamlNode sh) && reader.Boolean(sh, c.Of("shell"));
                string format = "pfm";
                if (c.TryGet("output_format", out YamlNode fmt))
                {
                    format = reader.Name(fmt, c.Of("output_format")) switch
                    {
                        "pfm" => "pfm",
                        "exr" => "exr",
                        "png" => "png",
                        string other => throw reader.Error(fmt, $"{c.Of("output_format")} must be pfm, exr or png, got '{YamlNodeReader.Shown(other)}'"),
                    };
                }

                int timeout = c.TryGet("timeout", out YamlNode t) ? reader.Integer(t, c.Of("timeout") + " (seconds)", 1, 7 * 24 * 3600) : DefaultTimeoutSeconds;
                CommandLine.Split(template, reader, templateNode); // a quoting mistake is an error now, not at run time
                source = new CommandSource(template, shell, format, timeout, baseDirectory);
                replicates = ReadReplicates(reader, c);
                break;
        }

        if (reference is null)
        {
            throw reader.Error(c.Node, $"case '{name}' has no reference: give 'reference' in the case or at the top of the suite");
        }

        if (reference.Spp is not null && source is not RenderSource)
        {
            throw reader.Error(c.Node, $"case '{name}' is not rendered by PathBench, so its reference must be an image: 'reference: {{ path: … }}'");
        }

        IReadOnlyList<ulong> seeds = ReadSeeds(reader, c, replicates);
        if (replicates < 2)
        {
            throw reader.Error(c.Node, FormattableString.Invariant($"case '{name}' has {replicates} replicate(s) at some spp: the statistics need at least 2"));
        }

        List<Assertion> assertions = ReadAssertions(reader, reader.Mapping(c.Required("assert"), $"'assert' in case '{name}'", c.Of("assert")).CheckKeys(Assert), spp.Count);
        return new CheckCase(name, source, spp, seeds, reference, assertions, location);
    }

    private static int ReadReplicates(YamlNodeReader reader, MappingView c) =>
        c.TryGet("replicates", out YamlNode n) ? reader.Integer(n, c.Of("replicates"), 2, StudyFile.MaxReplicates) : DefaultReplicates;

    private static IReadOnlyList<ulong> ReadSeeds(YamlNodeReader reader, MappingView c, int replicates)
    {
        if (!c.TryGet("seeds", out YamlNode node))
        {
            return [.. Enumerable.Range(1, replicates).Select(i => (ulong)i)];
        }

        if (node is not YamlSequenceNode list || list.Children.Count != replicates)
        {
            throw reader.Error(node, FormattableString.Invariant($"{c.Of("seeds")} must list {replicates} seeds, one per replicate, got {YamlNodeReader.Describe(node)}"));
        }

        var seeds = new List<ulong>();
        foreach (YamlNode item in list.Children)
        {
            ulong seed = (ulong)reader.Integer(item, "a seed in " + c.Of("seeds"), 0, int.MaxValue);
            if (seeds.Contains(seed))
            {
                throw reader.Error(item, FormattableString.Invariant($"seed {seed} is listed twice: replicates must be independent"));
            }

            seeds.Add(seed);
        }

        return seeds;
    }

    private static ImagesSource ReadImages(YamlNodeReader reader, YamlNode node, IReadOnlyList<int> spp, string baseDirectory, string name)
    {
        var files = new Dictionary<int, IReadOnlyList<string>>();
        if (node is YamlSequenceNode || node is YamlScalarNode)
        {
            if (spp.Count != 1)
            {
                throw reader.Error(node, "with several sample counts, 'images' must map each spp to its files, e.g. { 4: [\"a/*.exr\"], 16: [\"b/*.exr\"] }");
            }

            files[spp[0]] = Expand(reader, node, baseDirectory);
        }
        else if (node is YamlMappingNode map)
        {
            foreach (KeyValuePair<YamlNode, YamlNode> kv in map.Children)
            {
                int n = reader.Integer(kv.Key, "a sample count in 'images'", 1, SceneLoader.MaxSpp);
                if (!spp.Contains(n))
                {
                    throw reader.Error(kv.Key, FormattableString.Invariant($"'images' lists {n} spp, which 'spp' does not"));
                }

                files[n] = Expand(reader, kv.Value, baseDirectory);
            }

            foreach (int n in spp.Where(n => !files.ContainsKey(n)))
            {
                throw reader.Error(node, FormattableString.Invariant($"'images' has no files for {n} spp"));
            }
        }
        else
        {
            throw reader.Error(node, $"'images' in case '{name}' must be a list of files or globs, or a mapping of spp to them");
        }

        return new ImagesSource(files, Where(reader, node));
    }

    /// <summary>Files named by a list of paths or globs (<c>*</c> and <c>?</c> in the file name), each matching at least one file.</summary>
    private static List<string> Expand(YamlNodeReader reader, YamlNode node, string baseDirectory)
    {
        IEnumerable<YamlNode> items = node is YamlSequenceNode seq ? seq.Children : [node];
        var files = new List<string>();
        foreach (YamlNode item in items)
        {
            string pattern = reader.Name(item, "a file or glob in 'images'");
            string full = Path.GetFullPath(Path.Combine(baseDirectory, pattern));
            string folder = Path.GetDirectoryName(full) ?? ".";
            string leaf = Path.GetFileName(full);
            if (folder.IndexOfAny(['*', '?']) >= 0)
            {
                throw reader.Error(item, $"'{YamlNodeReader.Shown(pattern)}': wildcards are allowed in the file name only, not in folders");
            }

            string[] matched = leaf.IndexOfAny(['*', '?']) >= 0 && Directory.Exists(folder)
                ? [.. Directory.GetFiles(folder, leaf).Order(StringComparer.Ordinal)]
                : File.Exists(full) ? [full] : [];
            if (matched.Length == 0)
            {
                throw reader.Error(item, $"'{YamlNodeReader.Shown(pattern)}' matches no file (relative to {baseDirectory})");
            }

            files.AddRange(matched);
            if (files.Count > MaxImages)
            {
                throw reader.Error(item, FormattableString.Invariant($"'images' matches more than {MaxImages} files"));
            }
        }

        return files;
    }

    private static List<Assertion> ReadAssertions(YamlNodeReader reader, MappingView a, int ladder)
    {
        var list = new List<Assertion>();
        foreach ((string key, YamlScalarNode keyNode, YamlNode value) in a.Entries)
        {
            switch (key)
            {
                case "unbiased":
                    double alpha = DefaultAlpha;
                    if (!(value is YamlScalarNode s && YamlNodeReader.IsNull(s)))
                    {
                        MappingView test = reader.Mapping(value, "'unbiased'", "'unbiased'").CheckKeys(Test);
                        alpha = test.TryGet("alpha", out YamlNode al) ? Alpha(reader, al) : DefaultAlpha;
                    }

                    list.Add(new Assertion(key, 0, alpha));
                    break;
                case "mse_at_most":
                    if (value is YamlMappingNode)
                    {
                        MappingView m = reader.Mapping(value, "'mse_at_most'", "'mse_at_most'");
                        bool baseline = m.Has("baseline");
                        m.CheckKeys(baseline ? BaselineBound : ValueBound);
                        double bound = Positive(reader, m.Required(baseline ? "baseline" : "value"), baseline ? "the factor 'baseline' in 'mse_at_most'" : "'value' in 'mse_at_most'");
                        list.Add(new Assertion(key, bound, m.TryGet("alpha", out YamlNode ma) ? Alpha(reader, ma) : DefaultAlpha, baseline));
                    }
                    else
                    {
                        list.Add(new Assertion(key, Positive(reader, value, "'mse_at_most'"), DefaultAlpha));
                    }

                    break;
                case "slope_at_most":
                    if (ladder < 2)
                    {
                        throw reader.Error(keyNode, "'slope_at_most' needs at least two sample counts in 'spp'");
                    }

                    list.Add(new Assertion(key, reader.Number(value, "'slope_at_most'"), DefaultAlpha));
                    break;
                case "structure_at_most":
                    list.Add(new Assertion(key, Positive(reader, value, "'structure_at_most'"), DefaultAlpha));
                    break;
                case "ssim_at_least":
                    double ssim = reader.Number(value, "'ssim_at_least'");
                    if (ssim is < -1 or > 1)
                    {
                        throw reader.Error(value, string.Create(CultureInfo.InvariantCulture, $"'ssim_at_least' must be between -1 and 1, got {ssim}"));
                    }

                    list.Add(new Assertion(key, ssim, DefaultAlpha));
                    break;
                default: // nonfinite_at_most
                    list.Add(new Assertion(key, reader.Integer(value, "'nonfinite_at_most'", 0, int.MaxValue), DefaultAlpha));
                    break;
            }
        }

        if (list.Count == 0)
        {
            throw reader.Error(a.Node, "'assert' lists no assertion");
        }

        return list;
    }

    private static double Alpha(YamlNodeReader reader, YamlNode node)
    {
        double alpha = reader.Number(node, "'alpha'");
        return alpha is > 0 and < 0.5 ? alpha : throw reader.Error(node, string.Create(CultureInfo.InvariantCulture, $"'alpha' must be between 0 and 0.5 (a false-alarm rate), got {alpha}"));
    }

    private static double Positive(YamlNodeReader reader, YamlNode node, string what)
    {
        double v = reader.Number(node, what);
        return v > 0 ? v : throw reader.Error(node, string.Create(CultureInfo.InvariantCulture, $"{what} must be above 0, got {v}"));
    }

    private static string Where(YamlNodeReader reader, YamlNode node) =>
        FormattableString.Invariant($"{reader.SourcePath}:{node.Start.Line}:{node.Start.Column}");
}
