using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// Radical inverses in prime bases, for the Halton (1960) and Hammersley sequences,
/// plain and with random digit permutations (one independent permutation of the digits
/// 0..b−1 per digit position, the randomization of Braaten &amp; Weller 1979 made random).
/// </summary>
public static class RadicalInverse
{
    /// <summary>How many prime bases are available (and so the Halton dimension limit).</summary>
    public const int PrimeCount = 1024;

    private static readonly int[] PrimeTable = BuildPrimes(PrimeCount);

    /// <summary>The first <see cref="PrimeCount"/> primes, 2, 3, 5, …</summary>
    public static ReadOnlySpan<int> Primes => PrimeTable;

    /// <summary>The radical inverse of <paramref name="index"/> in base <paramref name="b"/>: its digits mirrored about the radix point.</summary>
    [MethodImpl(InliningOptions.HotPath)]
    public static double Plain(uint index, int b)
    {
        if (b == 2)
        {
            return BitReversal.Reverse(index) * (1.0 / 4294967296.0);
        }

        // Reverse the digits as an integer, then divide once: a single rounding, so the
        // result is the correctly rounded value of the exact rational digit expansion.
        ulong reversed = 0;
        ulong scale = 1;
        uint ub = (uint)b;
        while (index != 0)
        {
            uint next = index / ub;
            reversed = reversed * ub + (index - next * ub);
            scale *= ub;
            index = next;
        }

        return reversed / (double)scale;
    }

    /// <summary>
    /// <see cref="Plain"/> of the consecutive indices from <paramref name="first"/> (wrapping past 2^32 − 1 as the scalar
    /// index does), eight at a time on 512-bit lanes where the machine has them, else four on 256-bit ones (AVX), when the
    /// base is not 2: per lane the same
    /// integers as the scalar loop, held exactly in doubles (the index below 2^32, so ⌊i / b⌋ of the correctly rounded
    /// quotient is the integer quotient, <see cref="Generators.Lanes"/>' reasoning; the reversed digits and b^k stay below
    /// 2^53), a lane stepping only while its index is not yet 0, then the one division, correctly rounded as the scalar
    /// one. Base 2, a single point and machines without the vectors take the scalar form. With
    /// <paramref name="rotate"/> each value is then rotated by <paramref name="offset"/> as
    /// <see cref="Generators.PointRandomizations.Rotate"/> does (s − 1 where s ≥ 1, else s − 0: the same bits).
    /// </summary>
    public static void PlainBatch(uint first, int b, Span<double> xs, bool rotate = false, double offset = 0) =>
        PlainBatchForm(first, b, xs, rotate, offset, Generators.Lanes.Best);

    /// <summary>
    /// <see cref="PlainBatch"/> on the given lanes (tests run each form): eight 512-bit lanes, four 256-bit ones (with AVX;
    /// <see cref="Quads"/>), or the scalar loop.
    /// </summary>
    internal static void PlainBatchForm(uint first, int b, Span<double> xs, bool rotate, double offset, Generators.LaneWidth width)
    {
        if (width == Generators.LaneWidth.Wide && b > 2 && xs.Length > 1)
        {
            PlainLanes<Octets, Vector512<double>>(first, b, xs, rotate, offset);
            return;
        }

        if (width == Generators.LaneWidth.Narrow && Avx.IsSupported && b > 2 && xs.Length > 1)
        {
            PlainLanes<Quads, Vector256<double>>(first, b, xs, rotate, offset);
            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            double x = Plain(first + (uint)i, b);
            xs[i] = rotate ? Generators.PointRandomizations.Rotate(x, offset) : x;
        }
    }

    // PlainBatch's lanes, TLanes.Count at a time: per lane the scalar loop's integers held exactly in doubles, a lane
    // stepping only while its index is not yet 0, then the one division and the rotation. Its own method: inlined into a
    // sampler's batch (dynamic PGO inlined the whole chain into Hammersley's Sample2DBatch, both dimensions' SampleBatch),
    // the lane steps ran out of the JIT's inlining budget and stayed four calls a quad, their vectors passed through
    // memory (seen with DOTNET_JitDisasm).
    [MethodImpl(InliningOptions.Kernel)]
    private static void PlainLanes<TLanes, TVector>(uint first, int b, Span<double> xs, bool rotate, double offset)
        where TLanes : struct, IRadixLanes<TVector>
        where TVector : struct
    {
        for (int i = 0; i < xs.Length; i += TLanes.Count)
        {
            (TVector reversed, TVector scale) = TLanes.Reverse(TLanes.Indices(first + (uint)i), b);
            TLanes.Store(TLanes.Finish(reversed, scale, rotate, offset), xs.Slice(i, Math.Min(TLanes.Count, xs.Length - i)));
        }
    }

    /// <summary>The lane steps of <see cref="PlainLanes"/> on one vector width.</summary>
    private interface IRadixLanes<TVector>
        where TVector : struct
    {
        static abstract int Count { get; }

        /// <summary>first, first + 1, … wrapping as uint, exactly as doubles.</summary>
        static abstract TVector Indices(uint first);

        /// <summary>The reversed digits and b^digits of each lane.</summary>
        static abstract (TVector Reversed, TVector Scale) Reverse(TVector index, int b);

        /// <summary>reversed / scale, rotated by offset as <see cref="Generators.PointRandomizations.Rotate"/> when asked (s − 1 where s ≥ 1).</summary>
        static abstract TVector Finish(TVector reversed, TVector scale, bool rotate, double offset);

        static abstract void Store(TVector x, Span<double> destination);
    }

    // Eight 512-bit lanes (AVX-512): the index lanes the low 32 bits of first + lane, converted exactly.
    private readonly struct Octets : IRadixLanes<Vector512<double>>
    {
        public static int Count => 8;

        [MethodImpl(InliningOptions.ShortMethod)]
        public static Vector512<double> Indices(uint first) =>
            Vector512.ConvertToDouble((Vector512.Create((ulong)first) + Vector512.Create(0UL, 1, 2, 3, 4, 5, 6, 7)) & Vector512.Create(0xFFFFFFFFUL));

        [MethodImpl(InliningOptions.ShortMethod)]
        public static (Vector512<double> Reversed, Vector512<double> Scale) Reverse(Vector512<double> index, int b)
        {
            Vector512<double> bd = Vector512.Create((double)b), reversed = Vector512<double>.Zero, scale = Vector512<double>.One;
            for (Vector512<double> active, next; (active = ~Vector512.Equals(index, Vector512<double>.Zero)) != Vector512<double>.Zero; index = next)
            {
                next = Vector512.Floor(index / bd);
                (reversed, scale) = (Vector512.ConditionalSelect(active, (reversed * bd) + (index - (next * bd)), reversed), Vector512.ConditionalSelect(active, scale * bd, scale));
            }

            return (reversed, scale);
        }

        [MethodImpl(InliningOptions.ShortMethod)]
        public static Vector512<double> Finish(Vector512<double> reversed, Vector512<double> scale, bool rotate, double offset) =>
            rotate ? Wrap((reversed / scale) + Vector512.Create(offset)) : reversed / scale;

        [MethodImpl(InliningOptions.ShortMethod)]
        public static void Store(Vector512<double> x, Span<double> destination) => Generators.Lanes.Store(x, destination);

        [MethodImpl(InliningOptions.ShortMethod)]
        private static Vector512<double> Wrap(Vector512<double> s) => s - (Vector512.GreaterThanOrEqual(s, Vector512<double>.One) & Vector512<double>.One);
    }

    // Four 256-bit lanes (AVX, no AVX-512): the index lanes wrap as uint and are converted exactly (v − 2^31 as a signed
    // integer, vcvtdq2pd, plus 2^31).
    private readonly struct Quads : IRadixLanes<Vector256<double>>
    {
        public static int Count => 4;

        [MethodImpl(InliningOptions.ShortMethod)]
        public static Vector256<double> Indices(uint first) =>
            Avx.ConvertToVector256Double(((Vector128.Create(first) + Vector128.Create(0u, 1u, 2u, 3u)) ^ Vector128.Create(0x80000000u)).AsInt32()) + Vector256.Create(2147483648.0);

        [MethodImpl(InliningOptions.ShortMethod)]
        public static (Vector256<double> Reversed, Vector256<double> Scale) Reverse(Vector256<double> index, int b)
        {
            Vector256<double> bd = Vector256.Create((double)b), reversed = Vector256<double>.Zero, scale = Vector256<double>.One;
            for (Vector256<double> active, next; (active = ~Vector256.Equals(index, Vector256<double>.Zero)) != Vector256<double>.Zero; index = next)
            {
                next = Vector256.Floor(index / bd);
                (reversed, scale) = (Vector256.ConditionalSelect(active, (reversed * bd) + (index - (next * bd)), reversed), Vector256.ConditionalSelect(active, scale * bd, scale));
            }

            return (reversed, scale);
        }

        [MethodImpl(InliningOptions.ShortMethod)]
        public static Vector256<double> Finish(Vector256<double> reversed, Vector256<double> scale, bool rotate, double offset) =>
            rotate ? Wrap((reversed / scale) + Vector256.Create(offset)) : reversed / scale;

        [MethodImpl(InliningOptions.ShortMethod)]
        public static void Store(Vector256<double> x, Span<double> destination)
        {
            if (destination.Length == 4)
            {
                x.CopyTo(destination);
                return;
            }

            for (int k = 0; k < destination.Length; k++)
            {
                destination[k] = x.GetElement(k);
            }
        }

        [MethodImpl(InliningOptions.ShortMethod)]
        private static Vector256<double> Wrap(Vector256<double> s) => s - (Vector256.GreaterThanOrEqual(s, Vector256<double>.One) & Vector256<double>.One);
    }

