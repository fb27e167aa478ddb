using System.Diagnostics;
using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;
using PathBench.Sampling.Hashing;

namespace PathBench.Sampling.Generators;

/// <summary>
/// The steps of an eight-point batch after the Kensler permutations, for one lane form (<see cref="LaneWidth"/>): the
/// jittered, Latin hypercube and multi-jittered batches are written once over this interface and specialised per form
/// (the type arguments are structs, so each form compiles to its own code with every step inlined). Every step is the
/// scalar form's IEEE-754 operation or exact integer, per lane.
/// </summary>
/// <typeparam name="TDoubles">Eight doubles: one 512-bit vector (<see cref="WideLanes"/>) or two 256-bit ones (<see cref="NarrowLanes"/>).</typeparam>
internal interface ILaneForm<TDoubles>
    where TDoubles : struct
{
    /// <summary>
    /// Whether the form takes its eight points' integer lanes in the order 0, 1, 4, 5, 2, 3, 6, 7 (<see cref="Lanes.Offsets"/>)
    /// rather than 0 … 7; its doubles (and so the stores) are in point order either way.
    /// </summary>
    static abstract bool Interleaved { get; }

    /// <summary>The lanes, each below 2^31 (a Kensler image, stratum, row or column of a set of at most int.MaxValue points), as doubles (exact).</summary>
    static abstract TDoubles ToDouble(Vector256<uint> v);

    /// <summary>Jitter bits (<see cref="JitterHash.Bits8"/>) as the values of <see cref="JitterHash.Uniform"/>: bits·2^-32 per lane (exact).</summary>
    static abstract TDoubles Jitter(Vector256<uint> bits);

    /// <summary>
    /// (whole + <see cref="Jitter"/>(bits)) / divisor per lane, as <see cref="Over"/>(<see cref="Add"/>(<see cref="ToDouble"/>(whole),
    /// <see cref="Jitter"/>(bits)), divisor) gives it; every lane's whole is below the divisor.
    /// </summary>
    static abstract TDoubles JitteredOver(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor);

    /// <summary>
    /// <see cref="Clamp"/>(<see cref="JitteredOver"/>(whole, bits, divisor)) per lane (every lane's whole below the divisor): the
    /// coordinate of a point in a stratum, as the scalar form's clamp gives it.
    /// </summary>
    static abstract TDoubles JitteredBelowOne(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor);

    /// <summary>a + b per lane.</summary>
    static abstract TDoubles Add(TDoubles a, TDoubles b);

    /// <summary>
    /// x / divisor per lane, as the scalar division: by a power of two it is the product by its reciprocal, which gives the
    /// same double (both scale the significand exactly; these values stay far from the subnormal and overflow ranges).
    /// </summary>
    static abstract TDoubles Over(TDoubles x, LaneDivisor divisor);

    /// <summary><see cref="UnitInterval.Clamp"/> per lane.</summary>
    static abstract TDoubles Clamp(TDoubles x);

    /// <summary>Integer quotient and remainder of each lane by divisor (≥ 1), as / and %.</summary>
    static abstract (Vector256<uint> Quotient, Vector256<uint> Remainder) DivRem(Vector256<uint> v, int divisor);

    /// <summary>The first <c>destination.Length</c> (at most eight) lanes into destination.</summary>
    static abstract void Store(TDoubles v, Span<double> destination);
}

/// <summary>The AVX-512 form: eight doubles in one 512-bit vector, the 32-bit jitter hashes on 256 bits (<see cref="Lanes"/>).</summary>
internal readonly struct WideLanes : ILaneForm<Vector512<double>>
{
    /// <summary>No: lane k holds point k.</summary>
    public static bool Interleaved => false;

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> ToDouble(Vector256<uint> v) => Lanes.ToDouble(v);

    /// <summary>The bits·2^-32 (exact: every 32-bit integer is a double, and the scaling is by a power of two).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> Jitter(Vector256<uint> bits) =>
        (Avx512F.IsSupported ? Avx512F.ConvertToVector512Double(bits) : Lanes.ToDouble(bits)) * Vector512.Create(JitterHash.Scale);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> JitteredOver(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor) => Over(ToDouble(whole) + Jitter(bits), divisor);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> JitteredBelowOne(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor) => Clamp(JitteredOver(whole, bits, divisor));

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> Add(Vector512<double> a, Vector512<double> b) => a + b;

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> Over(Vector512<double> x, LaneDivisor divisor) =>
        divisor.PowerOfTwo ? x * Vector512.Create(divisor.Reciprocal) : x / Vector512.Create((double)divisor.Value);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> Clamp(Vector512<double> x) => Lanes.Clamp(x);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static (Vector256<uint> Quotient, Vector256<uint> Remainder) DivRem(Vector256<uint> v, int divisor) => Lanes.DivRem(v, divisor);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static void Store(Vector512<double> v, Span<double> destination) => Lanes.Store(v, destination);
}

