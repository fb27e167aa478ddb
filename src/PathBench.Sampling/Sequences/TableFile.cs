using System.Buffers.Binary;
using System.Globalization;
using System.Reflection;
using System.Security.Cryptography;
using System.Text;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// The layout of the blue-noise table files: an ASCII header of <c>key: value</c> lines after a magic
/// first line, ending with <c>end</c>, then little-endian 32-bit words. The header's <c>sha256</c> is
/// that of the words and is checked on load.
/// </summary>
internal static class TableFile
{
    public static string Sha256(ReadOnlySpan<uint> words) => Convert.ToHexStringLower(SHA256.HashData(ToBytes(words)));

    public static byte[] Write(string magic, IEnumerable<(string Key, string Value)> header, ReadOnlySpan<uint> words, int expectedWords)
    {
        ArgumentNullException.ThrowIfNull(header);
        if (words.Length != expectedWords)
        {
            throw new ArgumentException($"a table holds {expectedWords} words, got {words.Length}", nameof(words));
        }

        var text = new StringBuilder(magic).Append('\n');
        foreach ((string key, string value) in header)
        {
            text.Append(key).Append(": ").Append(value).Append('\n');
        }

        text.Append("sha256: ").Append(Sha256(words)).Append("\nend\n");
        return [.. Encoding.ASCII.GetBytes(text.ToString()), .. ToBytes(words)];
    }

    public static (uint[] Words, List<(string Key, string Value)> Header) Read(ReadOnlySpan<byte> file, string name, string magic, string what, string wordsName, int expectedWords)
    {
        var header = new List<(string, string)>();
        int at = 0, line = 0;
        string? sha = null;
        while (true)
        {
            int end = file[at..].IndexOf((byte)'\n');
            if (end < 0 || end > 4096)
            {
                throw new InvalidDataException($"{name}: header line {line + 1} does not end (no 'end' line)");
            }

            string text = Encoding.ASCII.GetString(file.Slice(at, end));
            at += end + 1;
            line++;
            if (line == 1)
            {
                if (text != magic)
                {
                    throw new InvalidDataException($"{name}: not {what} (first line '{text}')");
                }

                continue;
            }

            if (text == "end")
            {
                break;
            }

            int colon = text.IndexOf(": ", StringComparison.Ordinal);
            if (colon <= 0)
            {
                throw new InvalidDataException($"{name}: header line {line} is not 'key: value'");
            }

            (string key, string value) = (text[..colon], text[(colon + 2)..]);
            if (key == "sha256")
            {
                sha = value;
            }

            header.Add((key, value));
        }

        int expected = expectedWords * sizeof(uint);
        if (file.Length - at != expected)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"{name}: {file.Length - at} bytes of {wordsName}, expected {expected}"));
        }

        var words = new uint[expectedWords];
        for (int i = 0; i < words.Length; i++)
        {
            words[i] = BinaryPrimitives.ReadUInt32LittleEndian(file.Slice(at + (4 * i), 4));
        }

        string actual = Sha256(words);
        if (sha != actual)
        {
            throw new InvalidDataException($"{name}: the {wordsName}' SHA-256 is {actual}, the header says {sha ?? "nothing"}");
        }

        return (words, header);
    }

    public static byte[] Embedded(string resourceName)
    {
        using Stream stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(resourceName)
            ?? throw new InvalidOperationException($"embedded resource {resourceName} is missing");
        using var memory = new MemoryStream();
        stream.CopyTo(memory);
        return memory.ToArray();
    }

    private static byte[] ToBytes(ReadOnlySpan<uint> words)
    {
        var bytes = new byte[words.Length * sizeof(uint)];
        for (int i = 0; i < words.Length; i++)
        {
            BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(4 * i), words[i]);
        }

        return bytes;
    }
}
