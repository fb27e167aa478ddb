using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

using PathBench.Sampling.Sequences;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Owen-scrambled Sobol 2-D points, eight at a time with AVX2: the same arithmetic as the
/// scalar path (bit reversal, Laine–Karras permutation, byte-table walk, permutation,
/// reversal) on eight 32-bit lanes; the table walk by loads of neighbouring table entries (Zen 2
/// microcodes gathers; only a run's rare groups across a multiple of 256 in the unscrambled forms
/// still gather). The callers leave a single point to their scalar code (it cost less there: 20
/// against 29 ns; from two points on the lanes cost less) and check AVX2.
/// A run's last part-group runs on all eight lanes and stores its own under a mask. With an
/// empty <c>ys</c> it makes the first coordinate only (one dimension).
/// </summary>
internal static class OwenSobolBatch
{
    private const double Scale = 1.0 / 4294967296.0;

    /// <summary>
    /// Sobol's Owen-scrambled pair (or single coordinate with an empty <paramref name="ys"/>) of the consecutive points
    /// from <paramref name="firstIndex"/>: the index scrambled by its nested scramble (Burley 2020: Laine–Karras of the
    /// reversed index under the index seed, <paramref name="pixel"/>'s upper half), then the reversed walk without gathers. Laine–Karras
    /// (x + seed, then x ^= x·k) makes each output bit from the input bits at and below it, so the scrambled reversed
    /// indices r of an aligned group of eight (the same index bits from 3 up, the same reversed bits below 29) share
    /// their low 29 bits and differ in their top three. The walk is linear over GF(2) (an XOR of the generator matrix's
    /// columns picked by the index's bits; Sobol 1967), so a lane's walk is the walk of the group's low 29 bits, shared,
    /// XOR the walk of the lane's top three bits, picked from the dimension's eight such entries by vpermd. Eight
    /// consecutive indices lie in at most two aligned groups (lanes 0 and 7 stand for them): two shared walks and a
    /// select. The chunks are <see cref="Sequences.SobolMatrices.PairChunkTables"/> of
    /// <paramref name="dimension"/>'s pair (for a pair, <paramref name="dimension"/> is even): the walk by groups of six bits, whose small
    /// tables the random scrambled indices find in the level-one cache more often than the byte tables, and both
    /// dimensions of a pair by one walk of 64-bit entries. The scrambled reversed indices of a group depend on
    /// the index seed and the group's first index only, and a pixel's block asks for dimension after
    /// dimension over the same run: they are kept per thread (<see cref="IndexMemo"/>: <paramref name="scratch"/>, the caller's, or else this thread's thread-static one) and reused when both match, so the
    /// walk's loads start from two loaded words instead of after the reversal, four multiplications and two lane moves.
    /// The coordinates' seeds are the pair's (SobolSampler.PairSeeds). The caller checks AVX2 and a run of at least two points.
    /// </summary>
    [MethodImpl(InliningOptions.Kernel)]
    public static unsafe void Run(IndexMemo? scratch, SobolMatrices matrices, ulong pixel, int dimension, uint firstIndex, Span<double> xs, Span<double> ys)
    {
        // The memo first (the caller's, else this thread's): the lanes' longest chain starts from it.
        IndexMemo memo = scratch ?? Memo;
        ReadOnlySpan<ulong> chunks = matrices.PairChunkTables(dimension);
        bool pair = !ys.IsEmpty;
        int shift = 32 * (dimension & 1), half = dimension & 1;
        uint seedIndex = (uint)(pixel >> 32);
        fixed (ulong* t = chunks)
        fixed (double* px = xs, py = ys)
        {
            uint* high = (uint*)(t + 288);
            Vector256<uint> hx = Vector256.Load(high + (8 * half)), hy = pair ? Vector256.Load(high + 8) : default;
            // The coordinates' seeds once a run (SobolSampler.PairSeeds): on this round's Intel processor the hash's
            // multiplications overlap the first group's chain wherever they stand, and a run of sixteen hashed twice.
            ulong seeds = SobolSampler.PairSeeds(pixel, dimension);
            Vector256<ulong> seedX = Vector256.Create((ulong)(uint)(seeds >> shift)), seedY = Vector256.Create(seeds >> 32);
            for (int i = 0; i < xs.Length; i += 8)
            {
                // A run's last part-group computes every lane (a lane's table reads are bits of its own index, always
                // inside the tables) and stores those inside the run only.
                uint s = firstIndex + (uint)i;
                ulong key = ((ulong)seedIndex << 32) | s;
                ref IndexMemo.Entry e = ref memo.Groups[(i >> 3) & 1];
                Quads r;
                uint r0, r7;
                if (e.Key == key)
                {
                    r = e.R;
                    r0 = Unsafe.As<Vector256<ulong>, uint>(ref e.R.A);
                    r7 = Unsafe.Add(ref Unsafe.As<Vector256<ulong>, uint>(ref e.R.B), 6);
                }
                else
                {
                    Vector256<ulong> sv = Vector256.Create((ulong)s), seed = Vector256.Create((ulong)seedIndex);
                    r = new Quads(
                        LaineKarras(ReverseLow(sv + Vector256.Create(0UL, 1, 2, 3)), seed),
                        LaineKarras(ReverseLow(sv + Vector256.Create(4UL, 5, 6, 7)), seed));
                    e.R = r;
                    e.Key = key;
                    r0 = (uint)r.A.ToScalar();
                    r7 = (uint)r.B.GetElement(3);
                }

                // Per lane (the low half of each 64-bit lane): its top three bits, and whether it is in lane 0's group.
                Vector256<uint> topA = r.A.AsUInt32() >>> 29, topB = r.B.AsUInt32() >>> 29, g0 = Vector256.Create(r0 << 3);
                Vector256<uint> firstA = Vector256.Equals(r.A.AsUInt32() << 3, g0), firstB = Vector256.Equals(r.B.AsUInt32() << 3, g0);
                ulong w0 = Low29(t, r0), w7 = Low29(t, r7);

                Vector256<uint> x0 = Vector256.Create(w0 >> shift).AsUInt32(), x7 = Vector256.Create(w7 >> shift).AsUInt32();
                Store(
                    Centred(ReverseLow(LaineKarras((Vector256.ConditionalSelect(firstA, x0, x7) ^ Avx2.PermuteVar8x32(hx, topA)).AsUInt64(), seedX))),
                    Centred(ReverseLow(LaineKarras((Vector256.ConditionalSelect(firstB, x0, x7) ^ Avx2.PermuteVar8x32(hx, topB)).AsUInt64(), seedX))),
                    px + i,
                    xs.Length - i);
                if (pair)
                {
                    Vector256<uint> y0 = Vector256.Create(w0 >> 32).AsUInt32(), y7 = Vector256.Create(w7 >> 32).AsUInt32();
                    Store(
                        Centred(ReverseLow(LaineKarras((Vector256.ConditionalSelect(firstA, y0, y7) ^ Avx2.PermuteVar8x32(hy, topA)).AsUInt64(), seedY))),
                        Centred(ReverseLow(LaineKarras((Vector256.ConditionalSelect(firstB, y0, y7) ^ Avx2.PermuteVar8x32(hy, topB)).AsUInt64(), seedY))),
                        py + i,
                        xs.Length - i);
                }
            }
        }
    }