    /// <summary>
    /// The radical inverse with digit position k mapped through its own random permutation π_k of 0..b−1
    /// (Braaten &amp; Weller 1979's digit permutations, drawn at random as in Owen's random digit permutations),
    /// each π_k drawn from hashes of (<paramref name="key"/>, k). The zeros above the index's leading digit go through
    /// their positions' permutations too: π_k(0) at position k is tied to π_k(d) of every longer index, and that tie
    /// is what keeps the first b^m points one per b^−m stratum.
    /// <para>
    /// How π_k is drawn: as an ordering of the values 0..b−1 drawn one digit at a time, each image uniform among the
    /// values not yet taken (sampling without replacement, which gives every permutation the same probability). The
    /// image of 0, z_k, comes for all positions at once as the base-b digits of one 64-bit uniform hash U of the key
    /// (z_k = ⌊U_k·b / 2^64⌋, U_{k+1} = U_k·b mod 2^64, exact integer steps), so the permuted zeros of an index with
    /// L digits sum, with everything below the last digit position, to the fraction U_L / 2^64 scaled by b^−L: one
    /// multiply per position and no permutation evaluated for the zeros. The images of digits 1, 2, … are drawn only
    /// as far as a digit asks: for b ≤ <see cref="FullTableBase"/> by Fisher &amp; Yates (1938) steps (as Durstenfeld
    /// 1964 gives them) on a table of b values, for larger b by drawing uniform values and redrawing those already
    /// taken, up to digit <see cref="DrawnDigits"/> − 1; the digits from <see cref="DrawnDigits"/> on (large bases only)
    /// are mapped by the hashed permutation σ_k of 0..b−1−<see cref="DrawnDigits"/> (Kensler 2013) onto the values the
    /// drawn digits left, in increasing order (σ_k's single images are uniform, but pairs of neighbouring digits are
    /// not: measured 3–6 % from uniform in total variation for lengths near 51–111, so those digits are only
    /// approximately a uniformly random permutation; the previous construction hashed every digit this way). Draw n of
    /// position k (<see cref="DigitMap.DrawOne"/>) is the 32-bit half v of the 64-bit hash h = <see cref="DrawHash"/>(Combine(key, k), ⌊n / 2⌋)
    /// (one multiply: a bijection of the position key ⊕ ⌊n / 2⌋·M, so each half is exactly uniform for a uniform key),
    /// the low half for even n and the high half for odd n, taken into a range of m values by ⌊v·m / 2^32⌋ (Lemire 2019,
    /// "Fast Random Integer Generation in an Interval", ACM TOMACS 29(1): the multiply-shift without its rejection step;
    /// integer arithmetic, the same in every lane form): of the 2^32 values of v, each result takes ⌊2^32 / m⌋ or
    /// ⌈2^32 / m⌉, so each value's probability is within 2^−32 of 1/m (relative error below m·2^−32, total variation from
    /// uniform at most m·2^−34 a draw; the previous draws, one hash each by ⌊unit(h)·m⌋ with 53 bits, had m·2^−53).
    /// Fisher–Yates step j takes draw j − 1 with m = b − j; the large bases' draws all have m = b. The joint distribution of the zeros
    /// z_0 … z_{L−1} a 32-bit index can reach is within b^L·2^−64 &lt; b·2^−32 of uniform (total variation), and the
    /// part below the index's digits is uniform to 2^−64.
    /// </para>
    /// This one-point form is the plain reference that <see cref="PermutedBatch"/> is tested against.
    /// </summary>
    public static double Permuted(uint index, int b, ulong key)
    {
        if (b == 2)
        {
            return Base2(index, SampleHash.Mix64(key));
        }

        uint ub = (uint)b;
        ulong u = ZeroDigits(key);
        Span<uint> storage = stackalloc uint[DigitMap.StorageLength];
        Span<uint> sorted = stackalloc uint[DrawnDigits];
        double invBase = 1.0 / b;
        double weight = invBase;
        double sum = 0;
        int k = 0;
        for (; index != 0; k++)
        {
            uint next = index / ub;
            uint digit = index - next * ub;
            uint zero = (uint)Math.BigMul(u, ub, out u);
            uint permuted = zero;
            if (digit != 0)
            {
                var map = new DigitMap(ub, SampleHash.Combine(key, (ulong)k), zero, storage);
                if (map.Drawn(digit))
                {
                    permuted = map.Image(digit);
                }
                else
                {
                    map.SortedDrawn(sorted);
                    permuted = DigitMap.Remaining(KenslerPermutation.Permute(digit - DrawnDigits, ub - DrawnDigits, map.Seed), sorted);
                }
            }

            sum += permuted * weight;
            weight *= invBase;
            index = next;
        }

        return UnitInterval.Clamp(sum + Below(u, b, k));
    }

    /// <summary>
    /// <see cref="Permuted"/> of the consecutive indices <paramref name="firstIndex"/>, <paramref name="firstIndex"/>+1, …
    /// (one per element of <paramref name="xs"/>, wrapping past 2^32 − 1 as the index arithmetic does), bit for bit.
    /// Per run of at most <see cref="RunLength"/> indices: the zero digits and the fractions below each length come
    /// from one chain of multiplies; each digit position's permutation is evaluated once for every digit the run
    /// meets there (a contiguous range modulo b): the drawn images sixteen hashes at a time, the taken values of a
    /// large base kept in one vector, and the σ walks of all positions together in vector lanes
    /// (<see cref="KenslerPermutation.PermuteEach"/>); the indices' digits advance as an odometer (no division per
    /// index), and each point is a sum of table entries in the reference's order. Runs of at most <see cref="DrawnDigits"/>
    /// indices that need no σ (what the renderer's cache asks for: a pixel's block of 16 samples) take the lean short
    /// forms of <see cref="ShortRun"/> instead.
    /// </summary>
    public static void PermutedBatch(uint firstIndex, int b, ulong key, Span<double> xs) =>
        PermutedBatchForm(firstIndex, b, key, xs, ConflictLanesChosen ? LargeBaseImages.ConflictLanes : LargeBaseImages.Scan);

    /// <summary>
    /// <see cref="PermutedBatch"/> of two bases (a pair of dimensions, each with its own key) over the same indices, bit
    /// for bit: a one-digit short run in two bases above <see cref="FullTableBase"/> (what the renderer's cache asks of
    /// the deep dimensions) in one call (<see cref="ShortRunPair"/>), everything else as two <see cref="PermutedBatch"/> calls.
    /// </summary>
    public static void PermutedPairBatch(uint firstIndex, int b0, int b1, ulong key0, ulong key1, Span<double> xs, Span<double> ys)
    {
        if (xs.Length > 0 && xs.Length <= DrawnDigits && xs.Length == ys.Length
            && (ShortRunPair(firstIndex, (uint)b0, (uint)b1, key0, key1, xs, ys) || ShortTablePair(firstIndex, (uint)b0, (uint)b1, key0, key1, xs, ys)))
        {
            return;
        }

        PermutedBatch(firstIndex, b0, key0, xs);
        PermutedBatch(firstIndex, b1, key1, ys);
    }

    /// <summary>
    /// <see cref="ShortRun"/>'s form for two large bases on AVX2 (<see cref="ScanLanes"/>) for both dimensions of a pair in
    /// one method: one call, one prologue and one vzeroupper, and the second dimension's hashes free to start while the
    /// first one's comparisons run. False (nothing written) when the run is not of that kind.
    /// </summary>
    [SkipLocalsInit] // every image read is written first
    [MethodImpl(InliningOptions.Kernel)] // its own frame (see ImageStorage)
    private static bool ShortRunPair(uint first, uint b0, uint b1, ulong key0, ulong key1, Span<double> xs, Span<double> ys)
    {
        uint last = first + (uint)(xs.Length - 1);
        if (last < first || last >= DrawnDigits || b0 <= FullTableBase || b1 <= FullTableBase || ConflictLanesChosen
            || Generators.Lanes.Best != Generators.LaneWidth.Narrow || !Avx2.IsSupported)
        {
            return false;
        }

        double invBase0 = 1.0 / b0, invBase1 = 1.0 / b1;
        ulong u0 = ZeroDigits(key0), u1 = ZeroDigits(key1);
        double belowZero0 = Fraction(u0), belowZero1 = Fraction(u1);
        uint zero0 = (uint)Math.BigMul(u0, b0, out u0), zero1 = (uint)Math.BigMul(u1, b1, out u1);
        double belowOne0 = Fraction(u0) * invBase0, belowOne1 = Fraction(u1) * invBase1;
        ulong positionKey0 = SampleHash.Combine(key0, 0), positionKey1 = SampleHash.Combine(key1, 0);
        Unsafe.SkipInit(out ImageStorage storage0);
        Unsafe.SkipInit(out ImageStorage storage1);
        Span<uint> images0 = storage0, images1 = storage1;
        uint count0 = FirstDraws(b0, positionKey0, zero0, images0);
        uint count1 = FirstDraws(b1, positionKey1, zero1, images1);
        if (count0 <= last)
        {
            LaterRounds(b0, positionKey0, last, images0, count0, Generators.LaneWidth.Narrow);
        }

        if (count1 <= last)
        {
            LaterRounds(b1, positionKey1, last, images1, count1, Generators.LaneWidth.Narrow);
        }

        OneDigitQuads(first, images0, invBase0, belowZero0, belowOne0, xs);
        OneDigitQuads(first, images1, invBase1, belowZero1, belowOne1, ys);
        return true;
    }

    /// <summary>
    /// <see cref="ShortRun"/>'s one-digit form for two bases on the Fisher–Yates table (17 … 61 in a pixel's block of 16) on
    /// AVX2, both dimensions of a pair in one call (as <see cref="ShortRunPair"/> for the large bases): one call and one
    /// prologue where two <see cref="PermutedBatch"/> calls each went through <see cref="PermutedBatchForm"/> and
    /// <see cref="ShortRun"/>. False (nothing written) when the run is not of that kind.
    /// </summary>
    [SkipLocalsInit] // every image read is written first
    [MethodImpl(InliningOptions.Kernel)] // its own frame (see ImageStorage)
    private static bool ShortTablePair(uint first, uint b0, uint b1, ulong key0, ulong key1, Span<double> xs, Span<double> ys)
    {
        uint last = first + (uint)(xs.Length - 1);
        if (last < first || last >= b0 || last >= b1 || b0 == 2 || b1 == 2 || b0 > FullTableBase || b1 > FullTableBase
            || Generators.Lanes.Best != Generators.LaneWidth.Narrow || !Avx2.IsSupported)
        {
            return false;
        }

        Unsafe.SkipInit(out ImageStorage storage0);
        Unsafe.SkipInit(out ImageStorage storage1);
        OneDigitFromTable(first, last, b0, key0, storage0, xs);
        OneDigitFromTable(first, last, b1, key1, storage1, ys);
        return true;
    }

    // One dimension of ShortTablePair: the zero digits and the fractions below lengths 0 and 1 as ShortRun makes them,
    // position 0's table up to the run's last digit, the points four at a time.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void OneDigitFromTable(uint first, uint last, uint b, ulong key, Span<uint> images, Span<double> xs)
    {
        double invBase = 1.0 / b;
        ulong u = ZeroDigits(key);
        double below0 = Fraction(u);
        uint zero = (uint)Math.BigMul(u, b, out u);
        FisherYates(b, SampleHash.Combine(key, 0), zero, last, images);
        OneDigitQuads(first, images, invBase, below0, Fraction(u) * invBase, xs);
    }

