using System.Text;
using System.Text.Unicode;

namespace PathBench.Io;

/// <summary>
/// What an error message may quote of a file's content: at most <see cref="MaxLength"/> characters
/// of printable ASCII, and nothing at all when the content is not text of the kind expected, so an
/// error about a file the user did not mean to give (a key, a password file) does not print it.
/// </summary>
public static class TextExcerpt
{
    /// <summary>Longest quoted excerpt, an ellipsis included (common practice: enough to find the line, too short to leak one).</summary>
    public const int MaxLength = 32;

    /// <summary>
    /// The quotable form of <paramref name="text"/>: characters outside printable ASCII become '?',
    /// longer text is cut to <see cref="MaxLength"/> with "...". <see cref="NotShown"/> when fewer
    /// than half the characters are printable ASCII (the content is not text of the expected kind).
    /// </summary>
    public static string Of(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        int printable = text.Count(c => c is >= ' ' and <= '~');
        if (printable * 2 < text.Length)
        {
            return NotShown;
        }

        var b = new StringBuilder(MaxLength);
        foreach (char c in text)
        {
            if (b.Length == MaxLength)
            {
                b.Length = MaxLength - 3;
                b.Append("...");
                break;
            }

            b.Append(c is >= ' ' and <= '~' ? c : '?');
        }

        return b.ToString();
    }

    /// <summary>What stands in an error for content that is not text.</summary>
    public const string NotShown = "(not text, not shown)";

    /// <summary>True when <paramref name="bytes"/> could be a text file: valid UTF-8 without NUL bytes.</summary>
    public static bool IsText(ReadOnlySpan<byte> bytes) => bytes.IndexOf((byte)0) < 0 && Utf8.IsValid(bytes);
}