    // This thread's memo of Run's scrambled reversed indices (a class: a thread-static struct is boxed, one more runtime
    // call an access; this is one call and three loads).
    [ThreadStatic]
    private static IndexMemo? t_memo;

    /// <summary>This thread's memo for <see cref="Run"/> (made on first use).</summary>
    public static IndexMemo Memo
    {
        [MethodImpl(MethodImplOptions.AggressiveInlining)]
        get => t_memo ?? NewMemo();
    }

    [MethodImpl(InliningOptions.ColdPath)]
    private static IndexMemo NewMemo() => t_memo = NewIndexMemo();

    /// <summary>A new memo (for a caller that keeps one per thread: <see cref="PointSampler.NewBatchScratch"/>).</summary>
    public static IndexMemo NewIndexMemo()
    {
        var memo = new IndexMemo();
        for (int k = 0; k < 2; k++)
        {
            // Key 0 (seed 0, first index 0) with its true indices: no entry ever holds values that are not its key's.
            memo.Groups[k].Key = 0;
            memo.Groups[k].R = new Quads(Vector256.Create(Idx(0), Idx(1), Idx(2), Idx(3)), Vector256.Create(Idx(4), Idx(5), Idx(6), Idx(7)));
        }

        return memo;

        // Scalar (no AVX2 needed: the memo is fetched before the caller's AVX2 check).
        static ulong Idx(uint k) => OwenScrambler.LaineKarrasPermutation(BitReversal.Reverse(k), 0);
    }

    /// <summary>
    /// One thread's scrambled reversed indices of the last groups Run made: the groups at even and odd multiples of eight
    /// into a run (a block's run of sixteen is two groups), each under its key, the index seed (high half) and the
    /// group's first index (low half), which are all the indices depend on. The renderer shares a sampler between threads;
    /// per thread, no entry is ever read while it is written.
    /// </summary>
    internal sealed class IndexMemo : BatchScratch
    {
        public TwoGroups Groups;

