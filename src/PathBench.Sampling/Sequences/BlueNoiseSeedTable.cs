using System.Buffers.Binary;
using System.Globalization;
using System.Reflection;
using System.Security.Cryptography;
using System.Text;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// Per-pixel Owen scrambling seeds over a square tile, one 32-bit word per pixel and per 2-D
/// dimension pair, arranged so that neighbouring pixels' Monte Carlo errors are negatively
/// correlated (the screen-space blue-noise error distribution of Heitz, Belcour, Ostromoukhov,
/// Coeurjolly &amp; Iehl 2019, "A low-discrepancy sampler that distributes Monte Carlo errors as a
/// blue noise in screen space", SIGGRAPH Talks; the seeds are placed by swapping, as in Heitz &amp;
/// Belcour 2019, "Distributing Monte Carlo errors as a blue noise in screen space by permuting
/// pixel seeds temporally", Comput. Graph. Forum 38(4)).
/// </summary>
/// <remarks>
/// The table is made by our own optimiser, <c>tools/PathBench.BlueNoise</c>, and stored in
/// <c>Data/bluenoise_owen_sobol.bin</c>: an ASCII header of <c>key: value</c> lines that ends with
/// <c>end</c>, then <see cref="Pairs"/> × <see cref="Tile"/>² little-endian words, pair by pair,
/// row by row. The header's <c>sha256</c> is that of the words and is checked on load.
/// </remarks>
public sealed class BlueNoiseSeedTable
{
    /// <summary>The tile's edge in pixels; the table repeats over the screen with this period.</summary>
    public const int Tile = 64;

    /// <summary>How many leading dimension pairs (0–1, 2–3, …) have optimised seeds.</summary>
    public const int Pairs = 6;

    /// <summary>The first line of a table file.</summary>
    public const string Magic = "pathbench blue-noise owen-sobol seeds v1";

    private const string ResourceName = "PathBench.Sampling.bluenoise_owen_sobol.bin";
    private static readonly Lazy<BlueNoiseSeedTable> Shared = new(LoadEmbedded);
    private readonly uint[] _words;

    private BlueNoiseSeedTable(uint[] words, IReadOnlyList<(string Key, string Value)> header)
    {
        _words = words;
        Header = header;
    }

    /// <summary>The embedded table, read and checked once on first use.</summary>
    public static BlueNoiseSeedTable Default => Shared.Value;

    /// <summary>The provenance header's fields, in file order.</summary>
    public IReadOnlyList<(string Key, string Value)> Header { get; }

    /// <summary>The seed word of pair <paramref name="pair"/> at tile position <paramref name="position"/> (= y·<see cref="Tile"/> + x).</summary>
    public uint Word(int pair, int position) => _words[(pair * Tile * Tile) + position];

    /// <summary>
    /// The two scramble seeds (dimension 2k, dimension 2k+1) a table word stands for: the word
    /// itself and a hash of it, so that a swap of words moves both coordinates' scrambles together.
    /// </summary>
    public static (uint X, uint Y) ScrambleSeeds(uint word) =>
        (word, (uint)(Hashing.SampleHash.Mix64(word ^ 0x424C55454E4F4953UL) >> 32));

    /// <summary>The lower-case hex SHA-256 of the words as stored (little-endian).</summary>
    public static string Sha256(ReadOnlySpan<uint> words) => Convert.ToHexStringLower(SHA256.HashData(ToBytes(words)));

    /// <summary>Writes a table file: the header fields (without <c>sha256</c>, which is added), then the words.</summary>
    public static byte[] Write(IEnumerable<(string Key, string Value)> header, ReadOnlySpan<uint> words)
    {
        ArgumentNullException.ThrowIfNull(header);
        if (words.Length != Pairs * Tile * Tile)
        {
            throw new ArgumentException($"a table holds {Pairs * Tile * Tile} words, got {words.Length}", nameof(words));
        }

        var text = new StringBuilder(Magic).Append('\n');
        foreach ((string key, string value) in header)
        {
            text.Append(key).Append(": ").Append(value).Append('\n');
        }

        text.Append("sha256: ").Append(Sha256(words)).Append("\nend\n");
        return [.. Encoding.ASCII.GetBytes(text.ToString()), .. ToBytes(words)];
    }

    /// <summary>Reads a table file; <see cref="InvalidDataException"/> with a one-line reason when it is malformed.</summary>
    public static BlueNoiseSeedTable Read(ReadOnlySpan<byte> file, string name)
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
                if (text != Magic)
                {
                    throw new InvalidDataException($"{name}: not a blue-noise seed table (first line '{text}')");
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

        int expected = Pairs * Tile * Tile * sizeof(uint);
        if (file.Length - at != expected)
        {
            throw new InvalidDataException(string.Create(CultureInfo.InvariantCulture, $"{name}: {file.Length - at} bytes of seeds, expected {expected}"));
        }

        var words = new uint[Pairs * Tile * Tile];
        for (int i = 0; i < words.Length; i++)
        {
            words[i] = BinaryPrimitives.ReadUInt32LittleEndian(file.Slice(at + (4 * i), 4));
        }

        string actual = Sha256(words);
        if (sha != actual)
        {
            throw new InvalidDataException($"{name}: the seeds' SHA-256 is {actual}, the header says {sha ?? "nothing"}");
        }

        return new BlueNoiseSeedTable(words, header);
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

    private static BlueNoiseSeedTable LoadEmbedded()
    {
        using Stream stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(ResourceName)
            ?? throw new InvalidOperationException($"embedded resource {ResourceName} is missing");
        using var memory = new MemoryStream();
        stream.CopyTo(memory);
        return Read(memory.ToArray(), ResourceName);
    }
}
