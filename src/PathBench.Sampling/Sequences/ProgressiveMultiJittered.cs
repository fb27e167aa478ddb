using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Sequences;

/// <summary>The three families of Christensen, Kensler &amp; Kilpatrick (2018).</summary>
public enum PmjVariant
{
    /// <summary>Progressive jittered: stratified in the dyadic squares only.</summary>
    ProgressiveJittered,

    /// <summary>Progressive multi-jittered: the squares and both 1-D projections.</summary>
    ProgressiveMultiJittered,

    /// <summary>Progressive multi-jittered (0,2): every elementary interval in base 2.</summary>
    ProgressiveMultiJittered02,
}

/// <summary>
/// One progressive (multi-)jittered 2-D sequence, built by the "diagonally alternating"
/// construction of Christensen, Kensler &amp; Kilpatrick (2018), "Progressive Multi-Jittered
/// Sample Sequences", Computer Graphics Forum 37(4) (EGSR), written from the paper's description.
/// </summary>
/// <remarks>
/// <para>
/// With N = 4^k points placed, one in each square of side 2^-k, each square is split into four
/// sub-squares. Point N+i goes into the sub-square diagonally opposite the one point i occupies;
/// then point 2N+i into one of the two sub-squares of that square still empty (chosen at random)
/// and point 3N+i into the last, diagonally opposite it. Where in its sub-square a point falls is
/// chosen at random among the positions whose strata are still empty: for
/// <see cref="PmjVariant.ProgressiveJittered"/> anywhere; for
/// <see cref="PmjVariant.ProgressiveMultiJittered"/> in a 1-D stratum of width 1/M of each axis
/// that no point of the prefix of M = 2^m points holds yet; for
/// <see cref="PmjVariant.ProgressiveMultiJittered02"/> in an empty cell of every elementary
/// interval shape 2^-p × 2^-(m-p), p = 0 … m, so that every prefix of 2^m points is a
/// (0,m,2)-net in base 2.
/// </para>
/// <para>
/// The candidate search is exhaustive within the sub-square (x strata from a random start, then
/// every y stratum), so it either places the point or proves that the earlier random choices left
/// no room. Such a dead end is possible in principle for the (0,2) family; then the other free
/// sub-square is tried for point 2N+i, and failing that the whole octave is drawn again from the next
/// random stream (none was needed for the sequences PathBench uses: the tests check
/// <see cref="OctaveRetries"/>). Random values are hashes of (seed, octave, attempt, counter): the result is a pure
/// function of the seed.
/// </para>
/// <para>Coordinates are 32-bit binary fractions: the top m bits pick the stratum, the rest are uniform jitter.</para>
/// </remarks>
public sealed class ProgressiveMultiJittered
{
    private readonly uint[] _x;
    private readonly uint[] _y;

    // The coordinates bit-reversed, the form Owen scrambling works on.
    private readonly uint[] _reversedX;
    private readonly uint[] _reversedY;

    private ProgressiveMultiJittered(uint[] x, uint[] y, int retries)
    {
        _x = x;
        _y = y;
        _reversedX = Array.ConvertAll(x, BitReversal.Reverse);
        _reversedY = Array.ConvertAll(y, BitReversal.Reverse);
        OctaveRetries = retries;
    }

    /// <summary>The number of points, a power of two.</summary>
    public int Count => _x.Length;

    /// <summary>How many octaves had to be drawn again after a dead end (for the record; zero for pj and pmj).</summary>
    public int OctaveRetries { get; }

    /// <summary>The x coordinates as 32-bit binary fractions.</summary>
    public ReadOnlySpan<uint> X => _x;

    /// <summary>The y coordinates as 32-bit binary fractions.</summary>
    public ReadOnlySpan<uint> Y => _y;

    /// <summary>The x coordinates with their bits reversed (<see cref="BitReversal.Reverse"/>), as Owen scrambling takes them.</summary>
    public ReadOnlySpan<uint> ReversedX => _reversedX;

    /// <summary>The y coordinates with their bits reversed.</summary>
    public ReadOnlySpan<uint> ReversedY => _reversedY;

    /// <summary>Builds the first 2^<paramref name="log2Count"/> points of the sequence chosen by <paramref name="seed"/>.</summary>
    public static ProgressiveMultiJittered Generate(PmjVariant variant, int log2Count, ulong seed)
    {
        ArgumentOutOfRangeException.ThrowIfNegative(log2Count);
        ArgumentOutOfRangeException.ThrowIfGreaterThan(log2Count, 24);
        int n = 1 << log2Count;
        var x = new uint[n];
        var y = new uint[n];
        var builder = new Builder(variant, x, y, Mix(seed, 0, 0));
        x[0] = builder.NextWord();
        y[0] = builder.NextWord();
        int retries = 0;
        for (int count = 1, octave = 1; count < n; count *= 2, octave++)
        {
            for (int attempt = 0; ; attempt++)
            {
                builder.Restart(Mix(seed, octave, attempt));
                bool even = (octave & 1) == 1; // count = 4^k: the diagonal step; count = 2·4^k: the two remaining sub-squares
                if (even ? builder.Diagonal(count) : builder.Remaining(count / 2))
                {
                    break;
                }

                if (attempt == 1000)
                {
                    throw new InvalidOperationException($"no {variant} octave of {2 * count} points found in 1000 attempts");
                }

                retries++;
            }
        }

        return new ProgressiveMultiJittered(x, y, retries);
    }

    private static ulong Mix(ulong seed, int octave, int attempt) =>
        SampleHash.Combine(SampleHash.Combine(SampleHash.Mix64(seed), (ulong)octave), (ulong)attempt);

