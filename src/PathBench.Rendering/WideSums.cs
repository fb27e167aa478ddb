using System.Numerics;

namespace PathBench.Rendering;

/// <summary>
/// One pixel's exact sums of q = v · 2^32 and q² per channel over its channel values of magnitude
/// ≥ 2^32 (see <see cref="Film"/>), as fixed-point integers of 64-bit words that grow with the
/// magnitudes seen and never beyond what any finite double needs. A value is added with no
/// allocation (a few word additions with carry); the words are reallocated only when a value or a
/// sum needs more bits than they hold, which happens at most a few times per pixel.
/// </summary>
/// <remarks>
/// Why the widths are bounded: for |v| ≥ 2^32, q = m · 2^s with m the 53-bit significand and
/// 12 ≤ s ≤ 1003 (IEEE 754 binary64: the largest finite double is below 2^1024), so |q| &lt; 2^1056 and
/// q² &lt; 2^2112; a pixel holds fewer than 2^31 samples (sample ranges are 32-bit), so |Σq| &lt; 2^1087
/// and Σq² &lt; 2^2143: at most <see cref="MaxSumWords"/> and <see cref="MaxSquareWords"/> words with the
/// two bits of room kept below (a sign bit and one for the carry of the next addition).
/// Integer addition is associative, so the values (not the widths, which depend on the order the
/// magnitudes arrived in and are never observable) are the same for any thread count, tile order,
/// shard split or merge order.
/// </remarks>
internal sealed class WideSums
{
    /// <summary>Words of a channel's Σq at most: ⌈(1087 + 2) / 64⌉.</summary>
    public const int MaxSumWords = 18;

    /// <summary>Words of a channel's Σq² at most: ⌈(2143 + 1) / 64⌉.</summary>
    public const int MaxSquareWords = 34;

    // Object header and fields (16 + 8 + 4 + 4) and the array's header and length (24), on a 64-bit runtime.
    private const int OverheadBytes = 32 + 24;

    /// <summary>
    /// The most bytes one pixel's wide sums can hold: the object, its array of 3 × (18 + 34) words,
    /// and the pixel's reference in the film's table (8): 1312 bytes.
    /// </summary>
    public const int MaxBytesPerPixel = OverheadBytes + (3 * (MaxSumWords + MaxSquareWords) * sizeof(ulong)) + 8;

    // Per channel c: Σq in words [c·(S+Q), c·(S+Q)+S) as two's complement, then Σq² in the next Q words, unsigned; little-endian word order.
    private ulong[] _words;
    private int _sumWords;
    private int _squareWords;

    /// <summary>Empty sums; the first value sizes the words for its magnitude.</summary>
    public WideSums()
        : this(0, 0)
    {
    }

    private WideSums(int sumWords, int squareWords)
    {
        _sumWords = sumWords;
        _squareWords = squareWords;
        _words = new ulong[3 * (sumWords + squareWords)];
    }

    /// <summary>Bytes these sums hold in memory (the object and its words, not the film's reference to it).</summary>
    public long Bytes => OverheadBytes + ((long)_words.Length * sizeof(ulong));

    /// <summary>Adds channel value <paramref name="v"/> (finite, |v| ≥ 2^32) to channel <paramref name="c"/>.</summary>
    public void Add(int c, double v)
    {
        long bits = BitConverter.DoubleToInt64Bits(v);
        int exponent = (int)((bits >> 52) & 0x7FF);
        ulong m = (ulong)((bits & ((1L << 52) - 1)) | (1L << 52));
        // v = m · 2^(exponent − 1075); times 2^32. |v| ≥ 2^32 means exponent ≥ 1055, so the shift is ≥ 12.
        int shift = exponent - 1075 + 32;
        if (exponent == 0x7FF || shift < 0)
        {
            throw new ArgumentOutOfRangeException(nameof(v), v, "wide sums take finite values of magnitude 2^32 or more");
        }

        // |q| < 2^(shift + 53); q² < 2^(2·shift + 106).
        Reserve(c, shift + 53, (2 * shift) + 106);
        Span<ulong> sum = Sum(c);
        Span<ulong> squares = Squares(c);
        Span<ulong> term = stackalloc ulong[3];
        term.Clear();
        Place(term, m, 0, shift & 63);
        if (bits < 0)
        {
            SubtractAt(sum, term[..2], shift >> 6);
        }
        else
        {
            AddAt(sum, term[..2], shift >> 6);
        }

        ulong high = Math.BigMul(m, m, out ulong low);
        term.Clear();
        Place(term, low, high, (2 * shift) & 63);
        AddAt(squares, term, (2 * shift) >> 6);
    }

