using System.Numerics;

namespace PathBench.Rendering;

/// <summary>
/// Per-pixel accumulators in exact fixed point: for each pixel the number of samples and, per
/// channel, the sum of the values q = round(v · 2^32) (an <see cref="Int128"/>) and the exact sum
/// of their squares q² (192 bits: a <see cref="UInt128"/> and a carry word). The squares are of the
/// rounded values themselves, so the variance is exactly that of the accumulated samples, down to
/// the darkest pixel. Integer addition is associative, so the result is bit-identical whatever the
/// thread count, tile order or split of the sample range, and two films of disjoint sample
/// ranges merge exactly by adding. Non-finite samples are counted and dropped, never averaged in.
/// <para>
/// A channel value too bright for the fixed-point planes (|v| ≥ 2^32, <see cref="MaxValue"/>) is
/// kept exactly in a sparse per-pixel <see cref="WideSums"/>: for such v, v · 2^32 is already an
/// integer (its last bit is worth at least 2^-20, and 2^-20 · 2^32 = 2^12), so q = v · 2^32 needs
/// no rounding and is summed, with q², as an arbitrary-size integer. Any finite double fits (q &lt;
/// 2^1056). Integer addition stays associative, so thread count, tile order and the split of the
/// sample range still cannot change a bit; a plain double sum could (floating-point addition is
/// not associative). Sparse because such samples are rare in a sensible scene: a film pays nothing
/// until one arrives, then a table of one reference a pixel (8 bytes) and, per pixel that has such
/// values, words sized by their magnitudes: at most <see cref="WideSums.MaxBytesPerPixel"/> (1312)
/// bytes, whatever the values. Those bytes are counted as they are taken and held to
/// <see cref="WideBytesLimit"/> (what the memory budget leaves), so a film of bright pixels cannot
/// outgrow the budget: past it, accumulation stops with a <see cref="PathBench.Io.MemoryBudgetException"/>.
/// </para>
/// </summary>
public sealed class Film
{
    /// <summary>Fixed-point scale: a value v is stored as round(v · 2^32).</summary>
    public const double Scale = 4294967296.0;

    /// <summary>The magnitude from which a channel value is kept in the wide sums instead of the fixed-point planes.</summary>
    // 2^32: below it |q| < 2^64, so a square fits 128 bits and even 2^31 samples (more than an int
    // spp can ask for) sum below Int128's 2^127.
    public const double MaxValue = 4294967296.0;

    /// <summary>Bytes of accumulator storage per pixel: count, three sums, three 20-byte sums of squares.</summary>
    public const int BytesPerPixel = 8 + (3 * 16) + (3 * 20);

    /// <summary>The most accumulator memory a film may take (16 GiB on a 24 GiB machine leaves room for the rest).</summary>
    public const long MaxBytes = 16L << 30;

    private readonly long[] _count;
    private readonly Int128[] _sum;
    private readonly UInt128[] _sumSquaresLow;

    // The carries out of the low words: each sample adds less than 2^128 (|q| < 2^64), so a pixel's
    // carry count stays below its sample count, which an int spp bounds below 2^32.
    private readonly uint[] _sumSquaresHigh;

    // The sums of the values too bright for the planes, by pixel index; allocated with the first of
    // them. Each pixel belongs to one tile, so only the table's creation and the byte count are shared.
    private WideSums?[]? _wide;

    private int _widePixels;
    private long _wideBytes;

    /// <summary>Allocates a film, after checking its size.</summary>
    public Film(int width, int height)
    {
        long bytes = RequiredBytes(width, height);
        if (bytes > MaxBytes)
        {
            throw new ArgumentOutOfRangeException(nameof(width), $"a {width}×{height} film needs {bytes >> 20} MiB of accumulators, more than the {MaxBytes >> 30} GiB limit");
        }

        Width = width;
        Height = height;
        int n = width * height;
        _count = new long[n];
        _sum = new Int128[3 * n];
        _sumSquaresLow = new UInt128[3 * n];
        _sumSquaresHigh = new uint[3 * n];
    }

    /// <summary>Width in pixels.</summary>
    public int Width { get; }

    /// <summary>Height in pixels.</summary>
    public int Height { get; }

    /// <summary>Samples dropped because a channel was NaN or infinite.</summary>
    public long NonFiniteSamples { get; private set; }

    /// <summary>Pixels holding at least one channel value of magnitude ≥ <see cref="MaxValue"/>, kept in the wide sums.</summary>
    public int WidePixels => Volatile.Read(ref _widePixels);