        /// <summary>A group's indices R = LaineKarras(Reverse(first + lane), seed) (as <see cref="Quads"/>) under Key = seed · 2^32 + first.</summary>
        public struct Entry
        {
            public Quads R;
            public ulong Key;
        }

        /// <summary>The two entries, inline.</summary>
        [InlineArray(2)]
        public struct TwoGroups
        {
            private Entry _entry;
        }
    }

    // The walks of r's low 29 bits from a dimension pair's chunk tables (SobolMatrices.PairChunkTables): four groups of
    // six bits, one of five; the pair's first dimension in the low half, the second in the high.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe ulong Low29(ulong* chunks, uint r) =>
        chunks[r & 63] ^ (chunks + 64)[(r >> 6) & 63] ^ (chunks + 128)[(r >> 12) & 63] ^ (chunks + 192)[(r >> 18) & 63] ^ (chunks + 256)[(r >> 24) & 31];

    /// <summary>
    /// Blue noise's Owen-scrambled pair (or single coordinate with an empty <paramref name="ys"/>): the points with
    /// indices (<paramref name="firstIndex"/> + k) xor <paramref name="block"/>, from the dimensions' natural byte tables
    /// with reversed values (<see cref="Sequences.SobolMatrices.ReversedValueTables"/>). The scalar form walks the
    /// reversed tables with Reverse(i xor block); that walk is Reverse(T(i xor block)), and T is linear over GF(2) (an XOR
    /// of the generator matrix's columns picked by the index's bits; Sobol 1967), so it is Reverse(T(i)) xor
    /// Reverse(T(block)), the reversal distributing over XOR, and walking the reversed-value tables gives Reverse(T(·))
    /// directly: eight consecutive Reverse(T(i)) by one load (<see cref="Consecutive"/>), Reverse(T(block)) once a run,
    /// no vector reversal before the scramble, no gathers.
    /// </summary>
    /// <remarks>
    /// <typeparamref name="TCommon"/> is <see cref="Once"/> (Laine–Karras under the pixel's seed) or <see cref="Twice"/>
    /// (then under the seed common to all pixels as well: the <c>owen</c> randomization). <paramref name="tables"/> holds
    /// the first dimension's tables, or, for a pair, both dimensions' (the second's after the first's). The caller checks
    /// AVX2 and a run of at least two points.
    /// </remarks>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static unsafe void BlockLanes<TCommon>(ReadOnlySpan<uint> tables, uint firstIndex, uint block, uint seedX, uint commonX, uint seedY, uint commonY, Span<double> xs, Span<double> ys)
        where TCommon : struct
    {
        bool pair = !ys.IsEmpty;
        fixed (uint* tx = tables)
        fixed (double* px = xs, py = ys)
        {
            uint* ty = tx + 1024;
            Vector256<uint> bx = Vector256.Create(Value(tx, block)), by = pair ? Vector256.Create(Value(ty, block)) : default;
            Vector256<ulong> sx = Vector256.Create((ulong)seedX), cx = Vector256.Create((ulong)commonX);
            Vector256<ulong> sy = Vector256.Create((ulong)seedY), cy = Vector256.Create((ulong)commonY);
            for (int i = 0; i < xs.Length; i += 8)
            {
                // The scramble on four 64-bit lanes a vector (Quads: its chain about half as long).
                uint s = firstIndex + (uint)i;
                Vector256<uint> x = Consecutive(tx, s) ^ bx;
                Store(Finished<TCommon>(x.GetLower(), sx, cx), Finished<TCommon>(x.GetUpper(), sx, cx), px + i, xs.Length - i);
                if (pair)
                {
                    Vector256<uint> y = Consecutive(ty, s) ^ by;
                    Store(Finished<TCommon>(y.GetLower(), sy, cy), Finished<TCommon>(y.GetUpper(), sy, cy), py + i, xs.Length - i);
                }
            }
        }
    }

    /// <summary>Blue noise's scramble under the pixel's seed only (<see cref="BlockLanes"/>).</summary>
    internal readonly struct Once;

    /// <summary>Blue noise's scramble under the pixel's seed, then the seed common to all pixels (<see cref="BlockLanes"/>).</summary>
    internal readonly struct Twice;

