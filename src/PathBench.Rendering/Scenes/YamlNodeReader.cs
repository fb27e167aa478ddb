using System.Globalization;
using System.Text;
using PathBench.Io;
using PathBench.Sampling.Warps;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;

namespace PathBench.Rendering.Scenes;

/// <summary>
/// Typed reads of YAML nodes for one scene file. Every failure becomes a <see cref="SceneException"/>
/// whose message starts with <c>FILE:LINE:COLUMN:</c>, the 1-based position YamlDotNet's
/// <see cref="Mark"/> gives for the start of the offending node (used as is, no offset).
/// </summary>
internal sealed class YamlNodeReader(string sourcePath)
{
    public string SourcePath { get; } = sourcePath;

    public SceneException Error(YamlNode node, string message) => Error(node.Start, message);

    public SceneException Error(Mark mark, string message) => Error(mark.Line, mark.Column, message);

    public SceneException Error(long line, long column, string message) =>
        new(FormattableString.Invariant($"{SourcePath}:{line}:{column}: {message}"));

    /// <summary>Opens a mapping; its keys are checked against a table with <see cref="MappingView.CheckKeys"/>.</summary>
    public MappingView Mapping(YamlNode node, string what, string valueName)
    {
        if (node is not YamlMappingNode map)
            throw Error(node, $"{valueName} must be a mapping, got {Describe(node)}");
        return new MappingView(this, map, what);
    }