    /// <summary>Bytes the wide sums hold: the table of references and each wide pixel's words.</summary>
    public long WideBytes => Interlocked.Read(ref _wideBytes);

    /// <summary>
    /// The most bytes the wide sums may hold; set by a command to what its memory budget leaves after
    /// its estimate (the default: the whole budget at the film's creation). Taking more throws.
    /// </summary>
    public long WideBytesLimit { get; set; } = PathBench.Io.MemoryBudget.Current.Bytes;

    /// <summary>The accumulator bytes a film of this size needs; throws for non-positive sizes.</summary>
    public static long RequiredBytes(int width, int height)
    {
        if (width <= 0 || height <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(width), $"film size must be positive, got {width}×{height}");
        }

        return (long)width * height * BytesPerPixel;
    }

    /// <summary>Samples accumulated in pixel (x, y).</summary>
    public long Count(int x, int y) => _count[y * Width + x];

    /// <summary>The mean of pixel (x, y), channel c (0 R, 1 G, 2 B); 0 where no sample landed.</summary>
    public double Mean(int x, int y, int c)
    {
        int i = y * Width + x;
        if (_count[i] == 0)
        {
            return 0;
        }

        WideSums? wide = Wide(i);
        return wide is null
            ? (double)_sum[3 * i + c] / Scale / _count[i]
            : WideSums.Ratio((BigInteger)_sum[3 * i + c] + wide.SumOf(c), _count[i], -32);
    }

    /// <summary>
    /// The unbiased sample variance of pixel (x, y), channel c, of the samples as accumulated
    /// (each rounded to 2^-32); 0 with fewer than two samples. Computed exactly as
    /// (n·Σq² − (Σq)²) / (n(n − 1)) in integers, then rounded once to double, so no cancellation
    /// loses the variance of a bright, quiet pixel or of a dark one.
    /// </summary>
    public double Variance(int x, int y, int c)
    {
        int i = y * Width + x;
        long n = _count[i];
        if (n < 2)
        {
            return 0;
        }

        BigInteger sum = (BigInteger)_sum[3 * i + c];
        BigInteger squares = ((BigInteger)_sumSquaresHigh[3 * i + c] << 128) + (BigInteger)_sumSquaresLow[3 * i + c];
        WideSums? wide = Wide(i);
        if (wide is null)
        {
            return (double)((n * squares) - (sum * sum)) / ((double)n * (n - 1)) / (Scale * Scale);
        }

        sum += wide.SumOf(c);
        squares += wide.SquaresOf(c);
        return WideSums.Ratio((n * squares) - (sum * sum), (BigInteger)n * (n - 1), -64);
    }

    /// <summary>
    /// The variance of pixel (x, y)'s mean, channel c: <see cref="Variance"/> / n, the squared
    /// standard error of the pixel value; 0 with fewer than two samples.
    /// </summary>
    public double VarianceOfMean(int x, int y, int c)
    {
        long n = _count[y * Width + x];
        return n < 2 ? 0 : Variance(x, y, c) / n;
    }

    /// <summary>Accumulates one pixel's tile of samples, already reduced by the caller.</summary>
    internal void Store(int x, int y, in PixelAccumulator a)
    {
        int i = y * Width + x;
        _count[i] += a.Count;
        for (int c = 0; c < 3; c++)
        {
            _sum[3 * i + c] += a.Sum(c);
            AddSquares(3 * i + c, a.SumSquaresLow(c), a.SumSquaresHigh(c));
        }

        if (a.Wide is not null && ReferenceEquals(a.Wide, Wide(i)))
        {
            // The accumulator added into this film's own sums (see AccumulatorFor): only their growth is new.
            Charge(a.Wide.Bytes - a.WideBytesBefore);
        }
        else if (a.Wide is not null)
        {
            AddWide(i, a.Wide);
        }
    }

    private WideSums? Wide(int i) => Volatile.Read(ref _wide)?[i];

    /// <summary>
    /// An accumulator for pixel (x, y) that adds wide values straight into the film's own sums for
    /// that pixel (when it has them), so a pass over bright pixels allocates nothing per pixel; only
    /// the thread that owns the pixel's tile may use it, and must hand it to <see cref="Store"/>.
    /// </summary>
    internal PixelAccumulator AccumulatorFor(int x, int y)
    {
        WideSums? wide = Wide(y * Width + x);
        return new PixelAccumulator { Wide = wide, WideBytesBefore = wide?.Bytes ?? 0 };
    }

    /// <summary>Adds a pixel's wide sums; <paramref name="sums"/> is taken over (not copied) when the pixel has none yet, so the caller must not use it again.</summary>
    private void AddWide(int i, WideSums sums)
    {
        WideSums?[] table = WideTable();
        WideSums? mine = table[i];
        if (mine is null)
        {
            table[i] = sums;
            Interlocked.Increment(ref _widePixels);
            Charge(sums.Bytes);
            return;
        }

        long before = mine.Bytes;
        mine.Add(sums);
        Charge(mine.Bytes - before);
    }

    private WideSums?[] WideTable()
    {
        WideSums?[]? table = Volatile.Read(ref _wide);
        if (table is not null)
        {
            return table;
        }

        long bytes = 24 + ((long)Width * Height * 8);
        Charge(bytes);
        var fresh = new WideSums?[Width * Height];
        WideSums?[]? raced = Interlocked.CompareExchange(ref _wide, fresh, null);
        if (raced is not null)
        {
            Charge(-bytes);
            return raced;
        }

        return fresh;
    }

    private void Charge(long bytes)
    {
        long total = Interlocked.Add(ref _wideBytes, bytes);
        if (bytes > 0 && total > WideBytesLimit)
        {
            throw new PathBench.Io.MemoryBudgetException(string.Create(System.Globalization.CultureInfo.InvariantCulture,
                $"the exact sums of the {WidePixels} pixels with sample values of 2^32 or more ({PathBench.Io.MemoryBudget.Format(total)}, at most {WideSums.MaxBytesPerPixel} bytes a pixel) exceed the {PathBench.Io.MemoryBudget.Format(Math.Max(0, WideBytesLimit))} the memory budget leaves the {Width}x{Height} film; raise the budget with the global option --max-memory SIZE (--max-memory {(((Int128)Width * Height * WideSums.MaxBytesPerPixel) + PathBench.Io.MemoryBudget.Current.Bytes + (1L << 30) - 1) >> 30}G would do for any values)"));
        }
    }

    private void AddSquares(int i, UInt128 low, ulong high)
    {
        UInt128 before = _sumSquaresLow[i];
        _sumSquaresLow[i] = before + low;
        _sumSquaresHigh[i] = checked((uint)(_sumSquaresHigh[i] + high + (_sumSquaresLow[i] < before ? 1UL : 0UL)));
    }

    internal void AddDropped(long nonFinite) => NonFiniteSamples += nonFinite;

    /// <summary>Adds another film of the same size (a disjoint sample range) into this one; exact.</summary>
    public void Merge(Film other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (other.Width != Width || other.Height != Height)
        {
            throw new ArgumentException($"cannot merge a {other.Width}×{other.Height} film into a {Width}×{Height} one", nameof(other));
        }

        for (int i = 0; i < _count.Length; i++)
        {
            _count[i] += other._count[i];
        }

        for (int i = 0; i < _sum.Length; i++)
        {
            _sum[i] += other._sum[i];
            AddSquares(i, other._sumSquaresLow[i], other._sumSquaresHigh[i]);
        }

        foreach ((int i, WideSums sums) in other.WideEntries())
        {
            // A copy: the other film keeps its own.
            var copy = new WideSums();
            copy.Add(sums);
            AddWide(i, copy);
        }

        AddDropped(other.NonFiniteSamples);
    }

    /// <summary>Whether both films hold the same size, counts, sums and dropped-sample counts, bit for bit.</summary>
    public bool SameSums(Film other)
    {
        ArgumentNullException.ThrowIfNull(other);
        return other.Width == Width && other.Height == Height
            && other.NonFiniteSamples == NonFiniteSamples
            && _count.AsSpan().SequenceEqual(other._count) && _sum.AsSpan().SequenceEqual(other._sum)
            && _sumSquaresLow.AsSpan().SequenceEqual(other._sumSquaresLow) && _sumSquaresHigh.AsSpan().SequenceEqual(other._sumSquaresHigh)
            && WideEntries().SequenceEqual(other.WideEntries(), EntryComparer.Instance);
    }

    // The accumulation file (Accumulation/AccumulationFile.cs) reads and writes these planes as they lie in memory.
    internal long[] CountPlane => _count;

    internal Int128[] SumPlane => _sum;

    internal UInt128[] SquaresLowPlane => _sumSquaresLow;

    internal uint[] SquaresHighPlane => _sumSquaresHigh;

    internal void SetDropped(long nonFinite) => NonFiniteSamples = nonFinite;

    /// <summary>The wide sums by pixel index, ascending.</summary>
    internal IReadOnlyList<KeyValuePair<int, WideSums>> WideEntries()
    {
        WideSums?[]? table = Volatile.Read(ref _wide);
        var entries = new List<KeyValuePair<int, WideSums>>();
        for (int i = 0; table is not null && i < table.Length; i++)
        {
            if (table[i] is { } sums)
            {
                entries.Add(new(i, sums));
            }
        }

        return entries;
    }

    /// <summary>Sets a pixel's wide sums (the accumulation file's reader); the pixel must have none yet.</summary>
    internal void SetWide(int i, WideSums sums)
    {
        if (Wide(i) is not null)
        {
            throw new InvalidOperationException($"pixel {i} already has wide sums");
        }

        AddWide(i, sums);
    }

    private sealed class EntryComparer : IEqualityComparer<KeyValuePair<int, WideSums>>
    {
        public static readonly EntryComparer Instance = new();

        public bool Equals(KeyValuePair<int, WideSums> a, KeyValuePair<int, WideSums> b) => a.Key == b.Key && a.Value.SameValues(b.Value);

        public int GetHashCode(KeyValuePair<int, WideSums> e) => e.Key;
    }

    /// <summary>The image of pixel means as float RGB, row 0 at the top, channels interleaved.</summary>
    public float[] ToRgb()
    {
        var data = new float[3 * Width * Height];
        for (int y = 0; y < Height; y++)
        {
            for (int x = 0; x < Width; x++)
            {
                for (int c = 0; c < 3; c++)
                {
                    data[3 * (y * Width + x) + c] = (float)Mean(x, y, c);
                }
            }
        }

        return data;
    }
}