    /// <summary>Adds another pixel's wide sums.</summary>
    public void Add(WideSums other)
    {
        ArgumentNullException.ThrowIfNull(other);
        for (int c = 0; c < 3; c++)
        {
            Reserve(c, other.SumBits(c) + 1, other.SquareBits(c) + 1);
            Span<ulong> sum = Sum(c);
            ReadOnlySpan<ulong> theirs = other.Sum(c);
            // Sign-extend the other sum to this width, then add word by word (two's complement).
            ulong extension = (long)theirs[^1] < 0 ? ulong.MaxValue : 0;
            ulong carry = 0;
            for (int w = 0; w < sum.Length; w++)
            {
                sum[w] = AddWithCarry(sum[w], w < theirs.Length ? theirs[w] : extension, ref carry);
            }

            AddAt(Squares(c), other.Squares(c), 0);
        }
    }

    /// <summary>
    /// Writes Σq (<paramref name="squares"/> false) or Σq² of channel <paramref name="c"/> as the
    /// shortest little-endian two's complement bytes (what <see cref="BigInteger.ToByteArray(bool, bool)"/>
    /// gives, signed) into <paramref name="destination"/> (at least 8 bytes more than the words hold); returns the length.
    /// </summary>
    public int WriteMinimal(int c, bool squares, Span<byte> destination)
    {
        ReadOnlySpan<byte> bytes = System.Runtime.InteropServices.MemoryMarshal.AsBytes((ReadOnlySpan<ulong>)(squares ? Squares(c) : Sum(c)));
        bytes.CopyTo(destination);
        int n = bytes.Length;
        // Squares are unsigned: a zero byte above them keeps a set top bit from reading as a sign.
        byte sign = !squares && n > 0 && (sbyte)bytes[n - 1] < 0 ? (byte)0xFF : (byte)0;
        if (squares)
        {
            destination[n++] = 0;
        }

        while (n > 1 && destination[n - 1] == sign && ((destination[n - 2] ^ sign) & 0x80) == 0)
        {
            n--;
        }

        if (n == 0)
        {
            destination[0] = 0;
            n = 1;
        }

        return n;
    }

    /// <summary>Σq of channel <paramref name="c"/> as an integer.</summary>
    public BigInteger SumOf(int c) => new(System.Runtime.InteropServices.MemoryMarshal.AsBytes(Sum(c)), isUnsigned: false, isBigEndian: false);

    /// <summary>Σq² of channel <paramref name="c"/> as an integer.</summary>
    public BigInteger SquaresOf(int c) => new(System.Runtime.InteropServices.MemoryMarshal.AsBytes(Squares(c)), isUnsigned: true, isBigEndian: false);

