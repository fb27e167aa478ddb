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
    public static string Sha256(ReadOnlySpan<uint> words) => TableFile.Sha256(words);

    /// <summary>Writes a table file: the header fields (without <c>sha256</c>, which is added), then the words.</summary>
    public static byte[] Write(IEnumerable<(string Key, string Value)> header, ReadOnlySpan<uint> words) =>
        TableFile.Write(Magic, header, words, Pairs * Tile * Tile);

    /// <summary>Reads a table file; <see cref="InvalidDataException"/> with a one-line reason when it is malformed.</summary>
    public static BlueNoiseSeedTable Read(ReadOnlySpan<byte> file, string name)
    {
        (uint[] words, List<(string, string)> header) = TableFile.Read(file, name, Magic, "a blue-noise seed table", "seeds", Pairs * Tile * Tile);
        return new BlueNoiseSeedTable(words, header);
    }

    private static BlueNoiseSeedTable LoadEmbedded() => Read(TableFile.Embedded(ResourceName), ResourceName);
}