    // Four of BlockLanes' words widened to 64-bit lanes, scrambled as TCommon says, reversed and converted (Quads).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> Finished<TCommon>(Vector128<uint> x, Vector256<ulong> seed, Vector256<ulong> common)
        where TCommon : struct
    {
        Vector256<ulong> v = LaineKarras(Avx2.ConvertToVector256Int64(x).AsUInt64(), seed);
        return Centred(ReverseLow(typeof(TCommon) == typeof(Twice) ? LaineKarras(v, common) : v));
    }

    // ShortMethod as a property getter: the JIT may otherwise leave it a call in a block the profile says is cold.
    private static Vector256<uint> Lane
    {
        [MethodImpl(InliningOptions.ShortMethod)]
        get => Vector256.Create(0u, 1, 2, 3, 4, 5, 6, 7);
    }

    // T(s) from a dimension's natural byte tables: the scalar SobolMatrices.Sample's four lookups.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe uint Value(uint* table, uint s) =>
        table[s & 0xFF] ^ table[256 + ((s >> 8) & 0xFF)] ^ table[512 + ((s >> 16) & 0xFF)] ^ table[768 + (s >> 24)];

    /// <summary>
    /// T(s + l) for the lanes l = 0 … 7 (the index wrapping as uint) from a dimension's natural byte tables. Where the
    /// eight indices share their upper three bytes (s's low byte at most 248), their low bytes are eight neighbouring
    /// entries of the first table: one load, XOR the upper bytes' entries, which the eight share (Zen 2 microcodes
    /// gathers: four cost more than the rest of a group's work). Otherwise (7 starts in 256, and a run that wraps past
    /// 2^32 − 1) the four gathers, as the scalar walk per lane.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe Vector256<uint> Consecutive(uint* table, uint s)
    {
        uint low = s & 0xFF;
        if (low <= 248)
        {
            uint upper = table[256 + ((s >> 8) & 0xFF)] ^ table[512 + ((s >> 16) & 0xFF)] ^ table[768 + (s >> 24)];
            return Vector256.Load(table + low) ^ Vector256.Create(upper);
        }

        return Walk(table, Vector256.Create(s) + Lane);
    }

    /// <summary>
    /// One Sobol dimension without scrambling (or, with a non-empty <paramref name="ys"/>, the next dimension too, whose
    /// byte tables follow <paramref name="tables"/>' first 1024 entries), eight points at a time with AVX2: the byte-table
    /// walk of the index (the scalar <see cref="Sequences.SobolMatrices.Sample"/>'s four lookups) by one load a group and
    /// dimension (<see cref="Consecutive"/>), then finished as <typeparamref name="TFinish"/> says with the scalar code's
    /// operations: <see cref="Bare"/> v · 2^-32, <see cref="Shifted"/> ((v xor shift) + 0.5) · 2^-32 (Sobol's digital
    /// shift), <see cref="Rotated"/> <see cref="PointRandomizations.Rotate"/>(v · 2^-32, offset). The caller checks AVX2
    /// and a run of at least two points; the two dimensions share the index's bytes and the test of the group's low byte.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static unsafe void PlainLanes<TFinish>(ReadOnlySpan<uint> tables, uint firstIndex, uint shiftX, double offsetX, uint shiftY, double offsetY, Span<double> xs, Span<double> ys)
        where TFinish : struct
    {
        bool pair = !ys.IsEmpty;
        fixed (uint* tx = tables)
        fixed (double* px = xs, py = ys)
        {
            uint* ty = tx + 1024;
            for (int i = 0; i < xs.Length; i += 8)
            {
                uint s = firstIndex + (uint)i;
                uint low = s & 0xFF;
                int left = xs.Length - i;
                if (low <= 248)
                {
                    // The eight indices share their upper three bytes (Consecutive's remarks).
                    uint b1 = 256 + ((s >> 8) & 0xFF), b2 = 512 + ((s >> 16) & 0xFF), b3 = 768 + (s >> 24);
                    Vector256<uint> x = Vector256.Load(tx + low) ^ Vector256.Create(tx[b1] ^ tx[b2] ^ tx[b3]);
                    Store(Finished<TFinish>(x, shiftX, offsetX), px + i, left);
                    if (pair)
                    {
                        Vector256<uint> y = Vector256.Load(ty + low) ^ Vector256.Create(ty[b1] ^ ty[b2] ^ ty[b3]);
                        Store(Finished<TFinish>(y, shiftY, offsetY), py + i, left);
                    }
                }
                else
                {
                    Vector256<uint> r = Vector256.Create(s) + Lane;
                    Store(Finished<TFinish>(Walk(tx, r), shiftX, offsetX), px + i, left);
                    if (pair)
                    {
                        Store(Finished<TFinish>(Walk(ty, r), shiftY, offsetY), py + i, left);
                    }
                }
            }
        }
    }

