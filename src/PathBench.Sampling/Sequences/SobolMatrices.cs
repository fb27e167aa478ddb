using System.Globalization;
using System.Numerics;
using System.Reflection;
using System.Runtime.CompilerServices;

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

    private SobolMatrices(uint[] columns, int dimensions)
    {
        _columns = columns;
        Dimensions = dimensions;
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
        if (dimension == 0)
        {
            return BitReversal.Reverse(index);
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