/// <summary>
/// A divisor of the lane forms' <see cref="ILaneForm{TDoubles}.JitteredOver"/> and <see cref="ILaneForm{TDoubles}.Over"/> with the
/// factors they use made once (a sampler keeps one per grid side), not in every batch: for a power of two d, 1/d built from its
/// exponent (<see cref="Lanes.Reciprocal"/>), and <see cref="NarrowLanes.JitteredOver"/>'s scale 2^-32/d and offset −2^20/d.
/// </summary>
internal readonly struct LaneDivisor
{
    /// <summary>The factors of <paramref name="value"/> (≥ 1).</summary>
    public LaneDivisor(int value)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(value, 1);
        Value = value;
        bool packed = BitOperations.IsPow2(value) && value <= 1 << 20;
        Log2 = packed ? BitOperations.Log2((uint)value) : -1;
        double reciprocal = packed ? Lanes.Reciprocal(value) : 0;
        JitterScale = JitterHash.Scale * reciprocal;
        JitterOffset = -1048576.0 * reciprocal;
    }

    /// <summary>The divisor.</summary>
    public int Value { get; }

    /// <summary>log2 <see cref="Value"/> where it is a power of two up to 2^20 (<see cref="Packed"/>), else −1.</summary>
    /// <remarks>Four fields, so a copy passed by value stays in registers (a byref to a sampler's field made the batches zero their frames).</remarks>
    public int Log2 { get; }

    /// <summary>A power of two up to 2^20: <see cref="NarrowLanes.JitteredOver"/>'s one fused multiply-add a half applies.</summary>
    public bool Packed => Log2 >= 0;

    /// <summary>2^-32 / <see cref="Value"/> where <see cref="Packed"/>, else 0.</summary>
    public double JitterScale { get; }

    /// <summary>−2^20 / <see cref="Value"/> where <see cref="Packed"/>, else 0.</summary>
    public double JitterOffset { get; }

    /// <summary>Whether it is a power of two (then the product by <see cref="Reciprocal"/> is the division).</summary>
    public bool PowerOfTwo => BitOperations.IsPow2(Value);

    /// <summary>1 / <see cref="Value"/> of a power of two (exact): 2^-32/d scaled back where packed, else from the exponent.</summary>
    public double Reciprocal => Packed ? JitterScale * 4294967296.0 : Lanes.Reciprocal(Value);
}

/// <summary>Eight doubles as two 256-bit halves: lanes 0–3 and 4–7.</summary>
internal readonly record struct Doubles8(Vector256<double> Low, Vector256<double> High);

