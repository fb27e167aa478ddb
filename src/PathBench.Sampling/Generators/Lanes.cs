using System.Numerics;
using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using PathBench.Sampling.Hashing;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Eight points of a batch at once, for the generators built on Kensler permutations and jitter hashes
/// (jittered, Latin hypercube, multi-jittered): index lanes for a run of up to eight consecutive points,
/// exact conversions between the lanes' integers and doubles, the clamp below 1, and the store of the
/// lanes a run uses. Each step is one IEEE-754 operation per lane, the same as the scalar form's, so
/// the lanes keep the scalar bits.
/// </summary>
internal static class Lanes
{
    /// <summary>Points per eight-lane step.</summary>
    public const int Count = 8;

    /// <summary>
    /// <see cref="PointSampler.PointsAtOnce"/> of a sampler built on these lanes: a whole step on either lane form (any
    /// run of up to eight points is one eight-lane step), one point at a time on the scalar form.
    /// </summary>
    public static int PointsAtOnce(LaneWidth width) => width == LaneWidth.Scalar ? 1 : Count;

    /// <summary>
    /// <see cref="PointSampler.WholeRunsCostLittleMore"/> of a sampler built on these lanes: true on either lane form. A run of
    /// sixteen points costs little more than one of eight: the narrow form walks up to sixteen indices in one 16-bit Kensler
    /// walk and the per-call work (the seeds' SplitMix64 rounds, the walk's set-up, the call) is shared; the wide form overlaps
    /// its two eight-lane chains (multi-jittered, eighth round of issue 12: 16 points about 1.4 times 8). So the renderer's
    /// cache makes a deep dimension's rest of the block in one call instead of runs of eight: on the furnished-room frame
    /// (eleventh round, the Intel Xeon with AVX-512) about 149 000 calls instead of 191 000, and 5–11 % less time for the
    /// three sets in all, the points nobody reads included. The values are the same either way; the scalar form keeps runs.
    /// </summary>
    public static bool WholeRuns(LaneWidth width) => width != LaneWidth.Scalar;

    /// <summary>The form the generators run (<see cref="SamplerLanes"/>: 256-bit lanes where the machine has them, AVX-512 machines included).</summary>
    public static LaneWidth Best => SamplerLanes.Width;

    /// <summary>Whether automatic choices outside <see cref="LaneWidth"/> may use 512-bit vectors: only in the wide form.</summary>
    public static bool Wide512 => SamplerLanes.Uses512BitVectors;

    /// <summary>
    /// Indices <paramref name="first"/>, <paramref name="first"/>+1, …, <paramref name="first"/>+<paramref name="n"/>−1 in the
    /// first <paramref name="n"/> lanes (1 ≤ n ≤ 8) and the last of them repeated in the rest: every lane a valid index, so a
    /// permutation's cycle walk ends in every lane; only the first n lanes are stored. With <paramref name="interleaved"/> the
    /// lanes hold the points in <see cref="NarrowLanes"/>' order (<see cref="Offsets"/>).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<uint> Run(uint first, int n, bool interleaved = false) =>
        Vector256.Create(first) + Vector256.Min(Offsets(interleaved), Vector256.Create((uint)(n - 1)));

    /// <summary>
    /// The point each lane holds, from the run's first: 0 … 7 in order, or with <paramref name="interleaved"/> 0, 1, 4, 5, 2, 3,
    /// 6, 7 — the order in which <see cref="NarrowLanes"/> takes eight points, so that in-lane unpacks of each 128-bit half give
    /// points 0–3 and 4–7 without a lane-crossing permute (the order is its own inverse).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<uint> Offsets(bool interleaved) =>
        interleaved ? Vector256.Create(0u, 1u, 4u, 5u, 2u, 3u, 6u, 7u) : Vector256.Create(0u, 1u, 2u, 3u, 4u, 5u, 6u, 7u);

