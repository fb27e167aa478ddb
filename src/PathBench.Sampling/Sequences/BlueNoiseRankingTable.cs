namespace PathBench.Sampling.Sequences;

/// <summary>
/// Per-pixel ranking keys over the blue-noise tile, one table per power-of-two sample count and tabled
/// dimension pair: the key of a pixel names the seed-tile entry it takes at that count, a scramble seed
/// word together with a block of the Sobol sequence, so sample i of the pixel is sequence point
/// i XOR <see cref="Block"/>(word)·N (the per-sample-count ranking tables of Heitz, Belcour, Ostromoukhov,
/// Coeurjolly &amp; Iehl 2019, "A low-discrepancy sampler that distributes Monte Carlo errors as a blue
/// noise in screen space", SIGGRAPH Talks).
/// </summary>
/// <remarks>
/// Made by <c>tools/PathBench.BlueNoise</c> (<c>RankingTileOptimizer</c>) from the seed tile of
/// <see cref="BlueNoiseSeedTable"/>, stored in <c>Data/bluenoise_owen_sobol_ranking.bin</c> in the same
/// layout as that table (header, SHA-256, little-endian words): <see cref="Levels"/> ×
/// <see cref="BlueNoiseSeedTable.Pairs"/> × <see cref="BlueNoiseSeedTable.Tile"/>² keys of 16 bits, two
/// a word (the even position in the low half), level by level (N = 1, 2, 4, …), pair by pair, row by
/// row. Every level and pair must be a permutation of the tile's positions; a file where one is not is refused.
/// </remarks>
public sealed class BlueNoiseRankingTable
{
    /// <summary>How many sample counts have a table: 1, 2, 4, 8 and 16 samples per pixel.</summary>
    public const int Levels = 5;

    /// <summary>The first line of a ranking table file.</summary>
    public const string Magic = "pathbench blue-noise owen-sobol ranking keys v1";

    private const int Positions = BlueNoiseSeedTable.Tile * BlueNoiseSeedTable.Tile;
    private const int Keys = Levels * BlueNoiseSeedTable.Pairs * Positions;
    private const string ResourceName = "PathBench.Sampling.bluenoise_owen_sobol_ranking.bin";
    private static readonly Lazy<BlueNoiseRankingTable> Shared = new(() => Read(TableFile.Embedded(ResourceName), ResourceName));
    private readonly ushort[] _keys;

    private BlueNoiseRankingTable(ushort[] keys, IReadOnlyList<(string Key, string Value)> header)
    {
        _keys = keys;
        Header = header;
    }

    /// <summary>The embedded table, read and checked once on first use.</summary>
    public static BlueNoiseRankingTable Default => Shared.Value;

    /// <summary>The provenance header's fields, in file order.</summary>
    public IReadOnlyList<(string Key, string Value)> Header { get; }

    /// <summary>
    /// The table a render planned for <paramref name="planned"/> samples per pixel uses: the one for the
    /// largest power of two not above it, and the last one (16) for more.
    /// </summary>
    public static int LevelFor(int planned) => Math.Min(Levels - 1, System.Numerics.BitOperations.Log2((uint)Math.Max(1, planned)));

    /// <summary>
    /// The sequence block an entry of the seed tile carries, from its word: a 16-bit hash, so entries
    /// use different sub-sequences and a swap moves the block with the seeds.
    /// </summary>
    public static uint Block(uint word) => (uint)(Hashing.SampleHash.Mix64(word ^ 0x52414E4B424C4F43UL) >> 48);

    /// <summary>The seed-tile position the pixel at tile position <paramref name="position"/> takes in pair <paramref name="pair"/> at level <paramref name="level"/>.</summary>
    public int Key(int level, int pair, int position) => _keys[(((level * BlueNoiseSeedTable.Pairs) + pair) * Positions) + position];

    /// <summary>Writes a table file: the header fields (without <c>sha256</c>, which is added), then the keys two a word.</summary>
    public static byte[] Write(IEnumerable<(string Key, string Value)> header, ReadOnlySpan<int> keys)
    {
        if (keys.Length != Keys)
        {
            throw new ArgumentException($"a ranking table holds {Keys} keys, got {keys.Length}", nameof(keys));
        }

        var words = new uint[Keys / 2];
        for (int i = 0; i < words.Length; i++)
        {
            words[i] = (uint)keys[2 * i] | ((uint)keys[(2 * i) + 1] << 16);
        }

        return TableFile.Write(Magic, header, words, Keys / 2);
    }

    /// <summary>
    /// Reads a table file; <see cref="InvalidDataException"/> with a one-line reason when it is malformed,
    /// including a level and pair whose keys are not a permutation of the tile's positions.
    /// </summary>
    public static BlueNoiseRankingTable Read(ReadOnlySpan<byte> file, string name)
    {
        (uint[] words, List<(string, string)> header) = TableFile.Read(file, name, Magic, "a blue-noise ranking table", "keys", Keys / 2);
        var keys = new ushort[Keys];
        for (int i = 0; i < words.Length; i++)
        {
            keys[2 * i] = (ushort)words[i];
            keys[(2 * i) + 1] = (ushort)(words[i] >> 16);
        }

        var seen = new bool[Positions];
        for (int table = 0; table < Levels * BlueNoiseSeedTable.Pairs; table++)
        {
            Array.Clear(seen);
            for (int p = 0; p < Positions; p++)
            {
                int k = keys[(table * Positions) + p];
                if (k >= Positions || seen[k])
                {
                    throw new InvalidDataException($"{name}: level {table / BlueNoiseSeedTable.Pairs}, pair {table % BlueNoiseSeedTable.Pairs} is not a permutation of the tile's {Positions} positions (key {p} is {k})");
                }

                seen[k] = true;
            }
        }

        return new BlueNoiseRankingTable(keys, header);
    }
}