    // PlainLanes' finish of eight Sobol words.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (Vector256<double> Low, Vector256<double> High) Finished<TFinish>(Vector256<uint> v, uint shift, double offset)
        where TFinish : struct
    {
        if (typeof(TFinish) == typeof(Shifted))
        {
            return ToDoubles(v ^ Vector256.Create(shift));
        }

        (Vector256<double> Low, Vector256<double> High) d = Unit(v);
        if (typeof(TFinish) == typeof(Rotated))
        {
            // s − 1 where s ≥ 1, else s − 0: the same bits as the scalar Rotate's flag.
            Vector256<double> one = Vector256<double>.One, o = Vector256.Create(offset);
            Vector256<double> sl = d.Low + o, sh = d.High + o;
            d = (sl - (Vector256.GreaterThanOrEqual(sl, one) & one), sh - (Vector256.GreaterThanOrEqual(sh, one) & one));
        }

        return d;
    }

    /// <summary>How <see cref="TableRun"/> randomizes a table entry v (a 32-bit fixed-point value).</summary>
    public enum TableScramble
    {
        /// <summary>v · 2^-32, the bare table.</summary>
        None,

        /// <summary>((v xor seed) + 0.5) · 2^-32: a random digital shift.</summary>
        Xor,

        /// <summary>
        /// (<see cref="Sequences.OwenScrambler.Scramble"/>(v, seed) + 0.5) · 2^-32: Owen's nested scramble. The tables are
        /// given bit-reversed (<see cref="Sequences.ProgressiveMultiJittered.ReversedX"/>), the form the scramble works
        /// on, so only its result is reversed.
        /// </summary>
        Owen,
    }

    /// <summary>
    /// Table points (the progressive multi-jittered sequences), eight at a time with AVX2: the tables' entries from
    /// <paramref name="first"/> (the run must lie in them), each coordinate randomized as <paramref name="scramble"/> says
    /// with the scalar code's operations. Returns false, writing nothing, without AVX2 or for a single point (which the
    /// scalar code makes in less time).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static bool TableRun(ReadOnlySpan<uint> tableX, ReadOnlySpan<uint> tableY, int first, TableScramble scramble, uint seedX, uint seedY, Span<double> xs, Span<double> ys)
    {
        if (!Avx2.IsSupported || xs.Length < 2)
        {
            return false;
        }

        // One kernel per randomization, each with its own code and profile: one kernel for all three was compiled by the
        // profile of whichever the process ran first, its other branches laid out as cold.
        switch (scramble)
        {
            case TableScramble.None:
                TableLanes<Bare>(tableX, tableY, first, seedX, seedY, xs, ys);
                break;
            case TableScramble.Xor:
                TableLanes<Shifted>(tableX, tableY, first, seedX, seedY, xs, ys);
                break;
            default:
                TableLanes<Nested>(tableX, tableY, first, seedX, seedY, xs, ys);
                break;
        }

        return true;
    }

    // TableRun's kernels: TScramble is Bare, Shifted or Nested (TableScramble's None, Xor and Owen), fixed per instantiation.
    [MethodImpl(InliningOptions.Kernel)]
    private static unsafe void TableLanes<TScramble>(ReadOnlySpan<uint> tableX, ReadOnlySpan<uint> tableY, int first, uint seedX, uint seedY, Span<double> xs, Span<double> ys)
        where TScramble : struct
    {
        ReadOnlySpan<uint> runX = tableX.Slice(first, xs.Length), runY = tableY.Slice(first, ys.Length);
        Vector256<uint> sx = Vector256.Create(seedX), sy = Vector256.Create(seedY);
        Vector256<uint> lane = Vector256.Create(0u, 1, 2, 3, 4, 5, 6, 7);
        fixed (uint* tx = runX, ty = runY)
        fixed (double* px = xs, py = ys)
        {
            for (int i = 0; i < xs.Length; i += 8)
            {
                // Lanes past the run (a run's last part-group) are masked: neither read from the tables nor stored.
                Vector256<uint> mask = Vector256.LessThan(lane, Vector256.Create((uint)(xs.Length - i)));
                Vector256<uint> x = Avx2.MaskLoad(tx + i, mask), y = Avx2.MaskLoad(ty + i, mask);
                int left = xs.Length - i;
                if (typeof(TScramble) == typeof(Bare))
                {
                    Store(Unit(x), px + i, left);
                    Store(Unit(y), py + i, left);
                }
                else if (typeof(TScramble) == typeof(Shifted))
                {
                    Store(ToDoubles(x ^ sx), px + i, left);
                    Store(ToDoubles(y ^ sy), py + i, left);
                }
                else if (Wide)
                {
                    // Both coordinates in one 512-bit vector (x in the low half, y in the high): half the instructions.
                    Vector512<uint> v = Reverse(LaineKarras(Vector512.Create(x, y), Vector512.Create(sx, sy)));
                    Store(ToDoublesWide(v.GetLower()), px + i, left);
                    Store(ToDoublesWide(v.GetUpper()), py + i, left);
                }
                else
                {
                    Store(ToDoubles(Reverse(LaineKarras(x, sx))), px + i, left);
                    Store(ToDoubles(Reverse(LaineKarras(y, sy))), py + i, left);
                }
            }
        }
    }

