using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Hashing;

/// <summary>
/// A hash-defined permutation of [0, l) without tables: Kensler (2013), "Correlated
/// Multi-Jittered Sampling", Pixar Technical Memo 13-01, listing <c>permute</c>.
/// The constants are from memory of that listing. Whatever the constants, the result is a
/// bijection by construction: every step is invertible on the masked bits (xor with a
/// shifted copy of itself, multiplication by an odd number modulo a power of two) and
/// cycle-walking restricts the bijection on [0, 2^k) to [0, l); the final rotation keeps it
/// one. The tests check bijectivity for many lengths.
/// </summary>
public static class KenslerPermutation
{
    /// <summary>The image of <paramref name="i"/> under the permutation of [0, <paramref name="l"/>) chosen by <paramref name="p"/>.</summary>
    /// <exception cref="ArgumentOutOfRangeException"><paramref name="i"/> is not below <paramref name="l"/> (from such an index the cycle walk need not end).</exception>
    [MethodImpl(InliningOptions.HotPath)]
    public static uint Permute(uint i, uint l, uint p)
    {
        if (l <= 1)
        {
            return 0;
        }

        if (i >= l)
        {
            ThrowOutside(i, l);
        }

        uint w = MaskBelow(l);
        do
        {
            i ^= p;
            i *= 0xe170893d;
            i ^= p >> 16;
            i ^= (i & w) >> 4;
            i ^= p >> 8;
            i *= 0x0929eb3f;
            i ^= p >> 23;
            i ^= (i & w) >> 1;
            i *= 1 | p >> 27;
            i *= 0x6935fa69;
            i ^= (i & w) >> 11;
            i *= 0x74dcb303;
            i ^= (i & w) >> 2;
            i *= 0x9e501cc3;
            i ^= (i & w) >> 2;
            i *= 0xc860a3df;
            i &= w;
            i ^= i >> 5;
        }
        while (i >= l);
        return (uint)(((ulong)i + p) % l);
    }

    /// <summary>
    /// <see cref="Permute"/>(inputs[k], l, seeds[k]) for every k into <paramref name="images"/>: one length, an input
    /// and a seed per lane (the digits of several digit positions, each position with its own permutation), sixteen
    /// at a time as two 256-bit vectors walked together where the machine has them (the same integer steps per lane;
    /// a lane that has left the cycle walk keeps its value while the others walk on; the two vectors' chains are
    /// independent, so they overlap in the pipeline), then a group of eight as one vector, the rest (fewer than
    /// eight) one at a time: a vector walk lasts as long as its slowest lane and each of its steps is a 10-cycle
    /// vector multiply against a 3-cycle scalar one, while independent scalar walks overlap, so a part-empty vector
    /// measured slower than the scalar form.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">An input is not below <paramref name="l"/>.</exception>
    public static void PermuteEach(uint l, ReadOnlySpan<uint> inputs, ReadOnlySpan<uint> seeds, Span<uint> images)
    {
        if (images.Length != seeds.Length || inputs.Length != seeds.Length)
        {
            throw new ArgumentException("one input and one image per seed", nameof(images));
        }

        int done = 0;
        if (Vector256.IsHardwareAccelerated && l > 1)
        {
            Vector256<uint> limit = Vector256.Create(l);
            for (; done + 16 <= seeds.Length; done += 16)
            {
                Vector256<uint> a = Vector256.Create(inputs.Slice(done, 8)), b = Vector256.Create(inputs.Slice(done + 8, 8));
                if (!Vector256.LessThanAll(a, limit) || !Vector256.LessThanAll(b, limit))
                {
                    break;
                }

                Vector256<uint> pa = Vector256.Create(seeds.Slice(done, 8)), pb = Vector256.Create(seeds.Slice(done + 8, 8));
                Walk(ref a, l, pa, ref b, l, pb);
                OffsetBySeed(a, l, pa).CopyTo(images.Slice(done, 8));
                OffsetBySeed(b, l, pb).CopyTo(images.Slice(done + 8, 8));
            }

            if (done + 8 <= seeds.Length)
            {
                Vector256<uint> i = Vector256.Create(inputs.Slice(done, 8));
                if (Vector256.LessThanAll(i, limit))
                {
                    Vector256<uint> p = Vector256.Create(seeds.Slice(done, 8));
                    OffsetBySeed(Walk8(i, l, p), l, p).CopyTo(images.Slice(done, 8));
                    done += 8;
                }
            }
        }

        // The rest, and from a lane out of range on (Permute throws there).
        for (; done < seeds.Length; done++)
        {
            images[done] = Permute(inputs[done], l, seeds[done]);
        }
    }

