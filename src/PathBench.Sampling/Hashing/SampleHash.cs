using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Hashing;

/// <summary>
/// Counter-based hashing: every random value in PathBench is a pure function of its keys
/// (pixel, sample index, dimension, seed), so no random stream is ever shared between
/// pixels or threads. The mixer is the 64-bit finaliser of SplitMix64 (Steele, Lea &amp;
/// Flood 2014, "Fast splittable pseudorandom number generators", OOPSLA), which is a
/// bijection on 64-bit words with full avalanche.
/// </summary>
public static class SampleHash
{
    private const ulong Golden = 0x9E3779B97F4A7C15UL;

    /// <summary>The SplitMix64 finaliser of <c>x + golden</c>.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static ulong Mix64(ulong x)
    {
        x += Golden;
        x = (x ^ (x >> 30)) * 0xBF58476D1CE4E5B9UL;
        x = (x ^ (x >> 27)) * 0x94D049BB133111EBUL;
        return x ^ (x >> 31);
    }

    /// <summary>
    /// Hash of a key and one more word; order matters. One finaliser round: the key is itself
    /// a full-avalanche hash, and the odd multiplier spreads the word's bits over all 64
    /// before the XOR, so distinct words give unrelated outputs (a collision needs
    /// key1 ^ key2 = (v1 ^ v2)·M, probability 2^-64 for hashed keys).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static ulong Combine(ulong key, ulong value) => Mix64(key ^ (value * ValueMultiplier));

    /// <summary>The odd multiplier <see cref="Combine"/> spreads its value's bits with.</summary>
    public const ulong ValueMultiplier = 0xD6E8FEB86659FD93UL;

    /// <summary>The upper 32 bits of <see cref="Combine"/>: a 32-bit seed.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static uint Combine32(ulong key, ulong value) => (uint)(Combine(key, value) >> 32);

    /// <summary>A uniform double in [0, 1) from the top 53 bits of a hash.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static double ToUnit(ulong hash) => (hash >> 11) * (1.0 / 9007199254740992.0);

    /// <summary>The uniform value for (key, index, dimension): used for jitter and independent samples.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static double Uniform(ulong key, uint index, int dimension) =>
        ToUnit(Combine(key, ((ulong)(uint)dimension << 32) | index));

    /// <summary>
    /// <see cref="Uniform"/>(<paramref name="key"/>, first + i, <paramref name="dimension"/>) into <paramref name="xs"/>[i] for
    /// each i (indices wrapping past 2^32 − 1 as uint): eight at a time by <see cref="Uniform8"/> on 512-bit lanes where the
    /// machine has them (each lane the scalar bits; about a quarter of the scalar loop's time), a run's last part-group lane
    /// by lane from the vector; four at a time with AVX2 only (<see cref="SplitMixLanes"/>); a single value, or neither, by
    /// the scalar hash.
    /// </summary>
    public static void UniformRun(ulong key, uint first, int dimension, Span<double> xs) =>
        UniformRunForm(key, first, dimension, xs, Generators.Lanes.Best);

    /// <summary>
    /// <see cref="UniformRun"/> in the lane form <paramref name="width"/> (tests run each
    /// on one machine): <see cref="Generators.LaneWidth.Wide"/> eight at a time on 512-bit lanes,
    /// <see cref="Generators.LaneWidth.Narrow"/> four at a time with AVX2 (<see cref="SplitMixLanes"/>; a run whose indices
    /// wrap past 2^32 − 1 takes the scalar loop), or the scalar loop.
    /// </summary>
    internal static void UniformRunForm(ulong key, uint first, int dimension, Span<double> xs, Generators.LaneWidth width)
    {
        bool wraps = first + (uint)(xs.Length - 1) < first;
        if (width == Generators.LaneWidth.Narrow && Avx2.IsSupported && xs.Length > 1 && !wraps)
        {
            SplitMixLanes.UniformRun(key, first, dimension, xs);
            return;
        }

        if (width == Generators.LaneWidth.Wide && Vector512.IsHardwareAccelerated && xs.Length > 1)
        {
            Vector256<uint> lane = Vector256.Create(0u, 1, 2, 3, 4, 5, 6, 7);
            for (int i = 0; i < xs.Length; i += 8)
            {
                Generators.Lanes.Store(Uniform8(key, Vector256.Create(first + (uint)i) + lane, dimension), xs.Slice(i, Math.Min(8, xs.Length - i)));
            }

            return;
        }

        for (int i = 0; i < xs.Length; i++)
        {
            xs[i] = Uniform(key, first + (uint)i, dimension);
        }
    }