    public double Number(YamlNode node, string what)
    {
        string text = PlainScalar(node, what, "a number");
        if (!double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double value))
        {
            // YAML's own spellings of the non-finite values get the more useful of the two messages.
            if (IsYamlNonFinite(text))
                throw Error(node, $"{what} must be a finite number, got '{Shown(text)}'");
            throw Error(node, $"{what} must be a number, got '{Shown(text)}'");
        }
        // NaN, Infinity and overflowing literals such as 1e999 (which parse to infinity) end here.
        if (!double.IsFinite(value))
            throw Error(node, $"{what} must be a finite number, got '{Shown(text)}'");
        // Squares of lengths (sphere radii, distances) must stay finite in double.
        if (Math.Abs(value) > MaxMagnitude)
            throw Error(node, $"{what} must be at most 1e100 in magnitude, got '{Shown(text)}'");
        return value;
    }

    /// <summary>The largest magnitude any number in a scene may have: its square and products of two stay far from overflow.</summary>
    public const double MaxMagnitude = 1e100;

    /// <summary>A whole number written as digits (64, not 64.0 or 6.4e1), within [min, max].</summary>
    public int Integer(YamlNode node, string what, long min, long max)
    {
        string text = PlainScalar(node, what, "a whole number");
        ReadOnlySpan<char> body = text.AsSpan(text.Length > 0 && text[0] is '+' or '-' ? 1 : 0);
        if (body.IsEmpty || body.ContainsAnyExcept("0123456789"))
            throw Error(node, $"{what} must be a whole number, got '{Shown(text)}'");
        if (!long.TryParse(text, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out long value) || value < min || value > max)
            throw Error(node, FormattableString.Invariant($"{what} must be between {min} and {max}, got {Shown(text)}"));
        return (int)value;
    }

    public bool Boolean(YamlNode node, string what)
    {
        string text = PlainScalar(node, what, "true or false");
        // The YAML 1.2 core schema's spellings; yes/no/on/off are YAML 1.1 and deliberately not booleans here.
        return text switch
        {
            "true" or "True" or "TRUE" => true,
            "false" or "False" or "FALSE" => false,
            _ => throw Error(node, $"{what} must be true or false, got '{Shown(text)}'"),
        };
    }

    /// <summary>A name or path: any non-empty scalar, plain or quoted.</summary>
    public string Name(YamlNode node, string what)
    {
        if (node is not YamlScalarNode scalar || IsNull(scalar) || string.IsNullOrEmpty(scalar.Value))
            throw Error(node, $"{what} must be a name, got {Describe(node)}");
        return scalar.Value;
    }

    public YamlSequenceNode Sequence(YamlNode node, string what, int count, string form)
    {
        if (node is not YamlSequenceNode seq || seq.Children.Count != count)
            throw Error(node, $"{what} must be {form}, got {Describe(node)}");
        return seq;
    }

    public Vec3d Vector(YamlNode node, string what)
    {
        YamlSequenceNode seq = Sequence(node, what, 3, "a 3-vector [x, y, z]");
        return new Vec3d(
            Number(seq.Children[0], $"component 1 of {what}"),
            Number(seq.Children[1], $"component 2 of {what}"),
            Number(seq.Children[2], $"component 3 of {what}"));
    }

    /// <summary>An RGB triple with every component in [0, <paramref name="max"/>]; max is +∞ for radiance.</summary>
    public Rgb Colour(YamlNode node, string what, double max, string whyMax)
    {
        YamlSequenceNode seq = Sequence(node, what, 3, "an RGB triple [r, g, b]");
        var c = new double[3];
        for (int i = 0; i < 3; i++)
        {
            YamlNode item = seq.Children[i];
            string itemWhat = FormattableString.Invariant($"component {i + 1} of {what}");
            c[i] = Number(item, itemWhat);
            if (double.IsPositiveInfinity(max))
            {
                if (c[i] < 0)
                    throw Error(item, $"{itemWhat} must be >= 0, got {Text(item)}");
            }
            else if (c[i] < 0 || c[i] > max)
            {
                throw Error(item, FormattableString.Invariant($"{itemWhat} must be in [0, {max}], got {Text(item)}{whyMax}"));
            }
        }
        return new Rgb(c[0], c[1], c[2]);
    }

    /// <summary>The scalar's text as written, for quoting back in a message.</summary>
    public static string Text(YamlNode node) => node is YamlScalarNode s ? Shown(s.Value ?? "") : Describe(node);

    /// <summary>What a node is, in words, for "got …" in messages.</summary>
    public static string Describe(YamlNode node) => node switch
    {
        YamlMappingNode => "a mapping",
        YamlSequenceNode seq => seq.Children.Count == 1 ? "a sequence of 1 item" : FormattableString.Invariant($"a sequence of {seq.Children.Count} items"),
        YamlScalarNode s when IsNull(s) => "nothing (null)",
        YamlScalarNode s when s.Style is ScalarStyle.Plain => $"'{Shown(s.Value ?? "")}'",
        YamlScalarNode s => $"the quoted string '{Shown(s.Value ?? "")}'",
        _ => "an unexpected node",
    };

    /// <summary>YAML's null: an empty plain scalar, <c>~</c> or <c>null</c> (core-schema spellings).</summary>
    public static bool IsNull(YamlScalarNode s) =>
        s.Style is ScalarStyle.Plain && s.Value is "" or "~" or "null" or "Null" or "NULL" or null;

    /// <summary>Quotes user text on one line as <see cref="TextExcerpt"/> allows: printable ASCII, at most 32 characters, nothing of binary content.</summary>
    public static string Shown(string text) => TextExcerpt.Of(text);

    private string PlainScalar(YamlNode node, string what, string expected)
    {
        // A quoted "5" is a string in YAML; accepting it as a number would hide a scene written by a buggy script.
        if (node is not YamlScalarNode s || s.Style is not ScalarStyle.Plain || IsNull(s))
            throw Error(node, $"{what} must be {expected}, got {Describe(node)}");
        return s.Value!;
    }

    private static bool IsYamlNonFinite(string text)
    {
        string t = text.TrimStart('+', '-');
        return t is ".nan" or ".NaN" or ".NAN" or ".inf" or ".Inf" or ".INF";
    }
}

/// <summary>A YAML mapping with string keys, indexed once, with its keys checked against a <see cref="KeyTable"/>.</summary>
internal sealed class MappingView
{
    private readonly YamlNodeReader _reader;
    private readonly List<(string Key, YamlScalarNode KeyNode, YamlNode Value)> _entries = [];

    public MappingView(YamlNodeReader reader, YamlMappingNode node, string what)
    {
        _reader = reader;
        Node = node;
        What = what;
        foreach (KeyValuePair<YamlNode, YamlNode> kv in node.Children)
        {
            if (kv.Key is not YamlScalarNode key || YamlNodeReader.IsNull(key) || string.IsNullOrEmpty(key.Value))
                throw reader.Error(kv.Key, $"keys in {what} must be names, got {YamlNodeReader.Describe(kv.Key)}");
            _entries.Add((key.Value, key, kv.Value));
        }
    }