    // The smallest 2^k − 1 at or above l − 1: the bits the permutation works on before cycle-walking into [0, l).
    [MethodImpl(InliningOptions.ShortMethod)]
    // (2^(bit length of l − 1)) − 1 by one leading-zero count, the shift by 32 − lzcnt(l − 1) ≤ 32 on 64 bits (0 for l = 1).
    private static uint MaskBelow(uint l) => (uint)((1UL << (32 - BitOperations.LeadingZeroCount(l - 1))) - 1);

    /// <summary>
    /// <see cref="Permute"/>(i + k, l, p) for k = 0 … <c>images.Length</c> − 1 into <paramref name="images"/>: one seed,
    /// consecutive indices, eight lanes at a time on 256-bit vectors where the machine has them (each lane
    /// cycle-walks under a mask until all are in range), the rest one at a time. The same integers as the scalar form.
    /// </summary>
    /// <exception cref="ArgumentOutOfRangeException">The run reaches past <paramref name="l"/> − 1.</exception>
    public static void PermuteRun(uint first, uint l, uint p, Span<uint> images)
    {
        if (l > 1 && (ulong)first + (ulong)images.Length > l)
        {
            ThrowOutside((uint)Math.Min(uint.MaxValue, (ulong)first + (ulong)images.Length - 1), l);
        }

        int done = 0;
        if (Vector256.IsHardwareAccelerated)
        {
            Vector256<uint> lane = Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);
            for (; done + 8 <= images.Length; done += 8)
            {
                Permute8(Vector256.Create(first + (uint)done) + lane, l, p).CopyTo(images.Slice(done, 8));
            }
        }