    /// <summary>
    /// Whether this machine draws a large base's images sixteen at a time with conflict detection (AVX-512 CD; see
    /// <see cref="ShortRun"/>); without it those runs take <see cref="LargeBaseImages.Scan"/>, the same bits.
    /// </summary>
    internal static bool ConflictLanes { get; } = Vector512.IsHardwareAccelerated && Avx512CD.IsSupported;

    /// <summary>Whether the batches take the conflict-detection form by default: in the 512-bit lane form alone (<see cref="Generators.SamplerLanes"/>).</summary>
    private static bool ConflictLanesChosen => ConflictLanes && Generators.Lanes.Wide512;

    /// <summary>
    /// <see cref="PermutedBatch"/> with a chosen form for the one-digit short runs of a base above <see cref="FullTableBase"/>
    /// (tests run each; <see cref="LargeBaseImages.ConflictLanes"/> takes <see cref="LargeBaseImages.Scan"/> on a machine without AVX-512 CD).
    /// </summary>
    internal static void PermutedBatchForm(uint firstIndex, int b, ulong key, Span<double> xs, LargeBaseImages form)
    {
        if (form == LargeBaseImages.ConflictLanes && !ConflictLanes)
        {
            form = LargeBaseImages.Scan;
        }

        if (xs.Length > 0 && xs.Length <= DrawnDigits && ShortRun(firstIndex, (uint)b, key, xs, form))
        {
            return;
        }

        if (b == 2)
        {
            ulong shift = SampleHash.Mix64(key);
            for (int i = 0; i < xs.Length; i++)
            {
                xs[i] = Base2(firstIndex + (uint)i, shift);
            }

            return;
        }

        while (xs.Length > 0)
        {
            // A run stops at RunLength points and where the index would wrap past 2^32 − 1.
            int n = (int)Math.Min((ulong)Math.Min(xs.Length, RunLength), (ulong)uint.MaxValue - firstIndex + 1);
            PermutedRun(firstIndex, (uint)b, key, xs[..n]);
            firstIndex += (uint)n;
            xs = xs[n..];
        }
    }

    /// <summary>
    /// A run of at most <see cref="DrawnDigits"/> indices whose digit maps are drawn images only (no σ), made by the
    /// short forms; false when the run is not of that kind (the general form <see cref="PermutedRun"/> then makes it).
    /// Runs whose indices all have one digit (first + n − 1 &lt; b, the common case of the bases from 17 on in a pixel's
    /// first samples) need only position 0's map, the zero hash and the fractions below lengths 0 and 1: each point is
    /// π_0(i)·b^−1 + the fraction below length 1 (for index 0, the fraction below length 0), made eight lanes at a time;
    /// the images come from the Fisher–Yates table (b ≤ <see cref="FullTableBase"/>) or, above it, for digits below
    /// <see cref="DrawnDigits"/>, with conflict detection (<see cref="ConflictImages"/>). Runs of several digits in a base
    /// up to <see cref="FullTableBase"/> (bases 3 to 13 in a pixel's first 16 samples): <see cref="SmallBaseRun"/>.
    /// The same arithmetic as <see cref="Permuted"/>.
    /// </summary>
    [SkipLocalsInit] // every image read is written first
    [MethodImpl(InliningOptions.Kernel)] // its own frame (see ImageStorage), out of HaltonSampler.SampleBatch
    private static bool ShortRun(uint first, uint b, ulong key, Span<double> xs, LargeBaseImages form)
    {
        uint last = first + (uint)(xs.Length - 1);
        if (last < first || b == 2)
        {
            return false;
        }

        if (last >= b)
        {
            if (b > FullTableBase)
            {
                return false;
            }

            SmallBaseRun(first, last, b, key, xs);
            return true;
        }

        if (b > FullTableBase && (last >= DrawnDigits || form == LargeBaseImages.General))
        {
            return false;
        }

        // Below(u, b, 0) and Below(u, b, 1) without the table: b^0 is 1 (a product by 1 is exact) and b^−1 is 1.0 / b.
        double invBase = 1.0 / b;
        ulong u = ZeroDigits(key);
        double below0 = Fraction(u);
        uint zero = (uint)Math.BigMul(u, b, out u);
        double below1 = Fraction(u) * invBase;
        ulong positionKey = SampleHash.Combine(key, 0);
        Unsafe.SkipInit(out ImageStorage storage);
        Span<uint> images = storage;
        if (b <= FullTableBase)
        {
            FisherYates(b, positionKey, zero, last, images);
        }
        else if (form == LargeBaseImages.ConflictLanes)
        {
            ConflictImages(b, positionKey, zero, last, images);
        }
        else
        {
            ScanImages(b, positionKey, zero, last, images);
        }

        if (last < DrawnDigits && Generators.Lanes.Wide512)
        {
            OneDigitLanes(first, images, invBase, below0, below1, xs);
            return true;
        }

        if (Avx.IsSupported)
        {
            OneDigitQuads(first, images, invBase, below0, below1, xs);
            return true;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            uint index = first + (uint)i;
            xs[i] = index == 0 ? UnitInterval.Clamp(below0) : UnitInterval.Clamp((images[(int)index] * invBase) + below1);
        }

        return true;
    }

    // ShortRun's images: a local of fixed size, not a stackalloc, so that ShortRun is compiled by tiers (a method with a
    // stackalloc and a loop is compiled once, fully optimized, at its first call, before the classes whose static
    // readonly fields it reads are initialized: those reads then stayed loads behind initialization checks, in the loop
    // of the points too, which spilled its vectors around them). A stackalloc also kept the method out of its callers;
    // the methods with these locals are NoInlining instead: inlined into HaltonSampler.SampleBatch, the caller's
    // prologue zeroed the storage on every call, halton/none's and cranley-patterson's too (12.4 → 16.3 ms a frame).
    [InlineArray(FullTableBase)]
    private struct ImageStorage
    {
        private uint _first;
    }

    [InlineArray(MaxDigits + 1)]
    private struct DigitStorage
    {
        private uint _first;
    }

    [InlineArray(MaxDigits + 1)]
    private struct BelowStorage
    {
        private double _first;
    }

    [InlineArray(SmallBaseTables)]
    private struct TableStorage
    {
        private uint _first;
    }

    // The one-digit points of indices first … first + n − 1 (≤ 15) on eight 64-bit lanes: the image by a lane permute, then
    // the scalar form's multiply, add and clamp per lane (no fused multiply-add), index 0 the fraction below length 0.
    [SkipLocalsInit]
    private static void OneDigitLanes(uint first, ReadOnlySpan<uint> images, double invBase, double below0, double below1, Span<double> xs)
    {
        Vector512<uint> index = Vector512.Create(first) + Vector512.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u, 8u, 9u, 10u, 11u, 12u, 13u, 14u, 15u);
        index = Vector512.Min(index, Vector512.Create(first + (uint)(xs.Length - 1))); // lanes past the run repeat its last index
        Vector512<uint> image = Avx512F.PermuteVar16x32(Vector512.LoadUnsafe(ref MemoryMarshal.GetReference(images)), index);
        (Vector512<ulong> lowImages, Vector512<ulong> highImages) = Vector512.Widen(image);
        Vector512<double> low = OneDigitPoints(lowImages, Vector512.Equals(Vector512.WidenLower(index), Vector512<ulong>.Zero), invBase, below0, below1);
        Vector512<double> high = OneDigitPoints(highImages, Vector512.Equals(Vector512.WidenUpper(index), Vector512<ulong>.Zero), invBase, below0, below1);
        if (xs.Length == 2 * Vector512<double>.Count)
        {
            low.StoreUnsafe(ref MemoryMarshal.GetReference(xs));
            high.StoreUnsafe(ref MemoryMarshal.GetReference(xs), (nuint)Vector512<double>.Count);
            return;
        }