    /// <summary>No randomization: the bare value, v · 2^-32.</summary>
    internal readonly struct Bare;

    /// <summary>A random digital shift: ((v xor shift) + 0.5) · 2^-32.</summary>
    internal readonly struct Shifted;

    /// <summary>A Cranley–Patterson rotation of v · 2^-32.</summary>
    internal readonly struct Rotated;

    private readonly struct Nested;

    // OwenScrambler.LaineKarrasPermutation's multipliers.
    private const uint K0 = 0x6c50b47cu, K1 = 0xb82f1e52u, K2 = 0xc7afe638u, K3 = 0x8d22f6e6u;

    // OwenScrambler.LaineKarrasPermutation on eight lanes: the seed added, then x ^= x · k for each multiplier.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> LaineKarras(Vector256<uint> x, Vector256<uint> seed) => Step(Step(Step(Step(x + seed, K0), K1), K2), K3);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> Step(Vector256<uint> x, uint k) => x ^ (x * Vector256.Create(k));

    /// <summary>
    /// Eight words as two vectors of four, each word in the low half of a 64-bit lane (A: lanes 0-3, B: lanes 4-7); the
    /// high halves are not part of the value (whatever the steps leave there), until <see cref="ReverseLow"/> clears them.
    /// The form for the Laine–Karras steps: <c>vpmuludq</c> multiplies the low halves into a 64-bit product whose low
    /// half is the 32-bit product: on Intel cores one micro-op of about five cycles, where <c>vpmulld</c> is two of about
    /// ten (from memory; docs/performance.md, eleventh round, has the timings), and the scramble's four steps are one
    /// dependent chain, so twice the vectors cost about half its latency.
    /// </summary>
    internal struct Quads(Vector256<ulong> a, Vector256<ulong> b)
    {
        /// <summary>Words 0-3.</summary>
        public Vector256<ulong> A = a;

        /// <summary>Words 4-7.</summary>
        public Vector256<ulong> B = b;
    }

    // OwenScrambler.LaineKarrasPermutation on the low halves of four 64-bit lanes (Quads): the seed added, then
    // x ^= x · k for each multiplier, by 32 × 32 → 64-bit products whose low half is the 32-bit product.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<ulong> LaineKarras(Vector256<ulong> x, Vector256<ulong> seed) => Step(Step(Step(Step(x + seed, K0), K1), K2), K3);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<ulong> Step(Vector256<ulong> x, uint k) => x ^ Avx2.Multiply(x.AsUInt32(), Vector256.Create((ulong)k).AsUInt32());

    /// <summary>
    /// The bit reversal of the low half of each 64-bit lane, the high half cleared: each byte's bits reversed (GFNI where
    /// the processor has it, else the nibble lookups), then one byte shuffle that reverses the low four bytes and zeroes
    /// the high four.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<ulong> ReverseLow(Vector256<ulong> x)
    {
        const byte Zero = 0x80;
        Vector256<byte> order = Vector256.Create(
            (byte)3, 2, 1, 0, Zero, Zero, Zero, Zero, 11, 10, 9, 8, Zero, Zero, Zero, Zero,
            3, 2, 1, 0, Zero, Zero, Zero, Zero, 11, 10, 9, 8, Zero, Zero, Zero, Zero);
        Vector256<byte> bits = Gfni.V256.IsSupported ? ByteBitsGalois(x.AsByte()) : ByteBitsNibbles(x.AsByte());
        return Avx2.Shuffle(bits, order).AsUInt64();
    }