    public YamlMappingNode Node { get; }

    /// <summary>How messages name this mapping: "camera", "material 'wall'", "shape 2 (quad)".</summary>
    public string What { get; }

    public IEnumerable<(string Key, YamlScalarNode KeyNode, YamlNode Value)> Entries => _entries;

    /// <summary>Rejects keys the table does not list (first in file order), then reports the first missing required key.</summary>
    public MappingView CheckKeys(KeyTable table)
    {
        foreach ((string key, YamlScalarNode keyNode, _) in _entries)
        {
            if (table.Keys.Contains(key, StringComparer.Ordinal))
                continue;
            string? near = NameSuggestion.Closest(key, table.Keys);
            string hint = near is null ? $"; expected one of: {string.Join(", ", table.Keys)}" : $"; did you mean '{near}'?";
            // Only a name-like key is quoted: a file that is not YAML of ours at all (a password
            // file given by mistake) parses as one odd key, which must not be printed.
            bool nameLike = key.Length <= 40 && key.All(c => char.IsAsciiLetterOrDigit(c) || c is '_' or '-' or '.');
            throw _reader.Error(keyNode, nameLike
                ? $"unknown key '{key}' in {What}{hint}"
                : $"unknown key in {What} (not shown: not a key name; is this the right file?){hint}");
        }
        foreach (string key in table.Required)
        {
            if (!Has(key))
                throw _reader.Error(Node, $"{What} is missing required key '{key}'");
        }
        return this;
    }

    public bool Has(string key) => _entries.Exists(e => e.Key == key);

    public bool TryGet(string key, out YamlNode value)
    {
        foreach ((string k, _, YamlNode v) in _entries)
        {
            if (k == key)
            {
                value = v;
                return true;
            }
        }
        value = null!;
        return false;
    }

    public YamlNode Required(string key) =>
        TryGet(key, out YamlNode value) ? value : throw _reader.Error(Node, $"{What} is missing required key '{key}'");

    /// <summary>"'fov' in camera": how a message names one value of this mapping.</summary>
    public string Of(string key) => $"'{key}' in {What}";
}

/// <summary>"Did you mean": the closest candidate by optimal-string-alignment edit distance, if it is close.</summary>
internal static class NameSuggestion
{
    /// <summary>
    /// The candidate nearest to <paramref name="name"/>, when at most 2 edits away and fewer edits than
    /// half its length (so "ab" does not suggest "up"); ties go to the earlier candidate. Common practice.
    /// </summary>
    public static string? Closest(string name, IEnumerable<string> candidates)
    {
        string? best = null;
        int bestDistance = int.MaxValue;
        foreach (string c in candidates)
        {
            int d = Distance(name, c);
            if (d < bestDistance)
            {
                best = c;
                bestDistance = d;
            }
        }
        return best is not null && bestDistance <= 2 && 2 * bestDistance < best.Length ? best : null;
    }

    /// <summary>Levenshtein distance with adjacent transpositions counted as one edit.</summary>
    public static int Distance(string a, string b)
    {
        // Names in scene files are short; a long key is cut so a pathological one cannot cost O(n²) memory.
        if (a.Length > 64)
            a = a[..64];
        if (b.Length > 64)
            b = b[..64];
        var d = new int[a.Length + 1, b.Length + 1];
        for (int i = 0; i <= a.Length; i++)
            d[i, 0] = i;
        for (int j = 0; j <= b.Length; j++)
            d[0, j] = j;
        for (int i = 1; i <= a.Length; i++)
        {
            for (int j = 1; j <= b.Length; j++)
            {
                int cost = a[i - 1] == b[j - 1] ? 0 : 1;
                int v = Math.Min(Math.Min(d[i - 1, j] + 1, d[i, j - 1] + 1), d[i - 1, j - 1] + cost);
                if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1])
                    v = Math.Min(v, d[i - 2, j - 2] + 1);
                d[i, j] = v;
            }
        }
        return d[a.Length, b.Length];
    }
}
