using System.Runtime.CompilerServices;

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
    [MethodImpl(InliningOptions.HotPath)]
    public static uint Permute(uint i, uint l, uint p)
    {
        if (l <= 1)
        {
            return 0;
        }

        uint w = l - 1;
        w |= w >> 1;
        w |= w >> 2;
        w |= w >> 4;
        w |= w >> 8;
        w |= w >> 16;
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
}
