using System.Globalization;
using System.Numerics;
using System.Reflection;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// Generator matrices of the Sobol (1967) sequence in base 2 with the direction numbers of
/// Joe &amp; Kuo (2008), "Constructing Sobol sequences with better two-dimensional
/// projections", SIAM J. Sci. Comput. 30(5) (file new-joe-kuo-6.21201). Our copy of the
/// numbers is the embedded <c>Data/sobol_joe_kuo.txt</c>, regenerated from Debian's
/// python3-scipy by <c>tools/sobol/extract_joe_kuo.py</c>.
/// </summary>
public sealed class SobolMatrices
{
    /// <summary>Bits of each coordinate (and so the longest index period, 2^32).</summary>
    public const int Bits = 32;

    private static readonly Lazy<SobolMatrices> Shared = new(Load, LazyThreadSafetyMode.ExecutionAndPublication);

    // Column k of dimension d at [d * Bits + k]: the direction number for bit k of the index,
    // as a 32-bit fixed-point fraction. One flat array so a lookup is one bounds check.
    private readonly uint[] _columns;

    /// <summary>Dimensions served from byte tables (4 KiB each); the rest loop over the index bits.</summary>
    public const int TabulatedDimensions = 1024;

    // For dimension d < TabulatedDimensions and byte position b: entry [(d * 4 + b) * 256 + x]
    // is the XOR of the columns selected by byte value x at bits 8b..8b+7. Four lookups replace
    // up to 32 loop iterations: Owen's index scramble makes indices use all 32 bits.
    private readonly uint[] _byteTables;

    // The same for Owen scrambling, which works on bit-reversed values: entry [(d * 4 + b) * 256 + x]
    // is the XOR of the bit-reversed columns selected by byte b of the bit-reversed index, so a
    // reversed index gives the reversed coordinate with no reversal in between.
    private readonly uint[] _reversedByteTables;

    // The reversed walk by smaller bit groups of the reversed index, two dimensions to an entry (PairChunkTables):
    // PairChunkStride entries a dimension pair.
    private readonly ulong[] _pairChunkTables;

    // The byte tables with their values bit-reversed: entry [(d * 4 + b) * 256 + x] is Reverse(_byteTables[the same]).
    private readonly uint[] _reversedValueTables;

    // How many dimensions have the tables above: Min(Dimensions, TabulatedDimensions).
    private readonly int _tabulated;

    private SobolMatrices(uint[] columns, int dimensions)
    {
        _columns = columns;
        Dimensions = dimensions;
        int tabulated = Math.Min(dimensions, TabulatedDimensions);
        _tabulated = tabulated;
        _byteTables = new uint[tabulated * 4 * 256];
        _reversedByteTables = new uint[tabulated * 4 * 256];
        _pairChunkTables = new ulong[(tabulated + 1) / 2 * PairChunkStride];
        _reversedValueTables = new uint[tabulated * 4 * 256];
        for (int d = 0; d < tabulated; d++)
        {
            for (int b = 0; b < 4; b++)
            {
                Span<uint> table = _byteTables.AsSpan((d * 4 + b) * 256, 256);
                for (int x = 1; x < 256; x++)
                {
                    // Gray-code style build: x differs from x & (x - 1) in its lowest set bit.
                    int low = BitOperations.TrailingZeroCount(x);
                    table[x] = table[x & (x - 1)] ^ columns[d * Bits + 8 * b + low];
                }

                Span<uint> reversedValues = _reversedValueTables.AsSpan((d * 4 + b) * 256, 256);
                for (int x = 0; x < 256; x++)
                {
                    reversedValues[x] = BitReversal.Reverse(table[x]);
                }

                Span<uint> reversed = _reversedByteTables.AsSpan((d * 4 + b) * 256, 256);
                for (int x = 1; x < 256; x++)
                {
                    // Bit j of byte b of the reversed index is bit 31 - 8b - j of the index.
                    int low = BitOperations.TrailingZeroCount(x);
                    reversed[x] = reversed[x & (x - 1)] ^ BitReversal.Reverse(columns[d * Bits + Bits - 1 - (8 * b + low)]);
                }
            }

            // The walk is linear over GF(2) (an XOR of columns picked by the index's bits), so a group of bits' entry is
            // the walk of the index holding those bits alone; dimension d's entries are the low (even d) or high (odd d)
            // halves of its pair's, the top three bits' entries the pair's last sixteen words (even d's eight first).
            Span<ulong> pairChunks = _pairChunkTables.AsSpan(d / 2 * PairChunkStride, PairChunkStride);
            int half = 32 * (d & 1);
            for (int k = 0; k < 4; k++)
            {
                for (int x = 0; x < 64; x++)
                {
                    pairChunks[(64 * k) + x] |= (ulong)SampleReversed((uint)x << (6 * k), d) << half;
                }
            }

            for (int x = 0; x < 32; x++)
            {
                pairChunks[256 + x] |= (ulong)SampleReversed((uint)x << 24, d) << half;
            }

            Span<uint> top = MemoryMarshal.Cast<ulong, uint>(pairChunks[288..]);
            for (int x = 0; x < 8; x++)
            {
                top[(8 * (d & 1)) + x] = SampleReversed((uint)x << 29, d);
            }
        }
    }

