using System.Runtime.CompilerServices;

namespace PathBench.Sampling.Sequences;

/// <summary>
/// Owen's nested uniform scrambling in base 2 (Owen 1995, "Randomly permuted
/// (t,m,s)-nets and (t,s)-sequences") in its hash-based form: Laine &amp; Karras (2011),
/// "Stratified sampling for stochastic transparency", with the constants of Burley (2020),
/// "Practical Hash-based Owen Scrambling", JCGT 9(4) (constants from memory of that paper).
/// </summary>
/// <remarks>
/// Why it is an Owen scramble: on the bit-reversed value, <c>x += seed</c> and
/// <c>x ^= x * even</c> flip each bit as a function of the bits below it only, so in the
/// original order every digit is flipped as a function of the digits before it: a nested
/// (not independent per node) scramble, which keeps every (t,m,s)-net property.
/// </remarks>
public static class OwenScrambler
{
    /// <summary>The Laine–Karras permutation of a bit-reversed value.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static uint LaineKarrasPermutation(uint x, uint seed)
    {
        x += seed;
        x ^= x * 0x6c50b47cu;
        x ^= x * 0xb82f1e52u;
        x ^= x * 0xc7afe638u;
        x ^= x * 0x8d22f6e6u;
        return x;
    }

    /// <summary>Nested uniform scramble of a 32-bit fixed-point value in [0, 1), most significant digit first.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static uint Scramble(uint x, uint seed) =>
        BitReversal.Reverse(LaineKarrasPermutation(BitReversal.Reverse(x), seed));
}
