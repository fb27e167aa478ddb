using System.Diagnostics;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Hashing;

/// <summary>
/// <see cref="SampleHash.UniformRun"/> four coordinates at a time with AVX2 (no 512-bit lanes): the same 64-bit integer
/// steps per lane as <see cref="SampleHash.Uniform"/> (<see cref="SampleHash.Combine4Premultiplied"/>, whose 64-bit
/// products are made of 32-bit ones, and the exact conversion <see cref="SampleHash.Unit4"/>), so every lane has the
/// scalar bits.
/// </summary>
internal static class SplitMixLanes
{
    /// <summary>
    /// <see cref="SampleHash.Uniform"/>(key, first + i, dimension) into <paramref name="xs"/>[i]. Callers check
    /// <see cref="Avx2.IsSupported"/> and pass a non-empty run whose indices do not wrap past 2^32 − 1 (the lanes step
    /// the hash's 64-bit input, whose upper half is the dimension); <see cref="SampleHash.UniformRunForm"/> sends the
    /// others to its scalar loop.
    /// </summary>
    public static unsafe void UniformRun(ulong key, uint first, int dimension, Span<double> xs)
    {
        int n = xs.Length;
        Debug.Assert(n > 0 && first + (uint)(n - 1) >= first, "an empty run or one that wraps goes to the scalar loop");

        // The value of lane l of group g is v0 + 4g + l (no carry into the dimension: the run does not wrap), so its
        // product with Combine's multiplier is v0·M + (4g + l)·M modulo 2^64: one addition a group.
        const ulong M = SampleHash.ValueMultiplier;
        ulong v0 = ((ulong)(uint)dimension << 32) | first;
        Vector256<ulong> product = Vector256.Create(v0 * M) + Vector256.Create(0, M, unchecked(2 * M), unchecked(3 * M));
        Vector256<ulong> step = Vector256.Create(unchecked(4 * M));
        fixed (double* p = xs)
        {
            for (int i = 0; i < n; i += 4)
            {
                Vector256<double> d = SampleHash.Unit4(SampleHash.Combine4Premultiplied(key, product));
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
}