    /// <summary>The mutable state of one construction; never shared.</summary>
    private sealed class Builder(PmjVariant variant, uint[] x, uint[] y, ulong key)
    {
        private ulong _key = key;
        private ulong _counter;
        private int _level;            // m: the octave being built ends with 2^m points
        private int[] _shapes = [];    // the p of every checked shape 2^-p × 2^-(m-p)
        private bool[][] _occupied = [];

        public void Restart(ulong key)
        {
            _key = key;
            _counter = 0;
        }

        public uint NextWord() => (uint)(SampleHash.Combine(_key, _counter++) >> 32);

        // Points count … 2·count − 1, count = 4^k: each opposite its partner's sub-square.
        public bool Diagonal(int count)
        {
            int k = Log2(count) / 2;
            Prepare(Log2(count) + 1, count);
            for (int i = 0; i < count; i++)
            {
                (uint qx, uint qy) = SubSquare(i, k);
                if (!Place(count + i, qx ^ 1, qy ^ 1, k + 1))
                {
                    return false;
                }
            }

            return true;
        }

        // Points 2N … 4N − 1, N = 4^k: the two sub-squares left in each square, diagonal to each other.
        public bool Remaining(int n)
        {
            int k = Log2(n) / 2;
            Prepare(Log2(n) + 2, 2 * n);
            var flips = new bool[n];
            for (int i = 0; i < n; i++)
            {
                (uint qx, uint qy) = SubSquare(i, k);
                bool flipX = (NextWord() & 1) == 0;
                // Sub-square (qx ^ 1, qy) or (qx, qy ^ 1); if the random one has no room, the other.
                if (!Place(2 * n + i, flipX ? qx ^ 1 : qx, flipX ? qy : qy ^ 1, k + 1))
                {
                    flipX = !flipX;
                    if (!Place(2 * n + i, flipX ? qx ^ 1 : qx, flipX ? qy : qy ^ 1, k + 1))
                    {
                        return false;
                    }
                }

                flips[i] = flipX;
            }

            for (int i = 0; i < n; i++)
            {
                (uint qx, uint qy) = SubSquare(i, k);
                bool flipX = !flips[i];
                if (!Place(3 * n + i, flipX ? qx ^ 1 : qx, flipX ? qy : qy ^ 1, k + 1))
                {
                    return false;
                }
            }

            return true;
        }

        // The top k + 1 bits of point i: its sub-square at side 2^-(k+1).
        private (uint X, uint Y) SubSquare(int i, int k) => (x[i] >> (31 - k), y[i] >> (31 - k));

        private void Prepare(int level, int existing)
        {
            _level = level;
            _shapes = variant switch
            {
                PmjVariant.ProgressiveMultiJittered02 => Enumerable.Range(0, level + 1).ToArray(),
                PmjVariant.ProgressiveMultiJittered => [0, level],
                _ => [],
            };
            _occupied = new bool[_shapes.Length][];
            for (int s = 0; s < _shapes.Length; s++)
            {
                _occupied[s] = new bool[1 << level];
                for (int i = 0; i < existing; i++)
                {
                    _occupied[s][Cell(_shapes[s], x[i], y[i])] = true;
                }
            }
        }

        private int Cell(int p, uint px, uint py)
        {
            int q = _level - p;
            uint a = p == 0 ? 0 : px >> (32 - p);
            uint b = q == 0 ? 0 : py >> (32 - q);
            return (int)((a << q) | b);
        }

        // Puts point `index` in the sub-square whose top `bits` bits are (sx, sy), in strata still empty.
        private bool Place(int index, uint sx, uint sy, int bits)
        {
            int m = _level;
            int free = m - bits;      // stratum bits below the sub-square
            uint span = 1u << free;
            uint startX = NextWord() & (span - 1), startY = NextWord() & (span - 1);
            for (uint dx = 0; dx < span; dx++)
            {
                uint cx = (sx << free) | ((startX + dx) & (span - 1));
                if (_shapes.Length > 0 && _occupied[^1][(int)cx])
                {
                    continue; // the last shape is p = m, the 1-D x strata: skip a taken column at once
                }

                for (uint dy = 0; dy < span;)
                {
                    uint low = (startY + dy) & (span - 1);
                    uint cy = (sy << free) | low;
                    int blocked = Blocking(cx << (32 - m), cy << (32 - m));
                    if (blocked >= 0)
                    {
                        // Shape p depends on the top m − p bits of y only: every y stratum in the same
                        // aligned block of 2^p is blocked too, so step past the block.
                        uint block = 1u << Math.Min(blocked, free);
                        dy += ((low | (block - 1)) + 1) - low;
                        continue;
                    }

                    // The jitter below the stratum bits changes no cell of this octave.
                    uint px = (cx << (32 - m)) | (NextWord() >> m);
                    uint py = (cy << (32 - m)) | (NextWord() >> m);
                    x[index] = px;
                    y[index] = py;
                    for (int s = 0; s < _shapes.Length; s++)
                    {
                        _occupied[s][Cell(_shapes[s], px, py)] = true;
                    }

                    return true;
                }
            }

            return false;
        }

        // The p of the first shape whose cell holding (px, py) is taken, or −1 when all are free.
        private int Blocking(uint px, uint py)
        {
            for (int s = 0; s < _shapes.Length; s++)
            {
                if (_occupied[s][Cell(_shapes[s], px, py)])
                {
                    return _shapes[s];
                }
            }

            return -1;
        }

        private static int Log2(int v) => System.Numerics.BitOperations.Log2((uint)v);
    }
}
