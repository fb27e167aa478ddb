using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Hashing;

/// <summary>
/// <see cref="SampleHash.UniformRun"/> four coordinates at a time with AVX2 (no 512-bit lanes): the same 64-bit integer
/// steps per lane as <see cref="SampleHash.Uniform"/>, so every lane has the scalar bits. AVX2 has no 64-bit product, so
/// each is made from three 32-bit ones (vpmuludq): x·c mod 2^64 = lo(x)·lo(c) + ((hi(x)·lo(c) + lo(x)·hi(c)) · 2^32);
/// the top 53 bits become a double exactly without a 64-bit conversion, as (2^84 + hi·2^32) − (2^84 + 2^52) +
/// (2^52 + lo) with hi and lo the upper 21 and lower 32 bits put into doubles' significands (every step exact: each
/// value is a multiple of its operands' unit below 2^53), then scaled by 2^-53 as the scalar form scales it.
/// </summary>
internal static class SplitMixLanes
{
    private const ulong Golden = 0x9E3779B97F4A7C15UL;
    private const double TwoTo84 = 19342813113834066795298816.0, TwoTo52 = 4503599627370496.0;

    /// <summary>
    /// <see cref="SampleHash.Uniform"/>(key, first + i, dimension) into <paramref name="xs"/>[i]; callers check
    /// <see cref="Avx2.IsSupported"/>. A run whose indices wrap past 2^32 − 1 goes to the scalar loop (the lanes step the
    /// hash's 64-bit input, whose upper half is the dimension).
    /// </summary>
    public static unsafe void UniformRun(ulong key, uint first, int dimension, Span<double> xs)
    {
        int n = xs.Length;
        if (n == 0)
        {
            return;
        }

        if (first + (uint)(n - 1) < first)
        {
            for (int i = 0; i < n; i++)
            {
                xs[i] = SampleHash.Uniform(key, first + (uint)i, dimension);
            }

            return;
        }

        // The value of lane l of group g is v0 + 4g + l (no carry into the dimension: the run does not wrap), so its
        // product with Combine's multiplier is v0·M + (4g + l)·M modulo 2^64: one addition a group.
        const ulong M = SampleHash.ValueMultiplier;
        ulong v0 = ((ulong)(uint)dimension << 32) | first;
        Vector256<ulong> product = Vector256.Create(v0 * M) + Vector256.Create(0, M, unchecked(2 * M), unchecked(3 * M));
        Vector256<ulong> step = Vector256.Create(unchecked(4 * M)), k = Vector256.Create(key), golden = Vector256.Create(Golden);
        fixed (double* p = xs)
        {
            for (int i = 0; i < n; i += 4)
            {
                Vector256<ulong> x = (k ^ product) + golden;
                x = Multiply(x ^ (x >>> 30), 0xBF58476D1CE4E5B9UL);
                x = Multiply(x ^ (x >>> 27), 0x94D049BB133111EBUL);
                Vector256<double> d = ToUnit(x ^ (x >>> 31));
                product += step;
                if (n - i >= 4)
                {
                    d.Store(p + i);
                }
                else
                {
                    Vector256<long> lane = Vector256.Create(0L, 1, 2, 3);
                    Avx.MaskStore(p + i, Vector256.LessThan(lane, Vector256.Create((long)(n - i))).AsDouble(), d);
                }
            }
        }
    }

    // x·c modulo 2^64 per lane from three 32 × 32 → 64-bit products.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<ulong> Multiply(Vector256<ulong> x, ulong c)
    {
        Vector256<uint> low = x.AsUInt32();
        Vector256<ulong> ll = Avx2.Multiply(low, Vector256.Create(c & 0xFFFFFFFFUL).AsUInt32());
        Vector256<ulong> hl = Avx2.Multiply((x >>> 32).AsUInt32(), Vector256.Create(c & 0xFFFFFFFFUL).AsUInt32());
        Vector256<ulong> lh = Avx2.Multiply(low, Vector256.Create(c >> 32).AsUInt32());
        return ll + ((hl + lh) << 32);
    }

    // SampleHash.ToUnit per lane: (h >> 11) · 2^-53, the conversion exact (see the type's remarks).
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> ToUnit(Vector256<ulong> h)
    {
        Vector256<ulong> a = h >>> 11;
        Vector256<double> low = Avx2.Blend(a.AsUInt32(), Vector256.Create(0x4330000000000000UL).AsUInt32(), 0b10101010).AsDouble();
        Vector256<double> high = ((a >>> 32) | Vector256.Create(0x4530000000000000UL)).AsDouble();
        return ((high - Vector256.Create(TwoTo84 + TwoTo52)) + low) * Vector256.Create(1.0 / 9007199254740992.0);
    }
}