    /// <summary>
    /// Words below 2^32 in 64-bit lanes (high halves clear) as (v + 0.5) · 2^-32, the scalar code's value, by their bits:
    /// v under the exponent of 2^20 is the double 2^20 + v · 2^-32 (v fills the low 32 of the 52 fraction bits: IEEE 754
    /// binary64), and subtracting 2^20 − 2^-33 (53 significant bits, exact) leaves (v + 0.5) · 2^-32, which has at most
    /// 33 significant bits, so the subtraction is exact: the same bits as the signed conversion and its exact steps.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<double> Centred(Vector256<ulong> v) =>
        (v | Vector256.Create(0x4130000000000000UL)).AsDouble() - Vector256.Create(1048576.0 - (0.5 * Scale));

    // Each byte's bits reversed by GFNI's affine transform (ReverseGalois).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<byte> ByteBitsGalois(Vector256<byte> x) =>
        Gfni.V256.GaloisFieldAffineTransform(x, Vector256.Create(0x8040201008040201UL).AsByte(), 0);

    // Each byte's bits reversed by two nibble lookups (ReverseNibbles).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<byte> ByteBitsNibbles(Vector256<byte> x)
    {
        // rev4(n) for n = 0 … 15, and the same times 16, in each 128-bit half (vpshufb looks up within halves).
        Vector256<byte> low = Vector256.Create((byte)0x00, 0x80, 0x40, 0xC0, 0x20, 0xA0, 0x60, 0xE0, 0x10, 0x90, 0x50, 0xD0, 0x30, 0xB0, 0x70, 0xF0, 0x00, 0x80, 0x40, 0xC0, 0x20, 0xA0, 0x60, 0xE0, 0x10, 0x90, 0x50, 0xD0, 0x30, 0xB0, 0x70, 0xF0);
        Vector256<byte> high = Vector256.Create((byte)0x0, 0x8, 0x4, 0xC, 0x2, 0xA, 0x6, 0xE, 0x1, 0x9, 0x5, 0xD, 0x3, 0xB, 0x7, 0xF, 0x0, 0x8, 0x4, 0xC, 0x2, 0xA, 0x6, 0xE, 0x1, 0x9, 0x5, 0xD, 0x3, 0xB, 0x7, 0xF);
        Vector256<byte> nibble = Vector256.Create((byte)0x0F);
        return Avx2.Shuffle(low, x & nibble) | Avx2.Shuffle(high, (x.AsUInt32() >>> 4).AsByte() & nibble);
    }

    // Eight doubles (two vectors of four) to the run from destination, as Store.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe void Store(Vector256<double> low, Vector256<double> high, double* destination, int left) => Store((low, high), destination, left);

    // The bit reversal (BitReversal.Reverse) of eight words: GFNI's form where the processor has it, else the nibble lookups.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> Reverse(Vector256<uint> x) => Gfni.V256.IsSupported ? ReverseGalois(x) : ReverseNibbles(x);

    /// <summary>
    /// Eight words' bits reversed with AVX2 by table lookups of nibbles: each byte's bits reversed as
    /// rev4(low nibble) · 16 + rev4(high nibble), the two lookups of a 16-entry table by vpshufb, then the bytes of each
    /// word reversed. Seven instructions and four deep, where swapping ever larger bit groups took sixteen and ten deep,
    /// on the chain every scrambled point waits for.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<uint> ReverseNibbles(Vector256<uint> x) => SwapBytes(ByteBitsNibbles(x.AsByte()));

    /// <summary>
    /// Eight words' bits reversed with GFNI: one affine transform over GF(2) reverses each byte's bits (the bit matrix
    /// 0x8040201008040201 sends bit i to bit 7 − i: Intel 64 and IA-32 Architectures Software Developer's Manual,
    /// GF2P8AFFINEQB, whose result bit i is the parity of matrix byte 7 − i and the source byte), then the bytes of each
    /// word are reversed. Two instructions where the nibble lookups take seven, on the chain every Owen-scrambled point waits for.
    /// Callers check <see cref="Gfni.V256.IsSupported"/>.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    internal static Vector256<uint> ReverseGalois(Vector256<uint> x) => SwapBytes(ByteBitsGalois(x.AsByte()));

    // Byte order within each 32-bit lane, as BinaryPrimitives.ReverseEndianness.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> SwapBytes(Vector256<byte> x)
    {
        Vector256<byte> swap = Vector256.Create((byte)3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12, 3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12);
        return Avx2.Shuffle(x, swap).AsUInt32();
    }

    // TableRun's 512-bit form: AVX-512 (with BW for the byte shuffle) and GFNI.
    private static bool Wide => Lanes.Wide512 && Avx512BW.IsSupported && Gfni.V512.IsSupported;

