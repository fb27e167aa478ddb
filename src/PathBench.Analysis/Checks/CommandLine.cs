using System.Text;
using PathBench.Rendering.Scenes;
using YamlDotNet.RepresentationModel;

namespace PathBench.Analysis.Checks;

/// <summary>
/// A command template of a check case: words separated by spaces, a word may be quoted with '…'
/// (taken literally) or "…" (backslash escapes \" and \\); no shell is involved unless the case
/// asks for one. Placeholders <c>{seed}</c>, <c>{spp}</c>, <c>{out}</c> and <c>{replicate}</c>
/// are replaced inside words after splitting, so a path with spaces stays one argument.
/// </summary>
public static class CommandLine
{
    /// <summary>The placeholders a template may use.</summary>
    public static readonly IReadOnlyList<string> Placeholders = ["{seed}", "{spp}", "{out}", "{replicate}"];

    /// <summary>Splits a template into words.</summary>
    /// <exception cref="SceneException">An unclosed quote or an empty template, at <paramref name="node"/>.</exception>
    internal static List<string> Split(string template, YamlNodeReader reader, YamlNode node)
    {
        List<string>? words = TrySplit(template, out string? error);
        return words ?? throw reader.Error(node, $"the command {error}");
    }

    /// <summary>Splits a template into words; null with the reason in <paramref name="error"/>.</summary>
    public static List<string>? TrySplit(string template, out string? error)
    {
        ArgumentNullException.ThrowIfNull(template);
        var words = new List<string>();
        var word = new StringBuilder();
        bool inWord = false;
        for (int i = 0; i < template.Length; i++)
        {
            char ch = template[i];
            if (char.IsWhiteSpace(ch))
            {
                if (inWord)
                {
                    words.Add(word.ToString());
                    word.Clear();
                    inWord = false;
                }

                continue;
            }

            inWord = true;
            if (ch is '\'' or '"')
            {
                int close = i + 1;
                while (close < template.Length && template[close] != ch)
                {
                    if (ch == '"' && template[close] == '\\' && close + 1 < template.Length && template[close + 1] is '"' or '\\')
                    {
                        close++;
                    }

                    word.Append(template[close]);
                    close++;
                }

                if (close >= template.Length)
                {
                    error = FormattableString.Invariant($"has an unclosed {ch} quote starting at character {i + 1}");
                    return null;
                }

                i = close;
                continue;
            }

            word.Append(ch);
        }

        if (inWord)
        {
            words.Add(word.ToString());
        }

        if (words.Count == 0)
        {
            error = "is empty";
            return null;
        }

        error = null;
        return words;
    }

    /// <summary>The words of <paramref name="template"/> with the placeholders replaced.</summary>
    public static List<string> Expand(string template, IReadOnlyDictionary<string, string> values)
    {
        List<string> words = TrySplit(template, out string? error) ?? throw new ArgumentException($"the command {error}", nameof(template));
        return [.. words.Select(w => Substitute(w, values, quote: false))];
    }

    /// <summary>The template for <c>/bin/sh -c</c>, each placeholder's value single-quoted for the shell.</summary>
    public static string ForShell(string template, IReadOnlyDictionary<string, string> values) => Substitute(template, values, quote: true);

    private static string Substitute(string text, IReadOnlyDictionary<string, string> values, bool quote)
    {
        foreach ((string key, string value) in values)
        {
            text = text.Replace(key, quote ? "'" + value.Replace("'", "'\\''", StringComparison.Ordinal) + "'" : value, StringComparison.Ordinal);
        }

        return text;
    }
}