    /// <summary>Sums holding the given integers (the accumulation file's reader); null when one is beyond the range any samples can reach.</summary>
    public static WideSums? FromIntegers(ReadOnlySpan<BigInteger> sums, ReadOnlySpan<BigInteger> squares)
    {
        int sumWords = 1, squareWords = 1;
        for (int c = 0; c < 3; c++)
        {
            sumWords = Math.Max(sumWords, WordsFor(BigInteger.Abs(sums[c]).GetBitLength() + 2));
            squareWords = Math.Max(squareWords, WordsFor(squares[c].GetBitLength() + 1));
        }

        if (sumWords > MaxSumWords || squareWords > MaxSquareWords)
        {
            return null;
        }

        var wide = new WideSums(sumWords, squareWords);
        for (int c = 0; c < 3; c++)
        {
            // The minimal two's complement bytes go at the bottom; the words above carry the sign.
            wide.Sum(c).Fill(sums[c].Sign < 0 ? ulong.MaxValue : 0);
            if (!sums[c].TryWriteBytes(System.Runtime.InteropServices.MemoryMarshal.AsBytes(wide.Sum(c)), out _, isUnsigned: false, isBigEndian: false)
                || !squares[c].TryWriteBytes(System.Runtime.InteropServices.MemoryMarshal.AsBytes(wide.Squares(c)), out _, isUnsigned: true, isBigEndian: false))
            {
                return null;
            }
        }

        return wide;
    }

    /// <summary>
    /// numerator / divisor · 2^<paramref name="exponent"/> as a double, from integers only: the
    /// quotient is taken to at least 64 significant bits, cut to 62 and scaled by a power of two
    /// (exact, IEEE 754), so the result is the same on every machine and within a few units in the
    /// last place of the true ratio.
    /// </summary>
    public static double Ratio(BigInteger numerator, BigInteger divisor, int exponent)
    {
        if (numerator.IsZero)
        {
            return 0;
        }

        BigInteger magnitude = BigInteger.Abs(numerator);
        long shift = Math.Max(0, 64 + divisor.GetBitLength() - magnitude.GetBitLength());
        BigInteger quotient = (magnitude << (int)shift) / divisor;
        int cut = (int)Math.Max(0, quotient.GetBitLength() - 62);
        double value = Math.ScaleB((double)(long)(quotient >> cut), (int)(exponent - shift + cut));
        return numerator.Sign < 0 ? -value : value;
    }

    /// <summary>Whether two pixels' sums hold the same integers (their widths may differ).</summary>
    public bool SameValues(WideSums other)
    {
        ArgumentNullException.ThrowIfNull(other);
        for (int c = 0; c < 3; c++)
        {
            if (SumOf(c) != other.SumOf(c) || SquaresOf(c) != other.SquaresOf(c))
            {
                return false;
            }
        }

        return true;
    }

    private Span<ulong> Sum(int c) => _words.AsSpan(c * (_sumWords + _squareWords), _sumWords);

    private Span<ulong> Squares(int c) => _words.AsSpan((c * (_sumWords + _squareWords)) + _sumWords, _squareWords);

    // Bits of |Σq| (two's complement magnitude bound) and of Σq² as they stand.
    private int SumBits(int c)
    {
        ReadOnlySpan<ulong> sum = Sum(c);
        if (sum.IsEmpty)
        {
            return 0;
        }

        ulong sign = (long)sum[^1] < 0 ? ulong.MaxValue : 0;
        int w = sum.Length - 1;
        while (w > 0 && sum[w] == sign)
        {
            w--;
        }

        return (64 * w) + 64 - BitOperations.LeadingZeroCount(sum[w] ^ sign);
    }

    private int SquareBits(int c)
    {
        ReadOnlySpan<ulong> squares = Squares(c);
        if (squares.IsEmpty)
        {
            return 0;
        }

        int w = squares.Length - 1;
        while (w > 0 && squares[w] == 0)
        {
            w--;
        }

        return (64 * w) + 64 - BitOperations.LeadingZeroCount(squares[w]);
    }

    private static int WordsFor(long bits) => (int)((bits + 63) / 64);