    // LaineKarras on sixteen lanes.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector512<uint> LaineKarras(Vector512<uint> x, Vector512<uint> seed) => Step(Step(Step(Step(x + seed, K0), K1), K2), K3);

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector512<uint> Step(Vector512<uint> x, uint k) => x ^ (x * Vector512.Create(k));

    // ReverseGalois on sixteen words.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector512<uint> Reverse(Vector512<uint> x)
    {
        Vector512<byte> bits = Gfni.V512.GaloisFieldAffineTransform(x.AsByte(), Vector512.Create(0x8040201008040201UL).AsByte(), 0);
        Vector512<byte> swap = Vector512.Create(
            (byte)3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12, 3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12,
            3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12, 3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12);
        return Avx512BW.Shuffle(bits, swap).AsUInt32();
    }

    // ToDoubles by AVX-512's unsigned conversion (exact, as the signed form with its offset): (x + 0.5) · 2^-32.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (Vector256<double> Low, Vector256<double> High) ToDoublesWide(Vector256<uint> v)
    {
        Vector512<double> d = (Avx512F.ConvertToVector512Double(v) + Vector512.Create(0.5)) * Vector512.Create(Scale);
        return (d.GetLower(), d.GetUpper());
    }

    // Eight words as doubles, (x + 0.5) · 2^-32 as the scalar code makes them, in two halves: uint → double through the
    // signed conversion (flip the top bit, convert, add 2^31 back with the 0.5). All exact in double.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (Vector256<double> Low, Vector256<double> High) ToDoubles(Vector256<uint> v) => Exact(v, 2147483648.0 + 0.5, Scale);

    // Eight words v as v · 2^-32, in two halves (the signed conversion, 2^31 added back; all exact, as the scalar code).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (Vector256<double> Low, Vector256<double> High) Unit(Vector256<uint> v) => Exact(v, 2147483648.0, Scale);

    // (x + add − 2^31 … as the signed lanes) · scale: the words' values plus (add − 2^31), times scale.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static (Vector256<double> Low, Vector256<double> High) Exact(Vector256<uint> v, double add, double scale)
    {
        Vector256<int> signed = (v ^ Vector256.Create(0x80000000u)).AsInt32();
        Vector256<double> s = Vector256.Create(scale);
        Vector256<double> low = Avx.ConvertToVector256Double(signed.GetLower()), high = Avx.ConvertToVector256Double(signed.GetUpper());
        if (Fma.IsSupported)
        {
            // One rounding of c · scale + add · scale: the exact value (the two products are exact, scale being a power of
            // two, and so is their sum, which needs at most 33 significant bits), as the two exact steps below.
            Vector256<double> b = Vector256.Create(add * scale);
            return (Fma.MultiplyAdd(low, s, b), Fma.MultiplyAdd(high, s, b));
        }

        Vector256<double> a = Vector256.Create(add);
        return ((low + a) * s, (high + a) * s);
    }

    // Eight doubles to the run from destination, of which <left> points are left: a whole group by plain stores (which
    // forward to the loads that read it soon after), a run's last part-group under a mask of its lanes.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe void Store((Vector256<double> Low, Vector256<double> High) d, double* destination, int left)
    {
        if (left >= 8)
        {
            d.Low.Store(destination);
            d.High.Store(destination + 4);
            return;
        }

        Vector256<long> lane = Vector256.Create(0L, 1, 2, 3), n = Vector256.Create((long)left);
        Avx.MaskStore(destination, Vector256.LessThan(lane, n).AsDouble(), d.Low);
        Avx.MaskStore(destination + 4, Vector256.LessThan(lane + Vector256.Create(4L), n).AsDouble(), d.High);
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe Vector256<uint> Walk(uint* table, Vector256<uint> r)
    {
        Vector256<uint> low = Vector256.Create(0xFFu);
        Vector256<int> b0 = (r & low).AsInt32();
        Vector256<int> b1 = (((r >> 8) & low) + Vector256.Create(256u)).AsInt32();
        Vector256<int> b2 = (((r >> 16) & low) + Vector256.Create(512u)).AsInt32();
        Vector256<int> b3 = ((r >> 24) + Vector256.Create(768u)).AsInt32();
        int* t = (int*)table;
        return (Avx2.GatherVector256(t, b0, 4) ^ Avx2.GatherVector256(t, b1, 4) ^ Avx2.GatherVector256(t, b2, 4) ^ Avx2.GatherVector256(t, b3, 4)).AsUInt32();
    }
}
