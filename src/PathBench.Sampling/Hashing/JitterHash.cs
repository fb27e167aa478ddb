using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Hashing;

/// <summary>
/// The jitter inside a stratum of the jittered, Latin hypercube and multi-jittered sets: 32 random bits per
/// (pixel, dimension, index) from 32-bit integer steps only, eight lanes to one 256-bit vector (AVX2 has no
/// 64-bit multiply, which made the 64-bit <see cref="SampleHash.Uniform"/> about 27 instructions per four values).
/// </summary>
/// <remarks>
/// <para>
/// Keys. Each (pixel key, pair of dimensions) has a 64-bit stream key K = <see cref="SampleHash.Combine"/>(pixel key,
/// pair), computed once per batch: a bijection of pixel key ⊕ pair·M (SplitMix64's finaliser), so two distinct
/// (pixel key, pair) of hashed pixel keys get the same K with probability 2^-64; the pair's second dimension takes
/// K ⊕ <see cref="PairOffset"/> (<see cref="PixelPairStreams"/>).
/// </para>
/// <para>
/// Per index i the bits are h = P(P(i + K_lo) ⊕ K_hi), with P the 32-bit "pcg" hash of Jarzynski &amp; Olano 2020,
/// "Hash Functions for GPU Rendering", JCGT 9(3) (one step of the 32-bit LCG, then the RXS-M-XS output
/// permutation of O'Neill 2014, "PCG: A Family of Simple Fast Space-Efficient Statistically Good Algorithms for
/// Random Number Generation", HMC-CS-2014-0905). P is a bijection on 32-bit words (an LCG step with an odd
/// multiplier, then xor-shifts and an odd multiply), so for one stream h is a bijection of i, and both halves of K
/// enter, one in each round.
/// </para>
/// <para>
/// Collisions. Two streams K ≠ K′ give the same bits at the same index i only where P(i + K_lo) ⊕ P(i + K′_lo) =
/// K_hi ⊕ K′_hi: with K_lo = K′_lo this never holds (K_hi ≠ K′_hi), and otherwise it holds for a given i with
/// probability about 2^-32 for unrelated keys, so two streams agree on a run of two or more indices with
/// probability about 2^-64 — the probability that their 64-bit keys are equal, not that of a 32-bit key (2^-32).
/// (A stream K′ = (K_lo + δ, K_hi) is stream K shifted by δ indices; overlapping runs of n indices need equal high
/// halves and |δ| &lt; n: probability about 2n·2^-64.)
/// </para>
/// <para>
/// The constants of P (the LCG multiplier 747796405 and increment 2891336453, the output multiplier 277803737) are
/// from memory of the listings in those papers; the tests (JitterHashTests: chi-square uniformity and independence
/// of consecutive indices, neighbouring pixels and dimensions against scipy's critical values) carry the proof of
/// quality. The value is h·2^-32, exact in a double: [0, 1 − 2^-32].
/// </para>
/// </remarks>
public static class JitterHash
{
    /// <summary>The 32-bit LCG multiplier of P (from memory).</summary>
    private const uint LcgMultiplier = 747796405u;

    /// <summary>The 32-bit LCG increment of P (from memory).</summary>
    private const uint LcgIncrement = 2891336453u;

    /// <summary>The RXS-M-XS output multiplier of P (from memory).</summary>
    private const uint OutputMultiplier = 277803737u;

    /// <summary>2^-32: the bits as a fraction.</summary>
    public const double Scale = 1.0 / 4294967296.0;

    /// <summary>The 64-bit stream key of (<paramref name="key"/>, <paramref name="dimension"/>): once per batch, not per value.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static ulong Stream(ulong key, int dimension) => SampleHash.Combine(key, (ulong)(uint)dimension);

    /// <summary>
    /// What the y stream of a pair differs from its x stream by (<see cref="PixelPairStreams"/>): SplitMix64's increment
    /// 0x9E3779B97F4A7C15 (Steele, Lea &amp; Flood 2014, "Fast Splittable Pseudorandom Number Generators", OOPSLA), both
    /// halves non-zero, so both rounds' keys differ.
    /// </summary>
    public const ulong PairOffset = 0x9E3779B97F4A7C15UL;

    /// <summary>
    /// The jitter streams of a pixel's dimensions 2·<paramref name="pair"/> (X) and 2·<paramref name="pair"/> + 1 (Y) in the
    /// jittered, Latin hypercube and multi-jittered sets: X = <see cref="Stream"/>(pixel key ⊕ <see cref="Generators.Salts.Jitter"/>,
    /// pair), Y = X ⊕ <see cref="PairOffset"/>. One SplitMix64 round a pair, not one a dimension (tenth round).
    /// </summary>
    /// <remarks>
    /// Y ≠ X by construction. X is a bijection of pixel key ⊕ pair·M, so two distinct (pixel key, pair) of hashed pixel keys
    /// give the same X, or one's X the other's Y, with probability about 2^-64 each, as the key per dimension did. Within a
    /// pair both halves of the keys differ (both halves of the offset are non-zero), so the collision argument of the type's
    /// remarks applies to X and Y as to any two streams; JitterHashTests checks their independence at the same index.
    /// </remarks>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static (ulong X, ulong Y) PixelPairStreams(ulong pixel, int pair)
    {
        ulong x = Stream(pixel ^ Generators.Salts.Jitter, pair);
        return (x, x ^ PairOffset);
    }