    /// <summary>
    /// <see cref="Uniform"/>(key, index, dimension) for the eight indices of <paramref name="index"/>, as one
    /// vector: the same 64-bit integer steps per lane (multiplications modulo 2^64, shifts, xors), the top 53
    /// bits converted exactly (they fit a double's significand) and scaled by 2^-53, so every lane has the
    /// scalar form's bits. Eight lanes of 512 bits where the machine has them, otherwise the scalar form per lane.
    /// </summary>
    [MethodImpl(InliningOptions.HotPath)]
    public static Vector512<double> Uniform8(ulong key, Vector256<uint> index, int dimension)
    {
        if (!Vector512.IsHardwareAccelerated)
        {
            return Uniform8Scalar(key, index, dimension);
        }

        Vector512<ulong> value = Vector512.WidenLower(index.ToVector512Unsafe()) | Vector512.Create((ulong)(uint)dimension << 32);
        Vector512<ulong> x = Combine8(key, value);
        return Vector512.ConvertToDouble(x >>> 11) * Vector512.Create(1.0 / 9007199254740992.0);
    }

    /// <summary><see cref="Combine"/>(key, value) per lane: the same 64-bit steps (callers check <see cref="Vector512.IsHardwareAccelerated"/>).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<ulong> Combine8(ulong key, Vector512<ulong> value) =>
        Combine8Premultiplied(key, value * Vector512.Create(ValueMultiplier));

    /// <summary>
    /// <see cref="Combine8"/> given each lane's value times <see cref="ValueMultiplier"/> (modulo 2^64) instead of the
    /// value: for callers whose values are a run s + l, whose products are s·M + l·M with the l·M constant.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector512<ulong> Combine8Premultiplied(ulong key, Vector512<ulong> product)
    {
        Vector512<ulong> x = Vector512.Create(key) ^ product;
        x += Vector512.Create(Golden);
        x = (x ^ (x >>> 30)) * Vector512.Create(0xBF58476D1CE4E5B9UL);
        x = (x ^ (x >>> 27)) * Vector512.Create(0x94D049BB133111EBUL);
        return x ^ (x >>> 31);
    }

    /// <summary>
    /// The low 32 bits of <see cref="Combine"/>(key, k) for k = 0 … <c>seeds.Length</c> − 1 into <paramref name="seeds"/>:
    /// the seeds of a list of positions (digit positions, dimensions), eight at a time where the machine has the vectors.
    /// </summary>
    public static void CombineLow32Run(ulong key, Span<uint> seeds)
    {
        int k = 0;
        if (Generators.Lanes.Wide512)
        {
            Vector512<ulong> lane = Vector512.Create(0UL, 1UL, 2UL, 3UL, 4UL, 5UL, 6UL, 7UL);
            for (; k + 8 <= seeds.Length; k += 8)
            {
                Vector512<ulong> h = Combine8(key, Vector512.Create((ulong)k) + lane);
                Vector512.Narrow(h, h).GetLower().CopyTo(seeds.Slice(k, 8));
            }
        }

        for (; k < seeds.Length; k++)
        {
            seeds[k] = (uint)Combine(key, (ulong)k);
        }
    }

    /// <summary>
    /// <see cref="Uniform"/>(key, index, dimension) for the four indices of <paramref name="index"/> (AVX2, no AVX-512: callers
    /// check <see cref="Avx2"/>.IsSupported): <see cref="Combine4"/>'s 64-bit steps, then the top 53 bits converted exactly by
    /// <see cref="Unit4"/>, so every lane has the scalar form's bits. The value's product with the multiplier M is
    /// i·M + d·2^32·M modulo 2^64 for the 32-bit index i and dimension d: i·M from two 32-bit products (i has no high
    /// half: i·M_low + (i·M_high)·2^32), the dimension's term one scalar product.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<double> Uniform4(ulong key, Vector128<uint> index, int dimension)
    {
        Vector256<uint> i = Vector256.WidenLower(index.ToVector256Unsafe()).AsUInt32();
        Vector256<ulong> product = Avx2.Multiply(i, Vector256.Create(ValueMultiplier & 0xFFFFFFFFUL).AsUInt32())
            + (Avx2.Multiply(i, Vector256.Create(ValueMultiplier >> 32).AsUInt32()) << 32)
            + Vector256.Create(unchecked(((ulong)(uint)dimension << 32) * ValueMultiplier));
        return Unit4(Combine4Premultiplied(key, product));
    }