/// <summary>One pixel's running fixed-point sums; a struct so the per-sample path allocates nothing.</summary>
internal struct PixelAccumulator
{
    private Int128 _r, _g, _b;
    private UInt128 _rr, _gg, _bb;
    private ulong _rrHigh, _ggHigh, _bbHigh;

    public long Count;
    public long NonFinite;

    /// <summary>The channel values too bright for the fixed-point sums; null until one arrives (a reference, so the struct stays small).</summary>
    public WideSums? Wide;

    /// <summary>The bytes <see cref="Wide"/> held when it was the film's own (<see cref="Film.AccumulatorFor"/>), so the film charges only the growth.</summary>
    public long WideBytesBefore;

    public void Add(Rgb v)
    {
        if (!v.IsFinite)
        {
            NonFinite++;
            return;
        }

        Count++;
        if (Math.Abs(v.R) >= Film.MaxValue || Math.Abs(v.G) >= Film.MaxValue || Math.Abs(v.B) >= Film.MaxValue)
        {
            AddWide(v);
            return;
        }

        Accumulate(v.R, ref _r, ref _rr, ref _rrHigh);
        Accumulate(v.G, ref _g, ref _gg, ref _ggHigh);
        Accumulate(v.B, ref _b, ref _bb, ref _bbHigh);
    }