    /// <summary>
    /// <see cref="Run"/> on sixteen 16-bit lanes: first + k for k &lt; n (1 ≤ n ≤ 16), the last index past the run; the
    /// indices' low 16 bits (callers' runs lie below 2^15). In order (lane k point k), or with <paramref name="interleaved"/>
    /// in the order whose <see cref="Widen16"/> gives points 0–7 and 8–15 in <see cref="NarrowLanes"/>' order
    /// (<see cref="Offsets"/>): lanes 0–3 points 0, 1, 4, 5, lanes 4–7 points 8, 9, 12, 13, lanes 8–11 points 2, 3, 6, 7,
    /// lanes 12–15 points 10, 11, 14, 15.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<ushort> Run16(uint first, int n, bool interleaved = false) =>
        Vector256.Create((ushort)first) + Vector256.Min(
            interleaved ? Vector256.Create((ushort)0, 1, 4, 5, 8, 9, 12, 13, 2, 3, 6, 7, 10, 11, 14, 15) : Vector256.Create((ushort)0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15),
            Vector256.Create((ushort)(n - 1)));

    /// <summary>
    /// Sixteen 16-bit lanes in <see cref="Run16"/>'s order as two vectors of eight 32-bit lanes: points 0–7 and 8–15, each in
    /// the order <paramref name="interleaved"/> selects (<see cref="Offsets"/>). Interleaved with AVX2, by in-lane unpacks with
    /// zero (one cycle each, where widening the upper half crosses lanes twice); otherwise by widening the halves.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (Vector256<uint> Low, Vector256<uint> High) Widen16(Vector256<ushort> v, bool interleaved)
    {
        if (!interleaved)
        {
            return (Vector256.WidenLower(v), Vector256.WidenUpper(v));
        }

        if (Avx2.IsSupported)
        {
            return (Avx2.UnpackLow(v, Vector256<ushort>.Zero).AsUInt32(), Avx2.UnpackHigh(v, Vector256<ushort>.Zero).AsUInt32());
        }

        Vector256<ushort> halves = Vector256.Shuffle(v, Vector256.Create((ushort)0, 1, 2, 3, 8, 9, 10, 11, 4, 5, 6, 7, 12, 13, 14, 15));
        return (Vector256.WidenLower(halves), Vector256.WidenUpper(halves));
    }

    /// <summary>
    /// The images of the run <paramref name="first"/> … <paramref name="first"/> + <paramref name="n"/> − 1 (1 ≤ n ≤ 16, inside
    /// [0, <paramref name="l"/>)) under <see cref="KenslerPermutation.Permute"/>(·, l, p): points 0–7 of the run in Low, 8–15
    /// in High (lanes past the run: the last point's image; in the order <paramref name="interleaved"/> selects). Sixteen 16-bit
    /// lanes in one walk where l allows (<see cref="KenslerPermutation.Permute16(Vector256{ushort}, uint, uint)"/>), else eight
    /// 32-bit lanes a walk.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (Vector256<uint> Low, Vector256<uint> High) Permute16(uint first, int n, uint l, uint p, bool interleaved = false)
    {
        if (l <= KenslerPermutation.ShortLength)
        {
            return Widen16(KenslerPermutation.Permute16(Run16(first, n, interleaved), l, p), interleaved);
        }

        Vector256<uint> low = KenslerPermutation.Permute8(Run(first, Math.Min(n, Count), interleaved), l, p);
        return (low, n > Count ? KenslerPermutation.Permute8(Run(first + Count, n - Count, interleaved), l, p) : low);
    }

    /// <summary>The lanes as doubles (exact: every 32-bit integer is a double).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> ToDouble(Vector256<uint> v) => Vector512.ConvertToDouble(Vector512.WidenLower(v.ToVector512Unsafe()));

    /// <summary>Lanes of whole numbers in [0, 2^32) back to integers (exact).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<uint> ToUInt32(Vector512<double> v)
    {
        Vector512<ulong> wide = Vector512.ConvertToUInt64(v);
        return Vector512.Narrow(wide, wide).GetLower();
    }