/// <summary>
/// The AVX2 form: the doubles on two 256-bit halves, the 32-bit jitter hashes eight lanes at a time (<see cref="JitterHash.Bits8"/>),
/// the conversions between 32-bit integers and doubles without AVX-512's conversion instructions (exact: see each step).
/// Without AVX2 (a test forcing this form on such a machine) the hashes and conversions run lane by lane, the same bits.
/// </summary>
internal readonly struct NarrowLanes : ILaneForm<Doubles8>
{
    /// <summary>
    /// Yes: lanes 0, 1, 4, 5 hold points 0–3 and lanes 2, 3, 6, 7 points 4–7, so <see cref="JitteredOver"/>'s in-lane unpacks
    /// give the points in order without lane-crossing permutes (two vpermq each, which measured about 2–4 % of a batch).
    /// </summary>
    public static bool Interleaved => true;

    /// <summary>Each lane (below 2^31, so the same as a signed integer) as a double, in point order: a 64-bit permute back to lanes 0–7, then vcvtdq2pd, exact.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 ToDouble(Vector256<uint> v) => InLaneOrder(PointOrder(v));

    /// <summary>Interleaved lanes (<see cref="Interleaved"/>) in point order and back: the 64-bit lanes 0, 2, 1, 3 (its own inverse).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<uint> PointOrder(Vector256<uint> v) =>
        Avx2.IsSupported ? Avx2.Permute4x64(v.AsUInt64(), 0b11_01_10_00).AsUInt32() : Vector256.Shuffle(v, Lanes.Offsets(true));

    // Lanes 0–3 to Low and 4–7 to High as doubles, whatever points they hold (DivRem converts there and back in place).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Doubles8 InLaneOrder(Vector256<uint> v)
    {
        if (!Avx.IsSupported)
        {
            return new Doubles8(
                Vector256.ConvertToDouble(Vector256.WidenLower(v)),
                Vector256.ConvertToDouble(Vector256.WidenUpper(v)));
        }

        Debug.Assert(Vector256.LessThanAll(v, Vector256.Create(0x80000000u)), "lanes below 2^31");
        Vector256<int> signed = v.AsInt32();
        return new Doubles8(Avx.ConvertToVector256Double(signed.GetLower()), Avx.ConvertToVector256Double(signed.GetUpper()));
    }

    /// <summary>
    /// Doubles holding whole numbers in [0, 2^32) back to 32-bit integers: x + 2^52 puts x in the significand's low bits
    /// (exact: the sum is an integer below 2^53, and the ulp at 2^52 is 1), whose low 32 bits are x.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<uint> ToUInt32(Doubles8 x)
    {
        Vector256<double> shift = Vector256.Create(4503599627370496.0);
        return Vector256.Narrow((x.Low + shift).AsUInt64(), (x.High + shift).AsUInt64());
    }

    /// <summary>
    /// The bits b·2^-32 without AVX-512's unsigned conversion: b ⊕ 2^31 read as a signed integer is b − 2^31, converted
    /// exactly (vcvtdq2pd), and (b − 2^31)·2^-32 + 1/2 is b·2^-32, a multiple of 2^-32 in [0, 1) and so a double: the
    /// fused and the separate multiply-add both give it exactly.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 Jitter(Vector256<uint> bits)
    {
        Vector256<int> signed = (PointOrder(bits) ^ Vector256.Create(0x80000000u)).AsInt32();
        Vector256<double> scale = Vector256.Create(JitterHash.Scale), half = Vector256.Create(0.5);
        (Vector256<double> low, Vector256<double> high) = Avx.IsSupported
            ? (Avx.ConvertToVector256Double(signed.GetLower()), Avx.ConvertToVector256Double(signed.GetUpper()))
            : (Vector256.ConvertToDouble(Vector256.WidenLower(signed)), Vector256.ConvertToDouble(Vector256.WidenUpper(signed)));

        return Fma.IsSupported
            ? new Doubles8(Fma.MultiplyAdd(low, scale, half), Fma.MultiplyAdd(high, scale, half))
            : new Doubles8((low * scale) + half, (high * scale) + half);
    }

    /// <remarks>
    /// With AVX2 and a divisor up to 2^20 (so whole &lt; 2^20): the 64-bit word (0x433 · 2^52) | (whole · 2^32) | bits is the
    /// double 2^52 + whole·2^32 + bits (exponent 2^52, the 52 significand bits whole and bits), built from 32-bit lanes by
    /// in-lane unpacks (the lanes interleaved, <see cref="Interleaved"/>: the low unpack's lanes 0, 1, 4, 5 are points 0–3 and
    /// the high one's lanes 2, 3, 6, 7 points 4–7, so no lane-crossing permute); times
    /// 2^-32/d minus 2^20/d it is (whole + bits·2^-32)/d. For a power-of-two d the fused multiply-add is exact: the product
    /// only rescales, and the result, whole + bits·2^-32 (at most 52 significant bits) rescaled, is a double, as the scalar
    /// form's exact sum divided by d is. Other divisors take the sum and the division, as the scalar form does.
    /// </remarks>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 JitteredOver(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor)
    {
        if (!Avx2.IsSupported || !Fma.IsSupported || !divisor.Packed)
        {
            return JitteredOverDividing(whole, bits, divisor);
        }

        return Packed(whole, bits, divisor);
    }

    /// <remarks>
    /// Where <see cref="JitteredOver"/> takes its fused multiply-add, its exact result (whole + bits·2^-32)/d is below
    /// (d − 1 + 1)/d = 1 (whole ≤ d − 1, bits·2^-32 &lt; 1), where the clamp returns it unchanged: the clamp's two vminpd are
    /// left out (they share the two ports of the multiplies, shifts and fused multiply-adds, which these batches fill).
    /// Elsewhere the clamp of the sum and division, as the scalar form.
    /// </remarks>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 JitteredBelowOne(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor) =>
        !Avx2.IsSupported || !Fma.IsSupported || !divisor.Packed ? Clamp(JitteredOverDividing(whole, bits, divisor)) : Packed(whole, bits, divisor);

    // JitteredOver's fused multiply-add (AVX2, FMA, a packed divisor).
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Doubles8 Packed(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor)
    {
        Vector256<uint> high = whole | Vector256.Create(0x43300000u);
        Vector256<uint> low = bits;
        Vector256<double> scale = Vector256.Create(divisor.JitterScale), offset = Vector256.Create(divisor.JitterOffset);
        return new Doubles8(Fma.MultiplyAdd(Avx2.UnpackLow(low, high).AsDouble(), scale, offset), Fma.MultiplyAdd(Avx2.UnpackHigh(low, high).AsDouble(), scale, offset));
    }

    // JitteredOver's other cases, out of line (inlined, they took the batches past the JIT's inlining budget): the sum, then
    // the division.
    [MethodImpl(InliningOptions.ColdPath)]
    private static Doubles8 JitteredOverDividing(Vector256<uint> whole, Vector256<uint> bits, LaneDivisor divisor) => Over(Add(ToDouble(whole), Jitter(bits)), divisor);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 Add(Doubles8 a, Doubles8 b) => new(a.Low + b.Low, a.High + b.High);

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 Over(Doubles8 x, LaneDivisor divisor)
    {
        if (divisor.PowerOfTwo)
        {
            Vector256<double> r = Vector256.Create(divisor.Reciprocal);
            return new Doubles8(x.Low * r, x.High * r);
        }

        Vector256<double> d = Vector256.Create((double)divisor.Value);
        return new Doubles8(x.Low / d, x.High / d);
    }

    [MethodImpl(InliningOptions.ShortMethod)]
    public static Doubles8 Clamp(Doubles8 x) => new(Clamp(x.Low), Clamp(x.High));

    /// <summary>A shift and a mask for a power of two, otherwise through exact doubles as <see cref="Lanes.DivRem(Vector512{double}, double)"/>.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (Vector256<uint> Quotient, Vector256<uint> Remainder) DivRem(Vector256<uint> v, int divisor)
    {
        if (BitOperations.IsPow2(divisor))
        {
            return (v >>> BitOperations.Log2((uint)divisor), v & Vector256.Create((uint)divisor - 1));
        }

        Doubles8 x = InLaneOrder(v);
        Vector256<double> d = Vector256.Create((double)divisor);
        Vector256<double> ql = Vector256.Floor(x.Low / d), qh = Vector256.Floor(x.High / d);
        var q = new Doubles8(ql, qh);
        return (ToUInt32(q), ToUInt32(new Doubles8(x.Low - (ql * d), x.High - (qh * d))));
    }

    /// <remarks>Whole halves where the run covers them, the rest lane by lane (no stack buffer: a method with one is not inlined).</remarks>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static void Store(Doubles8 v, Span<double> destination)
    {
        if (destination.Length == 8)
        {
            v.Low.CopyTo(destination);
            v.High.CopyTo(destination[4..]);
            return;
        }

        Vector256<double> part = v.Low;
        int k = 0;
        if (destination.Length >= 4)
        {
            v.Low.CopyTo(destination);
            part = v.High;
            k = 4;
        }

        for (int lane = 0; k < destination.Length; k++, lane++)
        {
            destination[k] = part.GetElement(lane);
        }
    }

    /// <remarks>As <see cref="Lanes.Clamp"/>: vminpd against the largest double below 1.</remarks>
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<double> Clamp(Vector256<double> x) =>
        Avx.IsSupported ? Avx.Min(x, Vector256.Create(UnitInterval.BelowOne))
        : Vector256.ConditionalSelect(Vector256.LessThan(x, Vector256<double>.One), x, Vector256.Create(UnitInterval.BelowOne));
}
