using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Owen-scrambled Sobol 2-D points, eight at a time with AVX2: the same arithmetic as the
/// scalar path (bit reversal, Laine–Karras permutation, byte-table walk, permutation,
/// reversal) on eight 32-bit lanes, the table walk by gathers. Returns how many points it
/// wrote (a multiple of eight; zero without AVX2), leaving the rest to the scalar code: a
/// part-empty group on padded lanes measured slower than the scalar loop (a gather costs about
/// as much as four scalar loads). With an empty <c>ys</c> it makes the first coordinate only
/// (one dimension).
/// </summary>
internal static class OwenSobolBatch
{
    private const double Scale = 1.0 / 4294967296.0;

    /// <summary>How a point's index becomes the bit-reversed index the table walk reads.</summary>
    /// <param name="Shuffle">Sobol's nested index scramble (Burley 2020): Laine–Karras of the reversed index under <paramref name="Seed"/>.</param>
    /// <param name="Seed">The index scramble's seed.</param>
    /// <param name="Block">Otherwise the reversed index xor <paramref name="Block"/> (blue noise's per-pixel sequence block; 0 for none).</param>
    public readonly record struct IndexMap(bool Shuffle, uint Seed, uint Block);

    /// <summary>A coordinate's scramble: Laine–Karras under <paramref name="Seed"/>, then under <paramref name="Common"/> when <paramref name="Twice"/> (blue noise's scramble common to all pixels).</summary>
    public readonly record struct Scramble(uint Seed, bool Twice = false, uint Common = 0);

    /// <summary>Sobol's Owen-scrambled pair (or single coordinate with an empty <paramref name="ys"/>) of the consecutive points from <paramref name="firstIndex"/>.</summary>
    public static int Run(ReadOnlySpan<uint> tablesX, ReadOnlySpan<uint> tablesY, uint firstIndex, uint seedIndex, uint seedX, uint seedY, Span<double> xs, Span<double> ys) =>
        Run(tablesX, tablesY, firstIndex, new IndexMap(true, seedIndex, 0), new Scramble(seedX), new Scramble(seedY), xs, ys);

    /// <summary>The general form: any index map and coordinate scrambles.</summary>
    public static unsafe int Run(ReadOnlySpan<uint> tablesX, ReadOnlySpan<uint> tablesY, uint firstIndex, IndexMap map, Scramble scrambleX, Scramble scrambleY, Span<double> xs, Span<double> ys)
    {
        if (!Avx2.IsSupported || xs.Length < 8)
        {
            return 0;
        }

        bool pair = !ys.IsEmpty;
        int n = xs.Length & ~7;
        Vector256<uint> lane = Vector256.Create(0u, 1, 2, 3, 4, 5, 6, 7);
        fixed (uint* tx = tablesX, ty = tablesY)
        fixed (double* px = xs, py = ys)
        {
            for (int i = 0; i < n; i += 8)
            {
                Vector256<uint> index = Vector256.Create(firstIndex + (uint)i) + lane;
                Vector256<uint> r = map.Shuffle
                    ? LaineKarras(Reverse(index), Vector256.Create(map.Seed))
                    : Reverse(index ^ Vector256.Create(map.Block));
                Store(Reverse(Scrambled(Walk(tx, r), scrambleX)), px + i);
                if (pair)
                {
                    Store(Reverse(Scrambled(Walk(ty, r), scrambleY)), py + i);
                }
            }
        }

        return n;
    }

    /// <summary>
    /// Table points scrambled pair by pair, eight at a time with AVX2 (the progressive multi-jittered sequences): the
    /// tables' entries from <paramref name="first"/> (the run must lie in them), each coordinate Owen-scrambled
    /// (<see cref="Sequences.OwenScrambler.Scramble"/>) and centred in its 2^-32 cell. Returns false, writing nothing,
    /// without AVX2.
    /// </summary>
    public static unsafe bool TableRun(ReadOnlySpan<uint> tableX, ReadOnlySpan<uint> tableY, int first, uint seedX, uint seedY, Span<double> xs, Span<double> ys)
    {
        if (!Avx2.IsSupported)
        {
            return false;
        }

        ReadOnlySpan<uint> runX = tableX.Slice(first, xs.Length), runY = tableY.Slice(first, ys.Length);
        uint* laneX = stackalloc uint[8];
        uint* laneY = stackalloc uint[8];
        double* restX = stackalloc double[8];
        double* restY = stackalloc double[8];
        Vector256<uint> sx = Vector256.Create(seedX), sy = Vector256.Create(seedY);
        fixed (uint* tx = runX, ty = runY)
        fixed (double* px = xs, py = ys)
        {
            for (int i = 0; i < xs.Length; i += 8)
            {
                // A whole group loads straight from the tables; a run's last part-group through lanes filled element by
                // element (a span copy of a few words is a Memmove call, a visible share of a run of four).
                int n = Math.Min(8, xs.Length - i);
                Vector256<uint> x, y;
                if (n == 8)
                {
                    x = Vector256.Load(tx + i);
                    y = Vector256.Load(ty + i);
                }
                else
                {
                    for (int k = 0; k < 8; k++)
                    {
                        laneX[k] = k < n ? tx[i + k] : 0;
                        laneY[k] = k < n ? ty[i + k] : 0;
                    }

                    x = Vector256.Load(laneX);
                    y = Vector256.Load(laneY);
                }

                x = Reverse(LaineKarras(Reverse(x), sx));
                y = Reverse(LaineKarras(Reverse(y), sy));
                Store(x, n == 8 ? px + i : restX);
                Store(y, n == 8 ? py + i : restY);
                if (n < 8)
                {
                    for (int k = 0; k < n; k++)
                    {
                        px[i + k] = restX[k];
                        py[i + k] = restY[k];
                    }
                }
            }
        }

        return true;
    }

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<uint> Scrambled(Vector256<uint> x, Scramble scramble)
    {
        x = LaineKarras(x, Vector256.Create(scramble.Seed));
        return scramble.Twice ? LaineKarras(x, Vector256.Create(scramble.Common)) : x;
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