        Span<double> all = stackalloc double[2 * Vector512<double>.Count];
        low.StoreUnsafe(ref MemoryMarshal.GetReference(all));
        high.StoreUnsafe(ref MemoryMarshal.GetReference(all), (nuint)Vector512<double>.Count);
        all[..xs.Length].CopyTo(xs);
    }

    // The one-digit points of indices first … first + n − 1 four at a time on 256-bit lanes (AVX): the run's images are
    // consecutive entries of the table, converted exactly (each below b < 2^31, vcvtdq2pd), then the scalar form's multiply,
    // add and clamp per lane (no fused multiply-add); index 0, the fraction below length 0, and the last part-group as
    // the scalar loop.
    [MethodImpl(InliningOptions.ShortMethod)] // into ShortRun: one method, one vzeroupper, for a large base's short run
    private static void OneDigitQuads(uint first, ReadOnlySpan<uint> images, double invBase, double below0, double below1, Span<double> xs)
    {
        // The clamp as Lanes.Clamp's (vminpd against the largest double below 1: x where x < 1); the loop without bounds
        // checks (first + xs.Length ≤ 16 places of images, checked by the caller) and its constants outside it.
        Vector256<double> scale = Vector256.Create(invBase), below = Vector256.Create(below1), top = Vector256.Create(UnitInterval.BelowOne);
        ref uint image = ref Unsafe.Add(ref MemoryMarshal.GetReference(images), (int)first);
        ref double x = ref MemoryMarshal.GetReference(xs);
        int n = xs.Length, i = 0;
        for (; i <= n - 4; i += 4)
        {
            Avx.Min((Avx.ConvertToVector256Double(Vector128.LoadUnsafe(ref image, (nuint)i).AsInt32()) * scale) + below, top).StoreUnsafe(ref x, (nuint)i);
        }

        for (; i < n; i++)
        {
            Unsafe.Add(ref x, i) = UnitInterval.Clamp((Unsafe.Add(ref image, i) * invBase) + below1);
        }

        if (first == 0)
        {
            x = UnitInterval.Clamp(below0);
        }
    }

    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector512<double> OneDigitPoints(Vector512<ulong> image, Vector512<ulong> isZero, double invBase, double below0, double below1)
    {
        Vector512<double> x = (Vector512.ConvertToDouble(image) * Vector512.Create(invBase)) + Vector512.Create(below1);
        x = Vector512.ConditionalSelect(isZero.AsDouble(), Vector512.Create(below0), x);
        return Vector512.ConditionalSelect(Vector512.LessThan(x, Vector512.Create(1.0)), x, Vector512.Create(UnitInterval.BelowOne));
    }

    /// <summary>
    /// A run of indices with several digits in a base up to <see cref="FullTableBase"/> (no wrap past 2^32 − 1): each digit
    /// position's Fisher–Yates table drawn up to the largest digit the run meets there (DigitMap's table and draws), the
    /// zeros and the fractions below each length from the one chain, then the points by an odometer, each a sum in the
    /// reference's order.
    /// </summary>
    [SkipLocalsInit] // every table entry read is written first
    [MethodImpl(InliningOptions.Kernel)] // its own frame (see ImageStorage)
    private static void SmallBaseRun(uint first, uint last, uint b, ulong key, Span<double> xs)
    {
        // Fixed-size locals, not stackallocs (see ImageStorage).
        Unsafe.SkipInit(out DigitStorage digitStorage);
        Unsafe.SkipInit(out BelowStorage belowStorage);
        Unsafe.SkipInit(out TableStorage tableStorage);
        Span<uint> digits = digitStorage;
        Span<double> below = belowStorage;
        Span<uint> tables = tableStorage;
        ulong u = ZeroDigits(key);
        int length = 0, lengthOfLast = 0;
        for (uint low = first, high = last; high != 0; lengthOfLast++)
        {
            uint lowNext = low / b, highNext = high / b;
            uint from = low - (lowNext * b);
            uint top = high - low >= b - 1 - from ? b - 1 : from + (high - low); // the largest digit the run meets here
            digits[lengthOfLast] = from;
            length = low != 0 ? lengthOfLast + 1 : length;
            below[lengthOfLast] = Below(u, (int)b, lengthOfLast);
            uint zero = (uint)Math.BigMul(u, b, out u);
            FisherYates(b, SampleHash.Combine(key, (ulong)lengthOfLast), zero, top, tables.Slice(lengthOfLast * FullTableBase, FullTableBase));
            low = lowNext;
            high = highNext;
        }

        below[lengthOfLast] = Below(u, (int)b, lengthOfLast);
        double invBase = 1.0 / b;
        if (Generators.Lanes.Best != Generators.LaneWidth.Scalar && Avx2.IsSupported)
        {
            SmallBaseLanes(first, b, lengthOfLast, digits, tables, below, invBase, xs);
            return;
        }

        for (int i = 0; ; i++)
        {
            double weight = invBase;
            double sum = 0;
            for (int k = 0; k < length; k++)
            {
                sum += tables[(k * FullTableBase) + (int)digits[k]] * weight;
                weight *= invBase;
            }

            xs[i] = UnitInterval.Clamp(sum + below[length]);
            if (i + 1 == xs.Length)
            {
                return;
            }

            // Next index: add one to the lowest digit, carrying.
            for (int k = 0; ; k++)
            {
                length = Math.Max(length, k + 1);
                if (++digits[k] < b)
                {
                    break;
                }

                digits[k] = 0;
            }
        }
    }

    /// <summary>
    /// <see cref="SmallBaseRun"/>'s points on AVX2, the run's n ≤ 16 indices in two vectors of eight 32-bit lanes (the lanes
    /// past the run repeat its last index), the odometer replaced by each lane's own digits: position k's digit of index
    /// first + l is x mod b with x = (first's digit k) + the carry out of position k − 1 (l at position 0), the carry
    /// ⌊x / b⌋ by a multiply-shift (⌊x·⌈2^20 / b⌉ / 2^20⌋, exact for x·(⌈2^20 / b⌉·b − 2^20) &lt; 2^20, here x &lt; 80 and b ≤ 64).
    /// Each point is the scalar loop's sum in its order: 0 + t_0 + t_1 + … over the positions below the index's length (a
    /// lane past its length adds +0, which leaves its non-negative sum's bits as they are), t_k = (double)image · w_k with
    /// the scalar loop's weights w_0 = 1/b, w_{k+1} = w_k · (1/b) (no fused multiply-add), the image gathered from position
    /// k's table (its b entries written by <see cref="FisherYates"/>); then + the fraction below the index's length
    /// (gathered) and the clamp by vminpd (x where x &lt; 1, as <see cref="UnitInterval.Clamp"/>). The length of index i
    /// is the number of positions k with i ≥ b^k. Same bits as the scalar loop (<c>PermutedRadicalInverseTests</c>).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    private static unsafe void SmallBaseLanes(uint first, uint b, int positions, ReadOnlySpan<uint> digits, ReadOnlySpan<uint> tables, ReadOnlySpan<double> below, double invBase, Span<double> xs)
    {
        int n = xs.Length;
        Vector256<int> last = Vector256.Create(n - 1);
        Vector256<int> offsetLow = Vector256.Min(Vector256.Create(0, 1, 2, 3, 4, 5, 6, 7), last);
        Vector256<int> offsetHigh = Vector256.Min(Vector256.Create(8, 9, 10, 11, 12, 13, 14, 15), last);
        Vector256<uint> indexLow = Vector256.Create(first) + offsetLow.AsUInt32(), indexHigh = Vector256.Create(first) + offsetHigh.AsUInt32();
        Vector256<int> vb = Vector256.Create((int)b), magic = Vector256.Create((1 << 20) / (int)b + 1);
        Vector256<int> carryLow = offsetLow, carryHigh = offsetHigh, lengthLow = Vector256<int>.Zero, lengthHigh = Vector256<int>.Zero;
        Vector256<double> sum0 = Vector256<double>.Zero, sum1 = Vector256<double>.Zero, sum2 = Vector256<double>.Zero, sum3 = Vector256<double>.Zero;
        double weight = invBase;
        uint power = 1; // b^k ≤ the last index for every position k of the run
        fixed (uint* table = tables)
        {
            for (int k = 0; k < positions; k++)
            {
                Vector256<int> digit = Vector256.Create((int)digits[k]);
                Vector256<int> xLow = digit + carryLow, xHigh = digit + carryHigh;
                carryLow = Avx2.ShiftRightLogical(Avx2.MultiplyLow(xLow, magic), 20);
                carryHigh = Avx2.ShiftRightLogical(Avx2.MultiplyLow(xHigh, magic), 20);
                Vector256<int> imageLow = Avx2.GatherVector256((int*)table + (k * FullTableBase), xLow - Avx2.MultiplyLow(carryLow, vb), 4);
                Vector256<int> imageHigh = Avx2.GatherVector256((int*)table + (k * FullTableBase), xHigh - Avx2.MultiplyLow(carryHigh, vb), 4);
                Vector256<uint> p = Vector256.Create(power);
                Vector256<int> activeLow = Vector256.Equals(Vector256.Max(indexLow, p), indexLow).AsInt32();
                Vector256<int> activeHigh = Vector256.Equals(Vector256.Max(indexHigh, p), indexHigh).AsInt32();
                lengthLow -= activeLow;
                lengthHigh -= activeHigh;
                Vector256<double> w = Vector256.Create(weight);
                sum0 += (Avx.ConvertToVector256Double(imageLow.GetLower()) * w) & Avx2.ConvertToVector256Int64(activeLow.GetLower()).AsDouble();
                sum1 += (Avx.ConvertToVector256Double(imageLow.GetUpper()) * w) & Avx2.ConvertToVector256Int64(activeLow.GetUpper()).AsDouble();
                sum2 += (Avx.ConvertToVector256Double(imageHigh.GetLower()) * w) & Avx2.ConvertToVector256Int64(activeHigh.GetLower()).AsDouble();
                sum3 += (Avx.ConvertToVector256Double(imageHigh.GetUpper()) * w) & Avx2.ConvertToVector256Int64(activeHigh.GetUpper()).AsDouble();
                weight *= invBase;
                power *= b;
            }
        }

        Vector256<double> top = Vector256.Create(UnitInterval.BelowOne);
        fixed (double* fraction = below)
        {
            StoreQuad(Avx.Min(sum0 + Avx2.GatherVector256(fraction, lengthLow.GetLower(), 8), top), xs, 0);
            StoreQuad(Avx.Min(sum1 + Avx2.GatherVector256(fraction, lengthLow.GetUpper(), 8), top), xs, 4);
            StoreQuad(Avx.Min(sum2 + Avx2.GatherVector256(fraction, lengthHigh.GetLower(), 8), top), xs, 8);
            StoreQuad(Avx.Min(sum3 + Avx2.GatherVector256(fraction, lengthHigh.GetUpper(), 8), top), xs, 12);
        }
    }

    // Points start … start + 3 of xs where the run has them.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void StoreQuad(Vector256<double> x, Span<double> xs, int start)
    {
        if (start + 4 <= xs.Length)
        {
            x.StoreUnsafe(ref MemoryMarshal.GetReference(xs), (nuint)start);
            return;
        }

        for (int i = start; i < xs.Length; i++)
        {
            xs[i] = x.GetElement(i - start);
        }
    }

    // Draws DigitMap.Fill makes at once on this machine's lanes (sixteen on 512-bit ones, else eight: two a hash):
    // FisherYates asks for whole groups (the scalar tail costs more per draw than a group's unused lanes).
    private static readonly uint DrawGroup = Generators.Lanes.Best == Generators.LaneWidth.Wide ? 16u : 8u;

    // Tables of SmallBaseRun: a short run's positions in a base up to FullTableBase, FullTableBase slots each (base 3: a
    // 32-bit index's 21 positions).
    private const int SmallBaseTables = MaxDigits * FullTableBase;

    // A digit position's Fisher–Yates table (b ≤ FullTableBase) after the steps of digits 1 … top: DigitMap's table and draws.
    [SkipLocalsInit] // the draws are written before they are read
    [MethodImpl(InliningOptions.Kernel)] // its own frame (see ImageStorage)
    private static void FisherYates(uint b, ulong positionKey, uint zero, uint top, Span<uint> table)
    {
        if (Avx.IsSupported && table.Length >= FullTableBase)
        {
            // The identity in 256-bit stores (the copy routine's call cost more than the whole table), as far as place b − 1:
            // no step reads a place from b on (step j's place is j + a draw below b − j).
            ref uint place = ref MemoryMarshal.GetReference(table);
            Vector256<uint> identity = Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
            for (int k = 0; k < (int)b; k += 8)
            {
                (identity + Vector256.Create((uint)k)).StoreUnsafe(ref place, (nuint)k);
            }
        }
        else
        {
            DigitMap.Identity.AsSpan(0, (int)b).CopyTo(table);
        }

        table[(int)zero] = 0;
        table[0] = zero;
        if (top == 0)
        {
            return;
        }

        Unsafe.SkipInit(out ImageStorage storage); // not a stackalloc: see ImageStorage
        Span<uint> draws = storage;
        int n = (int)((top + DrawGroup - 1) & ~(DrawGroup - 1)); // whole groups: the vector form
        if (Generators.Lanes.Best == Generators.LaneWidth.Narrow && Avx2.IsSupported)
        {
            // DigitMap.FillForm's AVX2 form without the call: each group starts below b − 1 (k < top ≤ b − 1), so
            // m = max(b − 1 − n, 1) per lane.
            Vector256<ulong> product = DrawLaneProducts;
            for (int k = 0; k < n; k += 8)
            {
                Vector256<uint> m = Vector256.Max(Vector256.Create((int)b - 1 - k) - Vector256.Create(0, 1, 2, 3, 4, 5, 6, 7), Vector256<int>.One).AsUInt32();
                Draw8(positionKey, product, m).StoreUnsafe(ref MemoryMarshal.GetReference(draws), (nuint)k);
                product += Vector256.Create(unchecked(4 * SampleHash.ValueMultiplier));
            }
        }
        else
        {
            DigitMap.Fill(positionKey, b, true, 0, draws[..n]);
        }

        for (int j = 1; j <= (int)top; j++)
        {
            int r = j + (int)draws[j - 1];
            (table[j], table[r]) = (table[r], table[j]);
        }
    }

    /// <summary>
    /// The images of digits 1 … <paramref name="last"/> (≤ 15) of a base above <see cref="FullTableBase"/>, as
    /// <see cref="DigitMap"/> draws them (draw n's value w_n; digit j's image is the j-th w_n, in order, that is neither
    /// the image of 0 nor an earlier image, i.e. the j-th distinct value after z), sixteen lanes at a time: lane 0 … c − 1
    /// hold z and the images so far, the other lanes the next draws; AVX-512 CD's conflict detection marks every lane
    /// equal to an earlier one, and the lanes without a conflict, compressed to the front in order, are z and the images
    /// after this round. Rounds repeat until c exceeds <paramref name="last"/>.
    /// </summary>
    private static void ConflictImages(uint b, ulong positionKey, uint zero, uint last, Span<uint> images)
    {
        Vector512<uint> lanes = Vector512.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u, 8u, 9u, 10u, 11u, 12u, 13u, 14u, 15u);
        Vector512<ulong> m = Vector512.Create((ulong)b);
        Vector512<uint> kept = Vector512.Create(zero);
        uint count = 1;
        ulong next = 0; // the next draw number
        while (count <= last)
        {
            // Lane l ≥ count takes draw next + l − count: the sixteen draws of pairs ⌊next / 2⌋ … + 7 (draws from
            // 2·⌊next / 2⌋) moved up by count − (next mod 2) lanes (index l − count + (next mod 2) ≤ 15, as count ≥ 1).
            // DrawHash's pair·M for pair s + l is s·M + l·M modulo 2^64: one scalar multiply, the lanes' products constant.
            Vector512<ulong> n = Vector512.Create(unchecked((next >> 1) * SampleHash.ValueMultiplier));
            Vector512<uint> w = Draw16(positionKey, n + LaneProductsLow, m, m);
            w = Avx512F.PermuteVar16x32(w, lanes - Vector512.Create(count - (uint)(next & 1)));
            Vector512<uint> v = Vector512.ConditionalSelect(Vector512.LessThan(lanes, Vector512.Create(count)), kept, w);
            Vector512<uint> fresh = Vector512.Equals(Avx512CD.DetectConflicts(v), Vector512<uint>.Zero);
            kept = Avx512F.Compress(Vector512<uint>.Zero, fresh, v);
            next += 16 - count;
            count = (uint)BitOperations.PopCount(fresh.ExtractMostSignificantBits());
        }

        kept.StoreUnsafe(ref MemoryMarshal.GetReference(images));
    }

    /// <summary>
    /// <see cref="ConflictImages"/> without conflict detection (AVX2 and below): the same images. Each round draws as many
    /// values as images are still missing, rounded up to four (eight on AVX2: four hashes; <see cref="DigitMap.Fill"/>), and keeps each draw, in order,
    /// that equals neither z nor an earlier image; a draw equal to one of them is dropped, so a collision costs one more
    /// draw, not a round of sixteen. <see cref="ScanImagesForm"/> says how the taken values are held.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void ScanImages(uint b, ulong positionKey, uint zero, uint last, Span<uint> images) =>
        ScanImagesForm(b, positionKey, zero, last, images, Generators.Lanes.Best);

    /// <summary>
    /// <see cref="ScanImages"/> on the given lanes (tests run each). With AVX2 (<see cref="Generators.LaneWidth.Narrow"/>
    /// or <see cref="Generators.LaneWidth.Wide"/>) the first sixteen draws are kept or dropped at once (<see cref="FirstDraws"/>, 24 of them)
    /// and the few later ones (a round of sixteen is collision-free for b = 67 about 17 % of the time, for b = 331
    /// about 70 %) one by one against the images held in two eight-lane registers (<see cref="KeepScanned"/>). The scalar
    /// form holds the taken values in a set of b bits on the stack. <paramref name="images"/> needs
    /// 56 places (the first draws' kept values past the last image are written, and places 32–55 are the scratch of the
    /// 24 first draws).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    internal static void ScanImagesForm(uint b, ulong positionKey, uint zero, uint last, Span<uint> images, Generators.LaneWidth width)
    {
        if (width != Generators.LaneWidth.Scalar && Avx2.IsSupported && last > 0)
        {
            ScanLanes(b, positionKey, zero, last, images, width);
        }
        else
        {
            ScanBits(b, positionKey, zero, last, images);
        }
    }

    // ScanImagesForm on AVX2: inlined with FirstDraws into ShortRun (each method with 256-bit code ends in a vzeroupper;
    // one method for the whole short run), the rare later rounds a call.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void ScanLanes(uint b, ulong positionKey, uint zero, uint last, Span<uint> images, Generators.LaneWidth width)
    {
        uint count = FirstDraws(b, positionKey, zero, images);
        if (count <= last)
        {
            LaterRounds(b, positionKey, last, images, count, width);
        }
    }

    // ScanLanes' rounds after the first draws, while images are missing: each kept draw against the images so far.
    [SkipLocalsInit] // the draws are written before they are read
    [MethodImpl(InliningOptions.ColdPath)]
    private static void LaterRounds(uint b, ulong positionKey, uint last, Span<uint> images, uint count, Generators.LaneWidth width)
    {
        // The images so far in two registers, the places not yet taken holding b (no draw equals it).
        Vector256<uint> lanes = Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
        Vector256<uint> low = Vector256.ConditionalSelect(Vector256.LessThan(lanes, Vector256.Create(count)), Vector256.Create<uint>(images), Vector256.Create(b));
        Vector256<uint> high = Vector256.ConditionalSelect(Vector256.LessThan(lanes + Vector256.Create(8u), Vector256.Create(count)), Vector256.Create<uint>(images[8..]), Vector256.Create(b));
        Span<uint> draws = stackalloc uint[DrawnDigits];
        for (ulong next = FirstDrawCount; count <= last;)
        {
            int n = (int)((last + 8 - count) & ~7u); // whole groups of eight: four hashes, one Draw8
            DigitMap.FillForm(positionKey, b, false, next, draws[..n], width);
            next += (ulong)n;
            count = KeepScanned(draws[..n], images[..(1 + FirstDrawCount)], count, ref low, ref high);
        }
    }

    /// <summary>
    /// Draws 0 … 23 of a large base (m = b: <see cref="DigitMap.Fill"/>'s values, made here in registers: twelve hashes) kept
    /// in order after z where neither z nor an earlier draw equals them: z into images[0], the kept draws after it; the
    /// count of images. All at once: each draw j (broadcast) against the lanes after it (a constant lane mask per j), the
    /// fresh lanes packed to the front of each eight-lane third by a permute from a table of the 256 masks. Sixteen draws
    /// (fifteen images after z) had a collision for b = 67 … 181 in 87 … 52 % of the positions, and the later rounds
    /// (a branch that mispredicts, the draws one by one) cost more than eight more draws checked here; 24 leave fewer
    /// than fifteen images only when nine or more collide.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    private static uint FirstDraws(uint b, ulong positionKey, uint zero, Span<uint> images)
    {
        Span<uint> draws = images.Slice(DrawScratch, FirstDrawCount);
        Vector256<uint> m = Vector256.Create(b);
        Vector256<ulong> step = Vector256.Create(unchecked(4 * SampleHash.ValueMultiplier));
        Vector256<uint> d0 = Draw8(positionKey, DrawLaneProducts, m), d1 = Draw8(positionKey, DrawLaneProducts + step, m);
        Vector256<uint> d2 = Draw8(positionKey, DrawLaneProducts + (step + step), m);
        d0.StoreUnsafe(ref MemoryMarshal.GetReference(draws));
        d1.StoreUnsafe(ref MemoryMarshal.GetReference(draws), 8);
        d2.StoreUnsafe(ref MemoryMarshal.GetReference(draws), 16);
        Vector256<uint> z = Vector256.Create(zero);
        Vector256<uint> taken0 = Vector256.Equals(d0, z), taken1 = Vector256.Equals(d1, z), taken2 = Vector256.Equals(d2, z);
        // Written out (constant places and masks: no loop counters or index arithmetic).
        ref uint draw = ref MemoryMarshal.GetReference(draws);
        ref uint later = ref MemoryMarshal.GetReference(LaterLanes);
        FirstThird(ref draw, ref later, 0, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 1, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 2, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 3, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 4, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 5, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 6, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        FirstThird(ref draw, ref later, 7, d0, d1, d2, ref taken0, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 0, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 1, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 2, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 3, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 4, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 5, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 6, d1, d2, ref taken1, ref taken2);
        SecondThird(ref draw, ref later, 7, d1, d2, ref taken1, ref taken2);
        LastThird(ref draw, ref later, 0, d2, ref taken2);
        LastThird(ref draw, ref later, 1, d2, ref taken2);
        LastThird(ref draw, ref later, 2, d2, ref taken2);
        LastThird(ref draw, ref later, 3, d2, ref taken2);
        LastThird(ref draw, ref later, 4, d2, ref taken2);
        LastThird(ref draw, ref later, 5, d2, ref taken2);
        LastThird(ref draw, ref later, 6, d2, ref taken2);

        uint fresh0 = ~Vector256.ExtractMostSignificantBits(taken0) & 0xFF, fresh1 = ~Vector256.ExtractMostSignificantBits(taken1) & 0xFF;
        uint fresh2 = ~Vector256.ExtractMostSignificantBits(taken2) & 0xFF;
        ref uint image = ref MemoryMarshal.GetReference(images[..(1 + FirstDrawCount)]); // 1 + 8 + 8 + 8 places written at most
        image = zero;
        uint count = 1;
        Avx2.PermuteVar8x32(d0, LeftPackIndices(fresh0)).StoreUnsafe(ref image, count);
        count += (uint)BitOperations.PopCount(fresh0);
        Avx2.PermuteVar8x32(d1, LeftPackIndices(fresh1)).StoreUnsafe(ref image, count);
        count += (uint)BitOperations.PopCount(fresh1);
        Avx2.PermuteVar8x32(d2, LeftPackIndices(fresh2)).StoreUnsafe(ref image, count);
        return count + (uint)BitOperations.PopCount(fresh2);
    }

    // FirstDraws' comparisons of draw j (< 8) with the lanes after it in the first third and all lanes of the other two.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void FirstThird(ref uint draw, ref uint later, int j, Vector256<uint> d0, Vector256<uint> d1, Vector256<uint> d2, ref Vector256<uint> taken0, ref Vector256<uint> taken1, ref Vector256<uint> taken2)
    {
        Vector256<uint> w = Vector256.Create(Unsafe.Add(ref draw, j));
        taken0 |= Vector256.Equals(d0, w) & Vector256.LoadUnsafe(ref later, (nuint)(8 * j));
        taken1 |= Vector256.Equals(d1, w);
        taken2 |= Vector256.Equals(d2, w);
    }

    // Draw 8 + j against the lanes after it in the second third and all of the last.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void SecondThird(ref uint draw, ref uint later, int j, Vector256<uint> d1, Vector256<uint> d2, ref Vector256<uint> taken1, ref Vector256<uint> taken2)
    {
        Vector256<uint> w = Vector256.Create(Unsafe.Add(ref draw, 8 + j));
        taken1 |= Vector256.Equals(d1, w) & Vector256.LoadUnsafe(ref later, (nuint)(8 * j));
        taken2 |= Vector256.Equals(d2, w);
    }

    // Draw 16 + j against the lanes after it in the last third.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static void LastThird(ref uint draw, ref uint later, int j, Vector256<uint> d2, ref Vector256<uint> taken2) =>
        taken2 |= Vector256.Equals(d2, Vector256.Create(Unsafe.Add(ref draw, 16 + j))) & Vector256.LoadUnsafe(ref later, (nuint)(8 * j));

    // Draws FirstDraws makes at once (three groups of eight), and where in the images' storage it keeps them.
    private const int FirstDrawCount = 24;
    private const int DrawScratch = 32;

    // The lanes after lane j of eight (row j: all ones in lanes j + 1 … 7).
    private static ReadOnlySpan<uint> LaterLanes =>
    [
        0, ~0u, ~0u, ~0u, ~0u, ~0u, ~0u, ~0u,
        0, 0, ~0u, ~0u, ~0u, ~0u, ~0u, ~0u,
        0, 0, 0, ~0u, ~0u, ~0u, ~0u, ~0u,
        0, 0, 0, 0, ~0u, ~0u, ~0u, ~0u,
        0, 0, 0, 0, 0, ~0u, ~0u, ~0u,
        0, 0, 0, 0, 0, 0, ~0u, ~0u,
        0, 0, 0, 0, 0, 0, 0, ~0u,
        0, 0, 0, 0, 0, 0, 0, 0,
    ];

    // The permute that packs the lanes set in an eight-bit mask to the front, in order: byte l of entry mask is the l-th set
    // lane (the rest 0).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<uint> LeftPackIndices(uint mask) =>
        Avx2.ConvertToVector256Int32(Vector128.CreateScalarUnsafe(LeftPack[(int)mask]).AsByte()).AsUInt32();

    private static readonly ulong[] LeftPack = BuildLeftPack();

    private static ulong[] BuildLeftPack()
    {
        var table = new ulong[256];
        for (int mask = 0; mask < 256; mask++)
        {
            int at = 0;
            for (int lane = 0; lane < 8; lane++)
            {
                if (((mask >> lane) & 1) != 0)
                {
                    table[mask] |= (ulong)lane << (8 * at++);
                }
            }
        }

        return table;
    }

    // ScanLanes' later rounds: each draw kept at images[count] unless equal to one of the images so far (held in low and
    // high, b where not yet taken); the new count. Its own method with no call inside, so the registers stay registers.
    // A draw kept at a place past 15 is written to images but not to the registers: only images up to 15 are read.
    [MethodImpl(MethodImplOptions.NoInlining)]
    private static uint KeepScanned(ReadOnlySpan<uint> draws, Span<uint> images, uint count, ref Vector256<uint> low, ref Vector256<uint> high)
    {
        Vector256<uint> l = low, h = high;
        Vector256<uint> lanes = Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
        foreach (uint w in draws)
        {
            Vector256<uint> v = Vector256.Create(w);
            if (Vector256.EqualsAny(l, v) || Vector256.EqualsAny(h, v))
            {
                continue;
            }

            images[(int)count] = w;
            l = Vector256.ConditionalSelect(Vector256.Equals(lanes, Vector256.Create(count)), v, l);
            h = Vector256.ConditionalSelect(Vector256.Equals(lanes, Vector256.Create(count - 8)), v, h);
            count++;
        }

        low = l;
        high = h;
        return count;
    }

    // ScanImagesForm's scalar form: the taken values in a set of b bits.
    [SkipLocalsInit] // the draws are written before they are read, the set cleared
    private static void ScanBits(uint b, ulong positionKey, uint zero, uint last, Span<uint> images)
    {
        Span<uint> draws = stackalloc uint[DrawnDigits];
        Span<ulong> set = stackalloc ulong[(int)((b + 63) / 64)];
        set.Clear();
        set[(int)(zero >> 6)] |= 1UL << (int)zero;
        images[0] = zero;
        uint count = 1;
        for (ulong next = 0; count <= last;)
        {
            int n = (int)((last + 4 - count) & ~3u);
            DigitMap.FillForm(positionKey, b, false, next, draws[..n], Generators.LaneWidth.Scalar);
            next += (ulong)n;
            foreach (uint w in draws[..n])
            {
                ulong word = set[(int)(w >> 6)], bit = 1UL << (int)w;
                images[(int)count] = w;
                set[(int)(w >> 6)] = word | bit;
                count += (word & bit) != 0 ? 0u : 1u;
            }
        }
    }

    // l·M for the lanes l = 0 … 7 (M = SampleHash.ValueMultiplier).
    private static readonly Vector512<ulong> LaneProductsLow = Vector512.Create(0UL, 1UL, 2UL, 3UL, 4UL, 5UL, 6UL, 7UL) * SampleHash.ValueMultiplier;

    /// <summary>Points per run of <see cref="PermutedBatch"/>: bounds its stack tables.</summary>
    internal const int RunLength = 64;

    // Most digit positions of a 32-bit index in an odd base (base 3), and table slots of a run: position k meets at
    // most min(b, ⌊(RunLength − 1) / b^k⌋ + 2) digits, at most 1.5·63 + 2·21 in all.
    private const int MaxDigits = 21;
    private const int MaxSlots = 160;

    [SkipLocalsInit] // every table entry read is written first
    private static void PermutedRun(uint first, uint b, ulong key, Span<double> xs)
    {
        uint last = first + (uint)(xs.Length - 1);

        // Each position's digit of the first index and how many digits the run meets there (from the first and last
        // indices' prefixes ⌊i / b^k⌋), and the two indices' lengths.
        Span<uint> digits = stackalloc uint[MaxDigits + 1];
        Span<uint> counts = stackalloc uint[MaxDigits];
        int length = 0, lengthOfLast = 0;
        for (uint low = first, high = last; high != 0; lengthOfLast++)
        {
            uint lowNext = low / b, highNext = high / b;
            digits[lengthOfLast] = low - (lowNext * b);
            counts[lengthOfLast] = Math.Min(high - low + 1, b);
            length = low != 0 ? lengthOfLast + 1 : length;
            low = lowNext;
            high = highNext;
        }

        // Fractions below each length and the zero digits, from the one chain.
        Span<double> below = stackalloc double[MaxDigits + 1];
        Span<uint> table = stackalloc uint[MaxSlots];
        Span<int> start = stackalloc int[MaxDigits];
        Span<uint> offset = stackalloc uint[MaxDigits];
        Span<uint> inputs = stackalloc uint[MaxSlots];
        Span<uint> seeds = stackalloc uint[MaxSlots];
        Span<int> slots = stackalloc int[MaxSlots];
        Span<int> positionOf = stackalloc int[MaxSlots];
        Span<uint> storage = stackalloc uint[DigitMap.StorageLength];
        Span<uint> sorted = stackalloc uint[MaxDigitsAboveTable * DrawnDigits];
        ulong u = ZeroDigits(key);
        int walks = 0;
        int used = 0;
        for (int k = 0; k < lengthOfLast; k++)
        {
            below[k] = Below(u, (int)b, k);
            uint zero = (uint)Math.BigMul(u, b, out u);
            uint from = digits[k];
            int count = (int)counts[k];
            var map = new DigitMap(b, SampleHash.Combine(key, (ulong)k), zero, storage);
            start[k] = used;
            offset[k] = 0;
            bool walked = false;
            map.DrawTo(Math.Min(from + (uint)count - 1 >= b ? b - 1 : from + (uint)count - 1, DrawnDigits - 1));
            for (int j = 0; j < count; j++, used++)
            {
                uint digit = from + (uint)j;
                digit = digit >= b ? digit - b : digit;
                if (map.Drawn(digit))
                {
                    table[used] = map.Image(digit);
                    continue;
                }

                // σ_k of the digits past the drawn ones, mapped onto the values left once the walks are done.
                walked = true;
                inputs[walks] = digit - DrawnDigits;
                seeds[walks] = map.Seed;
                positionOf[walks] = k;
                slots[walks++] = used;
            }

            if (walked)
            {
                map.SortedDrawn(sorted.Slice(k * DrawnDigits, DrawnDigits));
            }
        }

        below[lengthOfLast] = Below(u, (int)b, lengthOfLast);
        if (walks > 0)
        {
            Span<uint> images = stackalloc uint[MaxSlots];
            KenslerPermutation.PermuteEach(b - DrawnDigits, inputs[..walks], seeds[..walks], images[..walks]);
            for (int w = 0; w < walks; w++)
            {
                table[slots[w]] = DigitMap.Remaining(images[w], sorted.Slice(positionOf[w] * DrawnDigits, DrawnDigits));
            }
        }

        // The first index's digits are each position's first table slot (offset 0); the odometer moves them.
        double invBase = 1.0 / b;
        if (lengthOfLast <= 1)
        {
            // Every index below b (the common case of a large base): one digit each, index 0 none.
            for (int i = 0; i < xs.Length; i++)
            {
                xs[i] = first + (uint)i == 0 ? UnitInterval.Clamp(below[0]) : UnitInterval.Clamp((table[i] * invBase) + below[1]);
            }

            return;
        }

        for (int i = 0; ; i++)
        {
            double weight = invBase;
            double sum = 0;
            for (int k = 0; k < length; k++)
            {
                sum += table[start[k] + (int)offset[k]] * weight;
                weight *= invBase;
            }

            xs[i] = UnitInterval.Clamp(sum + below[length]);
            if (i + 1 == xs.Length)
            {
                return;
            }

            // Next index: add one to the lowest digit, carrying.
            for (int k = 0; ; k++)
            {
                // A position that meets every digit (count b) comes back to its first slot.
                offset[k] = offset[k] + 1 == counts[k] ? 0 : offset[k] + 1;
                length = Math.Max(length, k + 1);
                if (++digits[k] < b)
                {
                    break;
                }

                digits[k] = 0;
            }
        }
    }

    // The 64-bit hash whose base-b digits are the positions' images of 0.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static ulong ZeroDigits(ulong key) => SampleHash.Combine(key, TailSalt);

    /// <summary>Bases up to this many draw their whole digit permutation on a table (Fisher–Yates); larger ones draw the first <see cref="DrawnDigits"/> images.</summary>
    internal const int FullTableBase = 64;

    /// <summary>Digits whose images a base above <see cref="FullTableBase"/> draws one by one; σ maps the rest.</summary>
    internal const int DrawnDigits = 16;

    // Digit positions of a 32-bit index in the smallest base above FullTableBase (67): the positions that can walk σ.
    private const int MaxDigitsAboveTable = 6;

    /// <summary>
    /// One digit position's permutation π_k (see <see cref="Permuted"/>), drawn lazily on caller-provided storage: for
    /// b ≤ <see cref="FullTableBase"/> a table of b values in Fisher–Yates order (images 0 … drawn − 1 final), for
    /// larger b the images of digits 0 … drawn − 1 (at most <see cref="DrawnDigits"/>).
    /// </summary>
    internal ref struct DigitMap
    {
        private const int Chunk = 16;
        public static readonly uint[] Identity = Enumerable.Range(0, FullTableBase).Select(i => (uint)i).ToArray();
        private readonly Span<uint> _values;
        private readonly Span<uint> _draws;
        private readonly uint _b;
        private readonly ulong _positionKey;
        private int _drawn;
        private ulong _attempt;
        private ulong _chunkStart;
        private ulong _chunkEnd;

        /// <summary>Storage: <see cref="StorageLength"/> values, written before they are read.</summary>
        public DigitMap(uint b, ulong positionKey, uint zero, Span<uint> storage)
        {
            _b = b;
            _positionKey = positionKey;
            _draws = storage.Slice(FullTableBase, Chunk);
            _chunkEnd = 0;
            if (b <= FullTableBase)
            {
                _values = storage[..(int)b];
                Identity.AsSpan(0, (int)b).CopyTo(_values);

                // The first Fisher–Yates step takes z into place 0; step j (from 1) uses draw j − 1.
                _values[(int)zero] = 0;
            }
            else
            {
                _values = storage[..DrawnDigits];
            }

            _values[0] = zero;
            _drawn = 1;
        }

        public const int StorageLength = FullTableBase + Chunk;

        /// <summary>The seed of σ_k: the low 32 bits of the position's key.</summary>
        public readonly uint Seed => (uint)_positionKey;

        /// <summary>Whether <paramref name="digit"/>'s image is drawn (rather than mapped by σ).</summary>
        public readonly bool Drawn(uint digit) => _b <= FullTableBase || digit < DrawnDigits;

        /// <summary>The image of a drawn digit, drawing up to it.</summary>
        public uint Image(uint digit)
        {
            while (_drawn <= digit)
            {
                Draw();
            }

            return _values[(int)digit];
        }

        /// <summary>All <see cref="DrawnDigits"/> drawn images, in increasing order, into <paramref name="sorted"/> (large bases).</summary>
        public void SortedDrawn(Span<uint> sorted)
        {
            Image(DrawnDigits - 1);
            _values.CopyTo(sorted);
            sorted.Sort();
        }

        /// <summary>The <paramref name="rank"/>-th smallest value (from 0) that is not among <paramref name="sorted"/>.</summary>
        public static uint Remaining(uint rank, ReadOnlySpan<uint> sorted)
        {
            uint v = rank;
            foreach (uint taken in sorted)
            {
                v += taken <= v ? 1u : 0u;
            }

            return v;
        }

        private void Draw()
        {
            int j = _drawn++;
            if (_b <= FullTableBase)
            {
                // Fisher–Yates: place j takes a uniform one of the b − j values not yet placed (draw j).
                int r = j + (int)Next();
                (_values[j], _values[r]) = (_values[r], _values[j]);
                return;
            }

            // A uniform value, redrawn while it is taken: uniform among those left. The taken ones as one vector (the
            // places not yet drawn hold b, which no draw equals) where the machine has it.
            if (Generators.Lanes.Wide512)
            {
                Span<uint> padded = stackalloc uint[DrawnDigits];
                padded.Fill(_b);
                _values[..j].CopyTo(padded);
                Vector512<uint> taken = Vector512.Create((ReadOnlySpan<uint>)padded);
                uint w;
                do
                {
                    w = Next();
                }
                while (Vector512.EqualsAny(taken, Vector512.Create(w)));

                _values[j] = w;
                return;
            }

            uint v;
            do
            {
                v = Next();
            }
            while (_values[..j].Contains(v));

            _values[j] = v;
        }

        /// <summary>The images of digits up to <paramref name="digit"/> (a large base's drawn ones) drawn at once: <see cref="Draw"/>'s values, the taken set kept in a register.</summary>
        public void DrawTo(uint digit)
        {
            if (_b <= FullTableBase || !Generators.Lanes.Wide512 || _drawn > digit)
            {
                Image(digit);
                return;
            }

            Span<uint> padded = stackalloc uint[DrawnDigits];
            padded.Fill(_b);
            _values[.._drawn].CopyTo(padded);
            Vector512<uint> taken = Vector512.Create((ReadOnlySpan<uint>)padded);
            Vector512<uint> lanes = Vector512.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u, 8u, 9u, 10u, 11u, 12u, 13u, 14u, 15u);
            while (_drawn <= digit)
            {
                uint w = Next();
                if (!Vector512.EqualsAny(taken, Vector512.Create(w)))
                {
                    taken = Vector512.ConditionalSelect(Vector512.Equals(lanes, Vector512.Create((uint)_drawn)), Vector512.Create(w), taken);
                    _values[_drawn++] = w;
                }
            }
        }

        // Draw number _attempt (then the next), made sixteen at a time (see FillForm).
        private uint Next()
        {
            if (_attempt >= _chunkEnd)
            {
                _chunkStart = _attempt;
                _chunkEnd = _attempt + Chunk;
                Fill(_positionKey, _b, _b <= FullTableBase, _chunkStart, _draws);
            }

            return _draws[(int)(_attempt++ - _chunkStart)];
        }

        public static void Fill(ulong positionKey, uint b, bool table, ulong first, Span<uint> draws) =>
            FillForm(positionKey, b, table, first, draws, Generators.Lanes.Best);

        /// <summary>
        /// Draws <paramref name="first"/>, <paramref name="first"/> + 1, … into <paramref name="draws"/>: draw n is
        /// <see cref="DrawOne"/>(n) with m = b − 1 − n on the Fisher–Yates table (step n + 1 takes draw n; m = 1 from
        /// n = b − 1 on), m = b otherwise. On the given lanes (tests run each form; the scalar loop finishes what a form
        /// leaves): sixteen draws from eight hashes on 512-bit lanes, eight from four on AVX2, an odd first draw alone.
        /// </summary>
        internal static void FillForm(ulong positionKey, uint b, bool table, ulong first, Span<uint> draws, Generators.LaneWidth width)
        {
            int k = 0;
            if (first > ulong.MaxValue - (ulong)draws.Length)
            {
                width = Generators.LaneWidth.Scalar; // draw numbers that wrap past 2^64 − 1 (their pairs do not): the scalar loop
            }

            if ((first & 1) != 0 && draws.Length > 0 && width != Generators.LaneWidth.Scalar)
            {
                draws[0] = DrawOne(positionKey, first, Multiplier(b, table, first));
                k = 1;
            }

            if (width == Generators.LaneWidth.Wide)
            {
                Vector512<ulong> lane = Vector512.Create(0UL, 1UL, 2UL, 3UL, 4UL, 5UL, 6UL, 7UL);
                Vector512<ulong> vb = Vector512.Create((ulong)b);
                for (; k + 16 <= draws.Length; k += 16)
                {
                    // Pair p = (first + k) / 2 + l holds draws 2p (low half) and 2p + 1 (high half).
                    ulong pair = (first + (ulong)k) >> 1;
                    Vector512<ulong> even = Vector512.Create(pair << 1) + (lane << 1);
                    Vector512<ulong> low = vb, high = vb;
                    if (table)
                    {
                        Vector512<ulong> top = vb - Vector512<ulong>.One;
                        low = Vector512.ConditionalSelect(Vector512.LessThan(even, top), top - even, Vector512<ulong>.One);
                        high = Vector512.ConditionalSelect(Vector512.LessThan(even + Vector512<ulong>.One, top), top - even - Vector512<ulong>.One, Vector512<ulong>.One);
                    }

                    Draw16(positionKey, Vector512.Create(unchecked(pair * SampleHash.ValueMultiplier)) + LaneProductsLow, low, high).CopyTo(draws.Slice(k, 16));
                }
            }
            else if (width == Generators.LaneWidth.Narrow && Avx2.IsSupported)
            {
                // Four hashes on 256-bit lanes (AVX2, DrawHash4), their eight halves' draws by Draw8. DrawHash's
                // pair·M for pair s + l is s·M + l·M modulo 2^64 (as in ConflictImages). On the table, m = b − 1 − n per
                // 32-bit lane while n < b − 1 (then n and m are below 2^31: signed 32-bit arithmetic), else 1.
                Vector256<uint> m = Vector256.Create(b);
                Vector256<ulong> product = Vector256.Create(unchecked(((first + (ulong)k) >> 1) * SampleHash.ValueMultiplier)) + DrawLaneProducts;
                for (; k + 8 <= draws.Length; k += 8)
                {
                    if (table)
                    {
                        ulong n = first + (ulong)k;
                        m = n >= b - 1 ? Vector256<uint>.One : Vector256.Max(Vector256.Create((int)(b - 1 - n)) - Vector256.Create(0, 1, 2, 3, 4, 5, 6, 7), Vector256<int>.One).AsUInt32();
                    }

                    Draw8(positionKey, product, m).CopyTo(draws.Slice(k, 8));
                    product += Vector256.Create(unchecked(4 * SampleHash.ValueMultiplier));
                }
            }

            for (; k < draws.Length; k++)
            {
                ulong n = first + (ulong)k;
                draws[k] = DrawOne(positionKey, n, Multiplier(b, table, n));
            }
        }

        // m of draw n: b − 1 − n on the Fisher–Yates table (1 from n = b − 1 on), b otherwise.
        [MethodImpl(InliningOptions.ShortMethod)]
        private static uint Multiplier(uint b, bool table, ulong n) => table ? (n < b - 1UL ? b - 1 - (uint)n : 1u) : b;

        /// <summary>
        /// Draw number <paramref name="n"/> of a position, uniform on 0 … m − 1 up to a bias below 2^−32 a value: the
        /// 32-bit half v of h = <see cref="DrawHash"/>(position key, ⌊n / 2⌋) (the low half for even n, the high half for
        /// odd n) taken to ⌊v·m / 2^32⌋, Lemire's (2019) multiply-shift without its rejection step.
        /// </summary>
        [MethodImpl(InliningOptions.ShortMethod)]
        public static uint DrawOne(ulong positionKey, ulong n, uint m) =>
            (uint)(((ulong)(uint)(DrawHash(positionKey, n >> 1) >> (int)(32 * (n & 1))) * m) >> 32);
    }

    /// <summary>
    /// The hash of a digit position's draw pair <paramref name="pair"/> (its two 32-bit halves are draws 2·pair and
    /// 2·pair + 1): x = key ⊕ pair·M (M = <see cref="SampleHash.ValueMultiplier"/>, as <see cref="SampleHash.Combine"/>
    /// keys its value), then x ⊕= x ≫ 32, x ·= <see cref="DrawMultiplier"/> (mod 2^64), x ⊕= x ≫ 32: one multiply where
    /// SplitMix64's finaliser has two (on AVX2 each 64-bit product is six instructions). Each step is a bijection of
    /// 64-bit words, so for a uniformly random position key (itself a SplitMix64 hash of the pixel's key, dimension and
    /// position) every draw's hash is uniform on 2^64 and its halves exactly uniform on 2^32: each draw is still within
    /// 2^−32 of uniform on 0 … m − 1 (Lemire's bound), and the key stays 64 bits wide: two positions' keys k1, k2 give
    /// the same hash for pairs p1, p2 only where k1 ⊕ k2 = p1·M ⊕ p2·M, for hashed keys about 2^−64 a pair of draws, as
    /// with <see cref="SampleHash.Combine"/>. What one multiply gives up is mixing between the draws of one position
    /// (pairs whose x differ by a fixed xor); the tests check the images' pairs within and across hashes
    /// (<c>Digit_images_and_pairs_are_uniform_against_scipy_critical_values</c>) and the whole permutation of small bases
    /// (<c>Whole_digit_permutations_of_small_bases_are_uniform_against_scipy_critical_values</c>).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    internal static ulong DrawHash(ulong positionKey, ulong pair)
    {
        ulong x = positionKey ^ (pair * SampleHash.ValueMultiplier);
        x = (x ^ (x >> 32)) * DrawMultiplier;
        return x ^ (x >> 32);
    }

    /// <summary>The odd multiplier of <see cref="DrawHash"/>: SplitMix64's first finaliser multiplier (Steele, Lea &amp; Flood 2014).</summary>
    internal const ulong DrawMultiplier = 0xBF58476D1CE4E5B9UL;

    // DrawHash per 64-bit lane on AVX2, given each lane's pair times M (the 64-bit product by SampleHash.MultiplyLow4).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<ulong> DrawHash4(ulong positionKey, Vector256<ulong> product)
    {
        Vector256<ulong> x = Vector256.Create(positionKey) ^ product;
        x = SampleHash.MultiplyLow4(x ^ (x >>> 32), DrawMultiplier);
        return x ^ (x >>> 32);
    }

    // DrawHash per 64-bit lane on 512-bit lanes, given each lane's pair times M.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector512<ulong> DrawHash8(ulong positionKey, Vector512<ulong> product)
    {
        Vector512<ulong> x = Vector512.Create(positionKey) ^ product;
        x = (x ^ (x >>> 32)) * Vector512.Create(DrawMultiplier);
        return x ^ (x >>> 32);
    }

    // Eight draws of DigitMap.FillForm's AVX2 form from the four hashes of pairs s … s + 3 (product: their numbers times
    // M; DrawHash4): 32-bit lane 2l the low half of pair s + l's hash, lane 2l + 1 its high half, each v taken to
    // ⌊v·m / 2^32⌋ with its lane's m (one vpmuludq for the even lanes, one for the odd ones, a blend).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<uint> Draw8(ulong positionKey, Vector256<ulong> product, Vector256<uint> m)
    {
        Vector256<ulong> h = DrawHash4(positionKey, product);
        Vector256<ulong> even = Avx2.Multiply(h.AsUInt32(), m) >>> 32;
        Vector256<ulong> odd = Avx2.Multiply((h >>> 32).AsUInt32(), (m.AsUInt64() >>> 32).AsUInt32());
        return Avx2.Blend(even.AsUInt32(), odd.AsUInt32(), 0b10101010);
    }

    // Sixteen draws from the eight hashes of pairs s … s + 7 (product: their numbers times M; DrawHash8), in draw
    // order: Draw8's arithmetic on 512-bit lanes with 64-bit products, low the m of the even draws, high of the odd ones.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector512<uint> Draw16(ulong positionKey, Vector512<ulong> product, Vector512<ulong> low, Vector512<ulong> high)
    {
        Vector512<ulong> h = DrawHash8(positionKey, product);
        Vector512<ulong> even = ((h & Vector512.Create(0xFFFFFFFFUL)) * low) >>> 32;
        Vector512<ulong> odd = ((h >>> 32) * high) & Vector512.Create(0xFFFFFFFF00000000UL);
        return (even | odd).AsUInt32();
    }

    // l·M for the lanes l = 0 … 3 (M = SampleHash.ValueMultiplier).
    private static readonly Vector256<ulong> DrawLaneProducts = Vector256.Create(0UL, 1UL, 2UL, 3UL) * SampleHash.ValueMultiplier;

    // The fraction u / 2^64 (its top 53 bits, exactly) scaled by b^−length: the permuted zeros above an index of that
    // many digits and everything below them.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static double Below(ulong u, int b, int length) => Fraction(u) * InversePower(b, length);

    // The top 53 bits of u scaled by 2^−53 (exact; converted as a signed integer, which they fit: one instruction).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static double Fraction(ulong u) => (long)(u >> 11) * (1.0 / 9007199254740992.0);

    // The base-2 form: a permutation of {0, 1} per position is an xor with a random bit, so the digits of all 32
    // positions (and the 21 bits below them) are one xor with a 64-bit hash.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static double Base2(uint index, ulong shift) => ((((ulong)BitReversal.Reverse(index) << 32) ^ shift) >> 11) * (1.0 / 9007199254740992.0);

    // PortableMath.InversePower(b, k) for k = 0 … digits of each base among the first PowerBases primes, made once;
    // computed for the others.
    private const int PowerBases = 256;
    private static readonly double[][] PowersOfBase = BuildPowers();
    private static readonly int[] PowerSlot = BuildPowerSlots();

    [MethodImpl(InliningOptions.ShortMethod)]
    private static double InversePower(int b, int k)
    {
        int slot = PowerSlot[b];
        return slot >= 0 ? PowersOfBase[slot][k] : PortableMath.InversePower(b, k);
    }

    private static double[][] BuildPowers()
    {
        var powers = new double[PowerBases][];
        for (int i = 0; i < PowerBases; i++)
        {
            int b = PrimeTable[i];
            powers[i] = new double[DigitsFor(b) + 1];
            for (int k = 0; k < powers[i].Length; k++)
            {
                powers[i][k] = PortableMath.InversePower(b, k);
            }
        }

        return powers;
    }

    private static int[] BuildPowerSlots()
    {
        var slots = new int[PrimeTable[^1] + 1];
        Array.Fill(slots, -1);
        for (int i = 0; i < PowerBases; i++)
        {
            slots[PrimeTable[i]] = i;
        }

        return slots;
    }

    /// <summary>The number of base-<paramref name="b"/> digits of the largest 32-bit index: ⌈32 / log₂ b⌉.</summary>
    public static int DigitsFor(int b)
    {
        int k = 0;
        for (ulong p = 1; p <= uint.MaxValue; p *= (ulong)b)
        {
            k++;
        }

        return k;
    }

    private const ulong TailSalt = 0x5441494C00000000UL;

    private static int[] BuildPrimes(int count)
    {
        var primes = new int[count];
        int found = 0;
        for (int n = 2; found < count; n++)
        {
            bool prime = true;
            for (int i = 0; i < found && primes[i] * primes[i] <= n; i++)
            {
                if (n % primes[i] == 0)
                {
                    prime = false;
                    break;
                }
            }

            if (prime)
            {
                primes[found++] = n;
            }
        }

        return primes;
    }
}

/// <summary>How <see cref="RadicalInverse.PermutedBatch"/> draws the images of a base above <see cref="RadicalInverse.FullTableBase"/> in a short one-digit run.</summary>
internal enum LargeBaseImages
{
    /// <summary>No short form: the general run (<c>PermutedRun</c>).</summary>
    General,

    /// <summary>Draws sixteen at a time, kept one by one against the taken values in two 256-bit vectors.</summary>
    Scan,

    /// <summary>Sixteen lanes at a time with AVX-512 CD's conflict detection and compression.</summary>
    ConflictLanes,
}