    /// <summary>
    /// Quotient and remainder of lanes of 32-bit integers by <paramref name="divisor"/>, as doubles: ⌊v / d⌋ of the correctly rounded
    /// quotient is the integer quotient (v = q·d + r with r ≤ d − 1 puts v / d at least 1/d below q + 1, far more than half an ulp
    /// for v &lt; 2^32), and v − q·d is exact in integers below 2^53.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (Vector512<double> Quotient, Vector512<double> Remainder) DivRem(Vector512<double> v, double divisor)
    {
        Vector512<double> d = Vector512.Create(divisor);
        Vector512<double> q = Vector512.Floor(v / d);
        return (q, v - q * d);
    }

    /// <summary>
    /// Integer quotient and remainder of each lane by <paramref name="divisor"/> (≥ 1): a shift and a mask for a power
    /// of two, otherwise <see cref="DivRem(Vector512{double}, double)"/> through exact doubles.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (Vector256<uint> Quotient, Vector256<uint> Remainder) DivRem(Vector256<uint> v, int divisor)
    {
        if (BitOperations.IsPow2(divisor))
        {
            return (v >>> BitOperations.Log2((uint)divisor), v & Vector256.Create((uint)divisor - 1));
        }

        (Vector512<double> q, Vector512<double> r) = DivRem(ToDouble(v), divisor);
        return (ToUInt32(q), ToUInt32(r));
    }

    /// <summary>
    /// 1 / <paramref name="powerOfTwo"/> (2^k, k ≤ 30) built from its exponent bits (2^-k: biased exponent 1023 − k, zero
    /// significand): the double 1.0 / 2^k is, without a division in the batch's code (the divisor is a field, not a constant).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static double Reciprocal(int powerOfTwo) =>
        BitConverter.Int64BitsToDouble((long)(1023 - BitOperations.Log2((uint)powerOfTwo)) << 52);

    /// <summary>
    /// <see cref="UnitInterval.Clamp"/> per lane: min(x, <see cref="UnitInterval.BelowOne"/>) (vminpd, which returns its second
    /// operand where x is NaN, as the scalar comparison does) is x where x &lt; 1 and the largest double below 1 elsewhere.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<double> Clamp(Vector512<double> x) =>
        Avx512F.IsSupported ? Avx512F.Min(x, Vector512.Create(UnitInterval.BelowOne))
        : Vector512.ConditionalSelect(Vector512.LessThan(x, Vector512<double>.One), x, Vector512.Create(UnitInterval.BelowOne));

    /// <summary>The first <c>destination.Length</c> (at most eight) lanes into <paramref name="destination"/>.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static void Store(Vector512<double> v, Span<double> destination)
    {
        if (destination.Length == 8)
        {
            v.CopyTo(destination);
            return;
        }

        // A run's last part-group: element by element (a span copy of a few doubles is a Memmove call, which
        // measured as a visible share of a run of four).
        Span<double> lanes = stackalloc double[8];
        v.CopyTo(lanes);
        for (int k = 0; k < destination.Length; k++)
        {
            destination[k] = lanes[k];
        }
    }

    /// <summary>Whether the run [<paramref name="first"/>, <paramref name="first"/> + <paramref name="n"/>) lies in a set of <paramref name="count"/> points (outside it the scalar form throws, and the lanes must not cycle-walk).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static bool Inside(uint first, int n, int count) => (ulong)first + (ulong)n <= (ulong)count;
}

/// <summary>
/// How the sets built on Kensler permutations make a batch (<see cref="PointSampler.Width"/>); every form gives the
/// scalar form's bits.
/// </summary>
internal enum LaneWidth
{
    /// <summary>One point at a time.</summary>
    Scalar,

    /// <summary>
    /// Everything on 256-bit vectors (AVX2): the permutations and the 32-bit jitter hashes on eight 32-bit lanes, the
    /// coordinates' doubles as two halves of four (<see cref="NarrowLanes"/>).
    /// </summary>
    Narrow,

    /// <summary>Everything on eight lanes: the permutations and the jitter hashes on 256 bits, the doubles on 512 bits (AVX-512).</summary>
    Wide,
}