    /// <summary>
    /// The jitter stream of a pixel's <paramref name="dimension"/>: the X or Y stream of its pair (<see cref="PixelPairStreams"/>).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static ulong PixelStream(ulong pixel, int dimension) =>
        Stream(pixel ^ Generators.Salts.Jitter, dimension >> 1) ^ ((dimension & 1) == 0 ? 0 : PairOffset);

    /// <summary>The 32 bits of <paramref name="index"/> in stream <paramref name="stream"/>.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static uint Bits(ulong stream, uint index) =>
        Output(((Output(((index + (uint)stream) * LcgMultiplier) + LcgIncrement) ^ (uint)(stream >> 32)) * LcgMultiplier) + LcgIncrement);

    /// <summary>The jitter in [0, 1) of <paramref name="index"/> in stream <paramref name="stream"/>: <see cref="Bits"/>·2^-32 (exact).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static double Uniform(ulong stream, uint index) => Bits(stream, index) * Scale;

    /// <summary>
    /// <see cref="Bits"/> per lane: with AVX2 the same 32-bit steps on eight lanes, the products modulo 2^32 (vpmulld), the
    /// data-dependent shift per lane (vpsrlvd); without it (a test forcing a lane form) lane by lane.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<uint> Bits8(ulong stream, Vector256<uint> index) => !Avx2.IsSupported ? Scalar8(stream, index)
        : Second(stream, Output8(((index + Vector256.Create((uint)stream)) * Vector256.Create(LcgMultiplier)) + Vector256.Create(LcgIncrement)));

    /// <summary>
    /// <see cref="Bits8"/> of the run <paramref name="first"/> + k in lane k (indices wrapping past 2^32 − 1 as uint): the
    /// first round's LCG state is (first + K_lo)·a + c + k·a modulo 2^32, one scalar product a run and one vector addition.
    /// With <paramref name="interleaved"/> lane j holds first + <see cref="Generators.Lanes.Offsets"/>(true)[j] (the AVX2 lane form's order).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<uint> Bits8Run(ulong stream, uint first, bool interleaved = false)
    {
        if (!Avx2.IsSupported)
        {
            return Scalar8(stream, Vector256.Create(first) + Generators.Lanes.Offsets(interleaved));
        }

        const uint A = LcgMultiplier;
        Vector256<uint> step = interleaved
            ? Vector256.Create(0u, A, unchecked(4 * A), unchecked(5 * A), unchecked(2 * A), unchecked(3 * A), unchecked(6 * A), unchecked(7 * A))
            : Vector256.Create(0u, A, unchecked(2 * A), unchecked(3 * A), unchecked(4 * A), unchecked(5 * A), unchecked(6 * A), unchecked(7 * A));
        return Second(stream, Output8(Vector256.Create(((first + (uint)stream) * A) + LcgIncrement) + step));
    }

    [MethodImpl(InliningOptions.ColdPath)]
    private static Vector256<uint> Scalar8(ulong stream, Vector256<uint> index) => Vector256.Create(
        Bits(stream, index.GetElement(0)), Bits(stream, index.GetElement(1)), Bits(stream, index.GetElement(2)), Bits(stream, index.GetElement(3)),
        Bits(stream, index.GetElement(4)), Bits(stream, index.GetElement(5)), Bits(stream, index.GetElement(6)), Bits(stream, index.GetElement(7)));

    // The second round: the first round's output xor K_hi, through P.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<uint> Second(ulong stream, Vector256<uint> first) =>
        Output8(((first ^ Vector256.Create((uint)(stream >> 32))) * Vector256.Create(LcgMultiplier)) + Vector256.Create(LcgIncrement));

    // RXS-M-XS of an LCG state: a shift by 4 + the top four bits, a multiply, a shift by 22.
    [MethodImpl(InliningOptions.ShortMethod)]
    private static uint Output(uint state)
    {
        uint word = ((state >> (int)((state >> 28) + 4)) ^ state) * OutputMultiplier;
        return (word >> 22) ^ word;
    }

    [MethodImpl(InliningOptions.ShortMethod)]
    private static Vector256<uint> Output8(Vector256<uint> state)
    {
        Vector256<uint> word = (Avx2.ShiftRightLogicalVariable(state, (state >>> 28) + Vector256.Create(4u)) ^ state) * Vector256.Create(OutputMultiplier);
        return (word >>> 22) ^ word;
    }
}