    /// <summary>
    /// <see cref="Combine"/>(key, value) per 64-bit lane on 256-bit vectors (AVX2): the same steps, each multiplication
    /// modulo 2^64 made of 32 × 32 → 64-bit ones (<see cref="MultiplyLow4"/>).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<ulong> Combine4(ulong key, Vector256<ulong> value) => Combine4Premultiplied(key, MultiplyLow4(value, ValueMultiplier));

    /// <summary><see cref="Combine4"/> given each lane's value times <see cref="ValueMultiplier"/> (modulo 2^64).</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<ulong> Combine4Premultiplied(ulong key, Vector256<ulong> product)
    {
        Vector256<ulong> x = Vector256.Create(key) ^ product;
        x += Vector256.Create(Golden);
        x = MultiplyLow4(x ^ (x >>> 30), 0xBF58476D1CE4E5B9UL);
        x = MultiplyLow4(x ^ (x >>> 27), 0x94D049BB133111EBUL);
        return x ^ (x >>> 31);
    }

    /// <summary>
    /// x·c modulo 2^64 per lane without AVX-512's 64-bit multiply: with x = xh·2^32 + xl and c = ch·2^32 + cl,
    /// x·c ≡ xl·cl + ((xh·cl + xl·ch) mod 2^32)·2^32 (mod 2^64), three unsigned 32 × 32 → 64-bit products (vpmuludq).
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<ulong> MultiplyLow4(Vector256<ulong> x, ulong c)
    {
        Vector256<uint> low = Vector256.Create((ulong)(uint)c).AsUInt32();
        Vector256<uint> swapped = Vector256.Create((c >> 32) | (c << 32)).AsUInt32();
        Vector256<ulong> t = (x.AsUInt32() * swapped).AsUInt64();
        Vector256<ulong> cross = (t << 32) + (t & Vector256.Create(0xFFFFFFFF00000000UL));
        return Avx2.Multiply(x.AsUInt32(), low) + cross;
    }

    /// <summary>
    /// <see cref="ToUnit"/> per lane without AVX-512's 64-bit conversion (AVX2): with u = h ≫ 11 = 2·(h ≫ 12) + b (b bit 11 of h),
    /// the bits h ≫ 12 under the exponent of 1 make f = 1 + (h ≫ 12)·2^-52 in [1, 2), and f − 1 (b = 0) or f − (1 − 2^-53)
    /// (b = 1, picked by the blend on bit 11 moved to the sign bit) is u·2^-53. Both subtractions are exact (Sterbenz: the
    /// operands are within a factor of two), and so is the scalar form's conversion of u below 2^53 and its scaling by 2^-53:
    /// the same double. Five instructions where the two-part conversion took eight.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<double> Unit4(Vector256<ulong> h)
    {
        Vector256<double> f = ((h >>> 12) | Vector256.Create(0x3FF0000000000000UL)).AsDouble();
        Vector256<double> offset = Avx.BlendVariable(Vector256<double>.One, Vector256.Create(BitConverter.UInt64BitsToDouble(0x3FEFFFFFFFFFFFFFUL)), (h << 52).AsDouble());
        return f - offset;
    }

    /// <summary>
    /// <see cref="Unit4"/>(h)·<paramref name="m"/> per lane: unit(h) is exact, so the product is rounded once, as the scalar
    /// form's unit(h)·m is: the same double.
    /// </summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static Vector256<double> Unit4Times(Vector256<ulong> h, Vector256<double> m) => Unit4(h) * m;

    [MethodImpl(InliningOptions.ColdPath)]
    private static Vector512<double> Uniform8Scalar(ulong key, Vector256<uint> index, int dimension)
    {
        Span<double> lanes = stackalloc double[8];
        for (int k = 0; k < 8; k++)
        {
            lanes[k] = Uniform(key, index.GetElement(k), dimension);
        }

        return Vector512.Create((ReadOnlySpan<double>)lanes);
    }

    /// <summary>
    /// The per-pixel key: pixels decorrelated from each other, and different global seeds
    /// giving independent replicates.
    /// </summary>
    public static ulong PixelKey(int x, int y, ulong seed) =>
        Combine(Mix64(seed), ((ulong)(uint)y << 32) | (uint)x);
}