        for (; done < images.Length; done++)
        {
            images[done] = Permute(first + (uint)done, l, p);
        }
    }

    /// <summary>Lanes of <see cref="Permute"/>(i, l, p) under one seed: the scalar steps on eight lanes at once.</summary>
    internal static Vector256<uint> Permute8(Vector256<uint> i, uint l, uint p)
    {
        if (l <= 1)
        {
            return Vector256<uint>.Zero;
        }

        return AddReduced(Walk8(i, l, Vector256.Create(p)), l, Vector256.Create(Remainder(p, l)));
    }

    /// <summary>
    /// The longest permutation <see cref="Permute16(Vector256{ushort}, uint, uint)"/> takes: 2^15 − 1, so l is a positive 16-bit signed integer (the walk's
    /// end test is a signed comparison) and a lane's index and offset sum stay below 2^16.
    /// </summary>
    internal const uint ShortLength = (1u << 15) - 1;

    /// <summary>
    /// <see cref="Permute"/>(i, l, p) on sixteen 16-bit lanes, for l ≤ <see cref="ShortLength"/> (every lane below l; a longer
    /// l is refused, since the walk's signed end test would never end). Exact:
    /// each step's low 16 bits depend only on the low 16 bits of its operands (a product modulo 2^32 or 2^16, an XOR with a
    /// constant, an XOR with a right shift of bits under the mask w &lt; 2^15), and the walk's value is at most w after its
    /// last step, so the 16-bit walk is the 32-bit one's low half and ends where it ends; the offset by p is (i + p mod l)
    /// mod l, below 2^16 before the reduction. One vpmullw (one 16-lane step) where two vpmulld walked eight lanes each.
    /// </summary>
    internal static Vector256<ushort> Permute16(Vector256<ushort> i, uint l, uint p)
    {
        if (l <= 1)
        {
            return Vector256<ushort>.Zero;
        }

        ArgumentOutOfRangeException.ThrowIfGreaterThan(l, ShortLength);
        return Permute16(i, Seeds16.Of(l, p));
    }

    /// <summary>
    /// <see cref="Permute"/>(i, l, p) on sixteen 16-bit lanes with a length and seed per half (<see cref="Seeds16"/>): two
    /// permutations in one walk, each as <see cref="Permute16(Vector256{ushort}, uint, uint)"/> would give it (a lane
    /// whose length is 1 walks to 0, the scalar form's image). Every lane's index must be below its half's length: the
    /// scalar form refuses a larger one, but here a lane may start in a cycle of [0, mask] with no value below the length
    /// and the walk would not end (callers pass indices inside the run, clamped below the length).
    /// </summary>
    [MethodImpl(InliningOptions.HotPath)]
    internal static Vector256<ushort> Permute16(Vector256<ushort> i, in Seeds16 s)
    {
        Masks16 m = new(s.Mask);
        Vector256<ushort> walking = Vector256<ushort>.AllBitsSet;
        do
        {
            i = Vector256.ConditionalSelect(walking, Scramble16(i, s, m), i);
            // Values are below 2^15 and l below 2^15 too: the signed comparison is the unsigned one.
            walking = Vector256.AndNot(walking, Vector256.LessThan(i.AsInt16(), s.Limit).AsUInt16());
        }
        while (walking != Vector256<ushort>.Zero);

        return s.Offset(i);
    }

    /// <summary>
    /// Two sets of sixteen 16-bit lanes, <see cref="Permute16(Vector256{ushort}, in Seeds16)"/> of each, walked together so
    /// their dependency chains overlap; the same precondition (every index below its half's length).
    /// </summary>
    [MethodImpl(InliningOptions.HotPath)]
    internal static (Vector256<ushort> A, Vector256<ushort> B) Permute16Pair(Vector256<ushort> a, in Seeds16 sa, Vector256<ushort> b, in Seeds16 sb)
    {
        Masks16 ma = new(sa.Mask), mb = new(sb.Mask);
        Vector256<ushort> walkingA = Vector256<ushort>.AllBitsSet, walkingB = Vector256<ushort>.AllBitsSet;
        do
        {
            a = Vector256.ConditionalSelect(walkingA, Scramble16(a, sa, ma), a);
            b = Vector256.ConditionalSelect(walkingB, Scramble16(b, sb, mb), b);
            walkingA = Vector256.AndNot(walkingA, Vector256.LessThan(a.AsInt16(), sa.Limit).AsUInt16());
            walkingB = Vector256.AndNot(walkingB, Vector256.LessThan(b.AsInt16(), sb.Limit).AsUInt16());
        }
        while ((walkingA | walkingB) != Vector256<ushort>.Zero);

        return (sa.Offset(a), sb.Offset(b));
    }

    // One pass of the scalar loop's steps on sixteen 16-bit lanes (the low halves of the 32-bit steps), with the seed's words
    // folded where the steps are linear (Seeds16): x ^= p16; x ^= (x & w) >> 4; x ^= p8 is t ^ ((t & w) >> 4) ^ K1 for the
    // product t (xor, the mask and the shift distribute over xor), x ^= p23; x ^= (x & w) >> 1 is t ^ ((t & w) >> 1) ^ K2,
    // and the two products by p27 and the constant are one product by their product (modulo 2^16). Each (x & w) >> k is
    // (x >> k) & (w >> k) (Masks16), so the shift starts the step and the mask and the xor are one operation where the
    // machine has a three-input logic instruction (AVX-512VL vpternlogd; the JIT folds the and-xor into it): two steps on
    // the chain instead of three, six passes of them a walk; without it the same count as before. The same integers; the
    // constant xors run beside the shifts.
    [MethodImpl(InliningOptions.HotPath)]
    private static Vector256<ushort> Scramble16(Vector256<ushort> i, in Seeds16 s, in Masks16 m)
    {
        Vector256<ushort> x = (i ^ s.P) * Vector256.Create(unchecked((ushort)0xe170893du));
        x = XorAnd(x ^ s.K1, x >>> 4, m.Shift4);
        x *= Vector256.Create(unchecked((ushort)0x0929eb3fu));
        x = XorAnd(x ^ s.K2, x >>> 1, m.Shift1);
        x *= s.P27;
        x = XorAnd(x, x >>> 11, m.Shift11);
        x *= Vector256.Create(unchecked((ushort)0x74dcb303u));
        x = XorAnd(x, x >>> 2, m.Shift2);
        x *= Vector256.Create(unchecked((ushort)0x9e501cc3u));
        x = XorAnd(x, x >>> 2, m.Shift2);
        x *= Vector256.Create(unchecked((ushort)0xc860a3dfu));
        return XorAnd(x & s.Mask, x >>> 5, m.Shift5);
    }

    // a ^ (b & c): one vpternlogd where the machine has AVX-512VL (truth table 0x78: A ^ (B & C) of the operands' bit
    // patterns 0xF0, 0xCC, 0xAA), so a step whose a is ready beside its shifted b waits one operation on the shift, not two
    // (the JIT's own folding took the and apart from a four-input step); otherwise the and and the xor.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<ushort> XorAnd(Vector256<ushort> a, Vector256<ushort> b, Vector256<ushort> c) =>
        Avx512F.VL.IsSupported ? Avx512F.VL.TernaryLogic(a, b, c, 0x78) : a ^ (b & c);

    /// <summary>A walk's mask w shifted as Scramble16's steps shift the value: w ≫ 1, 2, 4, 5 and 11, made once a walk.</summary>
    private readonly struct Masks16(Vector256<ushort> w)
    {
        public readonly Vector256<ushort> Shift1 = w >>> 1, Shift2 = w >>> 2, Shift4 = w >>> 4, Shift5 = w >>> 5, Shift11 = w >>> 11;
    }

    /// <summary>
    /// The seed words, mask, length and offset of a 16-bit walk (<see cref="Permute16(Vector256{ushort}, in Seeds16)"/>), per
    /// half: lanes 0–7 permute [0, lLow) by pLow, lanes 8–15 [0, lHigh) by pHigh (each length 1 to <see cref="ShortLength"/>).
    /// </summary>
    internal readonly struct Seeds16
    {
        /// <summary>p; K1 = p16 ⊕ ((p16 ∧ w) ≫ 4) ⊕ p8; K2 = p23 ⊕ ((p23 ∧ w) ≫ 1); P27 = (p27 | 1)·0x6935fa69 (see Scramble16); mask w, length, p mod l.</summary>
        public readonly Vector256<ushort> P, K1, K2, P27, Mask, Length, Remainder;
        public readonly Vector256<short> Limit;

        /// <summary>Lanes 0–7 permute [0, lLow) by pLow, lanes 8–15 [0, lHigh) by pHigh (each length 1 to <see cref="ShortLength"/>).</summary>
        public Seeds16(uint lLow, uint pLow, uint lHigh, uint pHigh)
            : this(Halves(pLow, pHigh), Halves(K1Of(pLow, MaskBelow(lLow)), K1Of(pHigh, MaskBelow(lHigh))), Halves(K2Of(pLow, MaskBelow(lLow)), K2Of(pHigh, MaskBelow(lHigh))),
                Halves(P27Of(pLow), P27Of(pHigh)), Halves(MaskBelow(lLow), MaskBelow(lHigh)), Halves(Checked(lLow), Checked(lHigh)),
                Halves(KenslerPermutation.Remainder(pLow, lLow), KenslerPermutation.Remainder(pHigh, lHigh)))
        {
        }

        private Seeds16(Vector256<ushort> p, Vector256<ushort> k1, Vector256<ushort> k2, Vector256<ushort> p27, Vector256<ushort> mask, Vector256<ushort> length, Vector256<ushort> remainder)
        {
            (P, K1, K2, P27, Mask, Length, Remainder) = (p, k1, k2, p27, mask, length, remainder);
            Limit = length.AsInt16();
        }

        /// <summary>One permutation of [0, l) by p in all sixteen lanes: whole-register broadcasts.</summary>
        [MethodImpl(InliningOptions.ShortMethod)]
        public static Seeds16 Of(uint l, uint p)
        {
            uint w = MaskBelow(l);
            return new(Both(p), Both(K1Of(p, w)), Both(K2Of(p, w)), Both(P27Of(p)), Both(w), Both(Checked(l)), Both(KenslerPermutation.Remainder(p, l)));
        }

        // The seed's words folded into the steps' linear parts (Scramble16); only the low 16 bits are used.
        [MethodImpl(InliningOptions.ShortMethod)]
        private static uint K1Of(uint p, uint w) => (p >> 16) ^ (((p >> 16) & w) >> 4) ^ (p >> 8);

        [MethodImpl(InliningOptions.ShortMethod)]
        private static uint K2Of(uint p, uint w) => (p >> 23) ^ (((p >> 23) & w) >> 1);

        [MethodImpl(InliningOptions.ShortMethod)]
        private static uint P27Of(uint p) => ((p >> 27) | 1) * 0x6935fa69u;

        [MethodImpl(InliningOptions.ShortMethod)]
        private static uint Checked(uint l)
        {
            ArgumentOutOfRangeException.ThrowIfZero(l);
            ArgumentOutOfRangeException.ThrowIfGreaterThan(l, ShortLength);
            return l;
        }

        [MethodImpl(InliningOptions.ShortMethod)]
        private static Vector256<ushort> Both(uint v) => Vector256.Create((ushort)v);

        /// <summary>
        /// (i + p mod l) mod l per lane, i below l: the sum is below 2l ≤ 2^16; where it reaches l, sum − l is the smaller
        /// (unsigned).
        /// </summary>
        [MethodImpl(InliningOptions.ShortMethod)]
        public Vector256<ushort> Offset(Vector256<ushort> i)
        {
            Vector256<ushort> sum = i + Remainder;
            return Vector256.Min(sum, sum - Length);
        }

        [MethodImpl(InliningOptions.ShortMethod)]
        private static Vector256<ushort> Halves(uint low, uint high) => Vector256.Create(Vector128.Create((ushort)low), Vector128.Create((ushort)high));
    }

    /// <summary>
    /// Two independent sets of lanes, <see cref="Permute"/>(a, la, pa) and <see cref="Permute"/>(b, lb, pb) (la, lb &gt; 1),
    /// walked together so their dependency chains overlap: the column and row shuffles of a multi-jittered point.
    /// </summary>
    internal static (Vector256<uint> A, Vector256<uint> B) Permute8Pair(Vector256<uint> a, uint la, uint pa, Vector256<uint> b, uint lb, uint pb)
    {
        Walk(ref a, la, Vector256.Create(pa), ref b, lb, Vector256.Create(pb));
        return (AddReduced(a, la, Vector256.Create(Remainder(pa, la))), AddReduced(b, lb, Vector256.Create(Remainder(pb, lb))));
    }

    // p % l (l ≥ 1): a mask where l is a power of two (the same integer), else the division. The lane forms take it once a
    // walk; a hardware division (tens of cycles, not pipelined) was three of a multi-jittered batch's critical resources.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static uint Remainder(uint p, uint l) => BitOperations.IsPow2(l) ? p & (l - 1) : p % l;

    // ((ulong)i + p) % l with i < l, per lane, given q = p % l: the same integer as (i + q) % l, and i + q < 2l, so l is
    // subtracted once where the true sum reaches l, that is where the 32-bit sum is at least l or has wrapped past
    // 2^32 (then it is below q).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<uint> AddReduced(Vector256<uint> i, uint l, Vector256<uint> q)
    {
        Vector256<uint> limit = Vector256.Create(l);
        Vector256<uint> sum = i + q;
        Vector256<uint> over = Vector256.GreaterThanOrEqual(sum, limit) | Vector256.LessThan(sum, q);
        return sum - (over & limit);
    }

    // The same with a seed per lane: q = p % l per lane, by doubles on 512-bit lanes where the machine has them
    // (⌊p / l⌋ of the correctly rounded quotient is the integer quotient for p < 2^32; p − ⌊p / l⌋·l is exact), else by
    // one 64-bit remainder per lane, as the scalar form.
    private static Vector256<uint> OffsetBySeed(Vector256<uint> i, uint l, Vector256<uint> p)
    {
        if (Generators.Lanes.Wide512)
        {
            Vector512<double> pd = Vector512.ConvertToDouble(Vector512.WidenLower(p.ToVector512()));
            Vector512<double> ld = Vector512.Create((double)l);
            Vector512<ulong> q = Vector512.ConvertToUInt64(pd - Vector512.Floor(pd / ld) * ld);
            return AddReduced(i, l, Vector512.Narrow(q, q).GetLower());
        }

        Span<uint> lanes = stackalloc uint[8];
        i.CopyTo(lanes);
        for (int k = 0; k < 8; k++)
        {
            lanes[k] = (uint)(((ulong)lanes[k] + p.GetElement(k)) % l);
        }

        return Vector256.Create((ReadOnlySpan<uint>)lanes);
    }

    // One pass of the scalar loop's steps on eight lanes, with the seed's shifts precomputed (p27 with its low bit set).
    // Vectors as separate arguments rather than a struct: inlined, they stay in registers.
    [MethodImpl(InliningOptions.HotPath)]
    private static Vector256<uint> Scramble(Vector256<uint> x, Vector256<uint> mask, Vector256<uint> p, Vector256<uint> p16, Vector256<uint> p8, Vector256<uint> p23, Vector256<uint> p27)
    {
        x ^= p;
        x *= Vector256.Create(0xe170893du);
        x ^= p16;
        x ^= (x & mask) >>> 4;
        x ^= p8;
        x *= Vector256.Create(0x0929eb3fu);
        x ^= p23;
        x ^= (x & mask) >>> 1;
        x *= p27;
        x *= Vector256.Create(0x6935fa69u);
        x ^= (x & mask) >>> 11;
        x *= Vector256.Create(0x74dcb303u);
        x ^= (x & mask) >>> 2;
        x *= Vector256.Create(0x9e501cc3u);
        x ^= (x & mask) >>> 2;
        x *= Vector256.Create(0xc860a3dfu);
        x &= mask;
        return x ^ (x >>> 5);
    }

    // The scalar loop of Permute before its final offset, on eight lanes (l > 1): a lane that has left the
    // cycle walk keeps its value while the others walk on.
    [MethodImpl(InliningOptions.HotPath)]
    private static Vector256<uint> Walk8(Vector256<uint> i, uint l, Vector256<uint> p)
    {
        Vector256<uint> mask = Vector256.Create(MaskBelow(l)), limit = Vector256.Create(l);
        Vector256<uint> p16 = p >>> 16, p8 = p >>> 8, p23 = p >>> 23, p27 = (p >>> 27) | Vector256<uint>.One;
        Vector256<uint> walking = Vector256<uint>.AllBitsSet;
        do
        {
            i = Vector256.ConditionalSelect(walking, Scramble(i, mask, p, p16, p8, p23, p27), i);
            walking &= Vector256.GreaterThanOrEqual(i, limit);
        }
        while (walking != Vector256<uint>.Zero);

        return i;
    }

    // Walk8 of two independent sets of lanes (la, lb > 1) in one loop, until both have left their walks.
    [MethodImpl(InliningOptions.HotPath)]
    private static void Walk(ref Vector256<uint> a, uint la, Vector256<uint> pa, ref Vector256<uint> b, uint lb, Vector256<uint> pb)
    {
        Vector256<uint> maskA = Vector256.Create(MaskBelow(la)), limitA = Vector256.Create(la);
        Vector256<uint> maskB = Vector256.Create(MaskBelow(lb)), limitB = Vector256.Create(lb);
        Vector256<uint> pa16 = pa >>> 16, pa8 = pa >>> 8, pa23 = pa >>> 23, pa27 = (pa >>> 27) | Vector256<uint>.One;
        Vector256<uint> pb16 = pb >>> 16, pb8 = pb >>> 8, pb23 = pb >>> 23, pb27 = (pb >>> 27) | Vector256<uint>.One;
        Vector256<uint> walkingA = Vector256<uint>.AllBitsSet, walkingB = Vector256<uint>.AllBitsSet;
        do
        {
            a = Vector256.ConditionalSelect(walkingA, Scramble(a, maskA, pa, pa16, pa8, pa23, pa27), a);
            b = Vector256.ConditionalSelect(walkingB, Scramble(b, maskB, pb, pb16, pb8, pb23, pb27), b);
            walkingA &= Vector256.GreaterThanOrEqual(a, limitA);
            walkingB &= Vector256.GreaterThanOrEqual(b, limitB);
        }
        while ((walkingA | walkingB) != Vector256<uint>.Zero);
    }

    [System.Diagnostics.CodeAnalysis.DoesNotReturn]
    private static void ThrowOutside(uint i, uint l) =>
        throw new ArgumentOutOfRangeException(nameof(i), i, FormattableString.Invariant($"index {i} is not below the permutation's length {l}"));
}