    public readonly Int128 Sum(int c) => c == 0 ? _r : c == 1 ? _g : _b;

    public readonly UInt128 SumSquaresLow(int c) => c == 0 ? _rr : c == 1 ? _gg : _bb;

    public readonly ulong SumSquaresHigh(int c) => c == 0 ? _rrHigh : c == 1 ? _ggHigh : _bbHigh;

    // Rare (a sample at or above 2^32): each channel goes where its own magnitude puts it, so the
    // value a channel adds, q = round(v · 2^32), is the same in both places.
    private void AddWide(Rgb v)
    {
        Wide ??= new WideSums();
        for (int c = 0; c < 3; c++)
        {
            double value = c == 0 ? v.R : c == 1 ? v.G : v.B;
            if (Math.Abs(value) >= Film.MaxValue)
            {
                Wide.Add(c, value);
            }
            else if (c == 0)
            {
                Accumulate(value, ref _r, ref _rr, ref _rrHigh);
            }
            else if (c == 1)
            {
                Accumulate(value, ref _g, ref _gg, ref _ggHigh);
            }
            else
            {
                Accumulate(value, ref _b, ref _bb, ref _bbHigh);
            }
        }
    }

    private static void Accumulate(double v, ref Int128 sum, ref UInt128 squares, ref ulong carries)
    {
        // |v| < 2^32, so |q| < 2^64 and q² < 2^128: one 64×64 → 128-bit product, exact.
        double q = Math.Round(v * Film.Scale);
        sum += (Int128)q;
        ulong magnitude = (ulong)Math.Abs(q);
        ulong high = Math.BigMul(magnitude, magnitude, out ulong low);
        UInt128 square = new(high, low);
        UInt128 before = squares;
        squares += square;
        if (squares < before)
        {
            carries++;
        }
    }
}
