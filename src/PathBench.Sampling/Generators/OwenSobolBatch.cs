using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Owen-scrambled Sobol 2-D points, eight at a time with AVX2: the same arithmetic as the
/// scalar path (bit reversal, Laine–Karras permutation, byte-table walk, permutation,
/// reversal) on eight 32-bit lanes, the table walk by gathers. Returns how many points it
/// wrote (a multiple of eight; zero without AVX2), leaving the rest to the scalar code. With an
/// empty <c>ys</c> it makes the first coordinate only (one dimension).
/// </summary>
internal static class OwenSobolBatch
{
    private const double Scale = 1.0 / 4294967296.0;

    public static unsafe int Run(ReadOnlySpan<uint> tablesX, ReadOnlySpan<uint> tablesY, uint firstIndex, uint seedIndex, uint seedX, uint seedY, Span<double> xs, Span<double> ys)
    {
        if (!Avx2.IsSupported || xs.Length < 8)
        {
            return 0;
        }

        bool pair = !ys.IsEmpty;
        int n = xs.Length & ~7;
        Vector256<uint> lane = Vector256.Create(0u, 1, 2, 3, 4, 5, 6, 7);
        Vector256<uint> sIndex = Vector256.Create(seedIndex), sx = Vector256.Create(seedX), sy = Vector256.Create(seedY);
        fixed (uint* tx = tablesX, ty = tablesY)
        fixed (double* px = xs, py = ys)
        {
            for (int i = 0; i < n; i += 8)
            {
                Vector256<uint> index = Vector256.Create(firstIndex + (uint)i) + lane;
                Vector256<uint> r = LaineKarras(Reverse(index), sIndex);
                Store(Reverse(LaineKarras(Walk(tx, r), sx)), px + i);
                if (pair)
                {
                    Store(Reverse(LaineKarras(Walk(ty, r), sy)), py + i);
                }
            }
        }

        return n;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> LaineKarras(Vector256<uint> x, Vector256<uint> seed)
    {
        // Constants as in OwenScrambler.LaineKarrasPermutation.
        x += seed;
        x ^= x * Vector256.Create(0x6c50b47cu);
        x ^= x * Vector256.Create(0xb82f1e52u);
        x ^= x * Vector256.Create(0xc7afe638u);
        x ^= x * Vector256.Create(0x8d22f6e6u);
        return x;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> Reverse(Vector256<uint> x)
    {
        Vector256<uint> m1 = Vector256.Create(0x55555555u), m2 = Vector256.Create(0x33333333u), m4 = Vector256.Create(0x0F0F0F0Fu);
        x = ((x >> 1) & m1) | ((x & m1) << 1);
        x = ((x >> 2) & m2) | ((x & m2) << 2);
        x = ((x >> 4) & m4) | ((x & m4) << 4);
        // Byte order within each 32-bit lane, as BinaryPrimitives.ReverseEndianness.
        Vector256<byte> swap = Vector256.Create((byte)3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12, 3, 2, 1, 0, 7, 6, 5, 4, 11, 10, 9, 8, 15, 14, 13, 12);
        return Avx2.Shuffle(x.AsByte(), swap).AsUInt32();
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

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static unsafe void Store(Vector256<uint> v, double* destination)
    {
        // uint → double through the signed conversion: flip the top bit, convert, add 2^31 back;
        // + 0.5 centres the value in its 2^-32 cell, as the scalar code does. All exact in double.
        Vector256<int> signed = (v ^ Vector256.Create(0x80000000u)).AsInt32();
        Vector256<double> offset = Vector256.Create(2147483648.0 + 0.5), scale = Vector256.Create(Scale);
        Vector256<double> lo = (Avx.ConvertToVector256Double(signed.GetLower()) + offset) * scale;
        Vector256<double> hi = (Avx.ConvertToVector256Double(signed.GetUpper()) + offset) * scale;
        lo.Store(destination);
        hi.Store(destination + 4);
    }
}