    /// <summary>
    /// Widens the words so that channel <paramref name="c"/>'s sum and the addend of
    /// <paramref name="addendBits"/> bits both fit below the top two bits (so their sum cannot
    /// overflow), and likewise the squares below the top bit. Widths only grow, to what the largest
    /// magnitude needs, so a pixel whose values stay within a factor of 2^31 or so grows once.
    /// </summary>
    private void Reserve(int c, int addendBits, int addendSquareBits)
    {
        bool sumRoom = _sumWords > 0 && addendBits <= (64 * _sumWords) - 2 && (Sum(c)[^1] >> 62) is 0 or 3;
        bool squareRoom = _squareWords > 0 && addendSquareBits <= (64 * _squareWords) - 1 && (long)Squares(c)[^1] >= 0;
        if (sumRoom && squareRoom)
        {
            return;
        }

        int sumWords = _sumWords, squareWords = _squareWords;
        if (!sumRoom)
        {
            sumWords = Math.Min(MaxSumWords, Math.Max(_sumWords + 1, WordsFor(Math.Max(addendBits, SumBits(c)) + 2)));
        }

        if (!squareRoom)
        {
            squareWords = Math.Min(MaxSquareWords, Math.Max(_squareWords + 1, WordsFor(Math.Max(addendSquareBits, SquareBits(c)) + 1)));
        }

        if (sumWords == _sumWords && squareWords == _squareWords)
        {
            // Only reachable past the bound the type documents (2^31 samples of the largest double).
            throw new InvalidOperationException("wide sums beyond the range of 2^31 finite double samples");
        }

        var words = new ulong[3 * (sumWords + squareWords)];
        for (int k = 0; k < 3; k++)
        {
            Span<ulong> to = words.AsSpan(k * (sumWords + squareWords), sumWords + squareWords);
            ReadOnlySpan<ulong> from = Sum(k);
            from.CopyTo(to);
            to[from.Length..sumWords].Fill(!from.IsEmpty && (long)from[^1] < 0 ? ulong.MaxValue : 0);
            Squares(k).CopyTo(to[sumWords..]);
        }

        _words = words;
        _sumWords = sumWords;
        _squareWords = squareWords;
    }

    // term = (high:low) << bit, over up to three words (bit < 64).
    private static void Place(Span<ulong> term, ulong low, ulong high, int bit)
    {
        if (bit == 0)
        {
            term[0] = low;
            term[1] = high;
            return;
        }

        term[0] = low << bit;
        term[1] = (high << bit) | (low >> (64 - bit));
        term[2] = high >> (64 - bit);
    }

    // target += term · 2^(64·at), carries run to the top word (the caller reserved room for them).
    private static void AddAt(Span<ulong> target, ReadOnlySpan<ulong> term, int at)
    {
        ulong carry = 0;
        int w = at;
        for (int k = 0; k < term.Length && w < target.Length; k++, w++)
        {
            target[w] = AddWithCarry(target[w], term[k], ref carry);
        }

        for (; carry != 0 && w < target.Length; w++)
        {
            target[w] = AddWithCarry(target[w], 0, ref carry);
        }
    }

    // target −= term · 2^(64·at) in two's complement: borrows run to the top word.
    private static void SubtractAt(Span<ulong> target, ReadOnlySpan<ulong> term, int at)
    {
        ulong borrow = 0;
        int w = at;
        for (int k = 0; k < term.Length && w < target.Length; k++, w++)
        {
            ulong t = term[k] + borrow;
            ulong nextBorrow = (t < borrow || target[w] < t) ? 1UL : 0UL;
            target[w] -= t;
            borrow = nextBorrow;
        }

        for (; borrow != 0 && w < target.Length; w++)
        {
            borrow = target[w] == 0 ? 1UL : 0UL;
            target[w]--;
        }
    }

    private static ulong AddWithCarry(ulong a, ulong b, ref ulong carry)
    {
        ulong sum = a + b;
        ulong c1 = sum < a ? 1UL : 0UL;
        ulong result = sum + carry;
        ulong c2 = result < sum ? 1UL : 0UL;
        carry = c1 | c2;
        return result;
    }
}