    /// <summary>The embedded table, parsed once on first use.</summary>
    public static SobolMatrices Default => Shared.Value;

    /// <summary>How many dimensions the table defines.</summary>
    public int Dimensions { get; }

    /// <summary>
    /// Coordinate <paramref name="dimension"/> of point <paramref name="index"/> of the
    /// unscrambled sequence in natural (not Gray-code) order, as a 32-bit fixed-point fraction.
    /// </summary>
    [MethodImpl(InliningOptions.HotPath)]
    public uint Sample(uint index, int dimension)
    {
        if ((uint)dimension < (uint)TabulatedDimensions && dimension < Dimensions)
        {
            ref uint t = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_byteTables), dimension * 1024);
            return Unsafe.Add(ref t, (int)(index & 0xFF)) ^ Unsafe.Add(ref t, 256 + (int)((index >> 8) & 0xFF))
                ^ Unsafe.Add(ref t, 512 + (int)((index >> 16) & 0xFF)) ^ Unsafe.Add(ref t, 768 + (int)(index >> 24));
        }

        ReadOnlySpan<uint> col = new(_columns, dimension * Bits, Bits);
        uint v = 0;
        while (index != 0)
        {
            v ^= col[BitOperations.TrailingZeroCount(index)];
            index &= index - 1;
        }

        return v;
    }

    /// <summary>
    /// The bit-reversed coordinate of the point whose bit-reversed index is
    /// <paramref name="reversedIndex"/>: Reverse(Sample(Reverse(r), d)), the form Owen scrambling
    /// works in, without the two reversals.
    /// </summary>
    [MethodImpl(InliningOptions.HotPath)]
    public uint SampleReversed(uint reversedIndex, int dimension)
    {
        if ((uint)dimension < (uint)TabulatedDimensions && dimension < Dimensions)
        {
            // The guard above proves every offset in range; skip the four bounds checks.
            ref uint t = ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_reversedByteTables), dimension * 1024);
            uint r = reversedIndex;
            return Unsafe.Add(ref t, (int)(r & 0xFF)) ^ Unsafe.Add(ref t, 256 + (int)((r >> 8) & 0xFF))
                ^ Unsafe.Add(ref t, 512 + (int)((r >> 16) & 0xFF)) ^ Unsafe.Add(ref t, 768 + (int)(r >> 24));
        }

        return BitReversal.Reverse(Sample(BitReversal.Reverse(reversedIndex), dimension));
    }

    /// <summary>The four 256-entry byte tables behind <see cref="Sample"/> for a dimension below <see cref="TabulatedDimensions"/>.</summary>
    /// <remarks>With <paramref name="count"/> above one, the tables of that many consecutive dimensions (all tabulated), one after the other.</remarks>
    public ReadOnlySpan<uint> Tables(int dimension, int count = 1) => TablesOf(_byteTables, dimension, 1024, count);

    /// <summary>The four 256-entry byte tables behind <see cref="SampleReversed"/> for a dimension below <see cref="TabulatedDimensions"/>.</summary>
    /// <remarks>With <paramref name="count"/> above one, the tables of that many consecutive dimensions (all tabulated), one after the other.</remarks>
    public ReadOnlySpan<uint> ReversedTables(int dimension, int count = 1) => TablesOf(_reversedByteTables, dimension, 1024, count);

    /// <summary>
    /// <see cref="Tables"/> with each value bit-reversed (4 KiB a dimension): the walk is an XOR of entries and the
    /// reversal distributes over XOR, so walking these with index i gives Reverse(Sample(i, d)) with no reversal.
    /// </summary>
    /// <remarks>With <paramref name="count"/> above one, the tables of that many consecutive dimensions (all tabulated), one after the other.</remarks>
    public ReadOnlySpan<uint> ReversedValueTables(int dimension, int count = 1) => TablesOf(_reversedValueTables, dimension, 1024, count);

    /// <summary>
    /// <see cref="SampleReversed"/>'s walk by smaller groups of the reversed index's bits for the dimension pair
    /// (2p, 2p + 1) holding <paramref name="dimension"/>, <see cref="PairChunkStride"/> entries: at 64·k + x (k below 4, x
    /// below 64) the walks of x · 2^(6k) (bits 6k to 6k + 5), at 256 + x (x below 32) of x · 2^24 (bits 24 to 28), each
    /// entry holding dimension 2p's walk in its low 32 bits and 2p + 1's in its high; the last eight entries, read as
    /// sixteen words, hold the walks of t · 2^29 (t below 8, the top three bits), dimension 2p's eight then 2p + 1's. The
    /// walk is linear over GF(2), so SampleReversed(r) is the XOR of the six groups' entries. 1 184 bytes a dimension
    /// against the byte tables' 4 KiB: the eight-lane Owen walk (<c>OwenSobolBatch.Run</c>), whose scrambled indices
    /// pick entries at random, finds more of them in the level-one cache, and a pair's two walks are one walk of 64-bit entries.
    /// </summary>
    /// <remarks>Dimension 2p + 1's halves are zero where it is not tabulated.</remarks>
    public ReadOnlySpan<ulong> PairChunkTables(int dimension)
    {
        if ((uint)dimension >= (uint)_tabulated)
        {
            ThrowNotTabulated(dimension, 1);
        }

        return MemoryMarshal.CreateReadOnlySpan(ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(_pairChunkTables), dimension / 2 * PairChunkStride), PairChunkStride);
    }

    /// <summary>Entries a dimension pair of <see cref="PairChunkTables"/>.</summary>
    public const int PairChunkStride = 296;

    // The slice of one of the per-dimension tables (<paramref name="length"/> entries a dimension) for <paramref name="count"/>
    // tabulated dimensions from <paramref name="dimension"/>: two comparisons (the batches ask once a call), then no
    // further check, the slice being inside the table.
    private ReadOnlySpan<uint> TablesOf(uint[] tables, int dimension, int length, int count)
    {
        if ((uint)dimension >= (uint)_tabulated || (uint)(count - 1) >= (uint)(_tabulated - dimension))
        {
            ThrowNotTabulated(dimension, count);
        }

        return MemoryMarshal.CreateReadOnlySpan(ref Unsafe.Add(ref MemoryMarshal.GetArrayDataReference(tables), dimension * length), count * length);
    }

    [MethodImpl(InliningOptions.ColdPath)]
    private void ThrowNotTabulated(int dimension, int count) =>
        throw new ArgumentOutOfRangeException(nameof(dimension), dimension, $"dimensions {dimension} to {dimension + count - 1} are not all below the {_tabulated} tabulated ones");

    /// <summary>Builds matrices from Joe–Kuo rows; exposed for tests that check the recurrence.</summary>
    /// <param name="rows">Per dimension from the second on: degree s, inner coefficients a, initial m_1..m_s.</param>
    public static SobolMatrices FromDirectionNumbers(IReadOnlyList<(int Degree, uint Coefficients, uint[] M)> rows)
    {
        ArgumentNullException.ThrowIfNull(rows);
        int dims = rows.Count + 1;
        var columns = new uint[dims * Bits];
        for (int k = 0; k < Bits; k++)
        {
            columns[k] = 1u << (Bits - 1 - k); // dimension 0: the van der Corput sequence
        }

        for (int d = 1; d < dims; d++)
        {
            (int s, uint a, uint[] m) = rows[d - 1];
            Span<uint> v = columns.AsSpan(d * Bits, Bits);
            for (int k = 0; k < Math.Min(s, Bits); k++)
            {
                v[k] = m[k] << (Bits - 1 - k);
            }

            // Bratley & Fox (1988) recurrence, as in Joe & Kuo (2008) eq. (3):
            // v_k = a_1 v_{k-1} ^ ... ^ a_{s-1} v_{k-s+1} ^ v_{k-s} ^ (v_{k-s} >> s).
            for (int k = s; k < Bits; k++)
            {
                uint x = v[k - s] ^ (v[k - s] >> s);
                for (int j = 1; j < s; j++)
                {
                    if (((a >> (s - 1 - j)) & 1) != 0)
                    {
                        x ^= v[k - j];
                    }
                }

                v[k] = x;
            }
        }

        return new SobolMatrices(columns, dims);
    }

    private static SobolMatrices Load()
    {
        const string name = "PathBench.Sampling.sobol_joe_kuo.txt";
        using Stream stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(name)
            ?? throw new InvalidOperationException($"embedded resource {name} is missing from the build");
        using var reader = new StreamReader(stream);
        var rows = new List<(int, uint, uint[])>(21200);
        int lineNumber = 0;
        while (reader.ReadLine() is { } line)
        {
            lineNumber++;
            if (line.Length == 0 || line[0] == '#')
            {
                continue;
            }

            string[] f = line.Split(' ', StringSplitOptions.RemoveEmptyEntries);
            int s = int.Parse(f[1], CultureInfo.InvariantCulture);
            if (int.Parse(f[0], CultureInfo.InvariantCulture) != rows.Count + 2 || f.Length != 3 + s)
            {
                throw new InvalidDataException($"{name}, line {lineNumber}: expected dimension {rows.Count + 2} with {s} direction numbers");
            }

            uint a = uint.Parse(f[2], CultureInfo.InvariantCulture);
            var m = new uint[s];
            for (int k = 0; k < s; k++)
            {
                m[k] = uint.Parse(f[3 + k], CultureInfo.InvariantCulture);
            }

            rows.Add((s, a, m));
        }

        return FromDirectionNumbers(rows);
    }
}
