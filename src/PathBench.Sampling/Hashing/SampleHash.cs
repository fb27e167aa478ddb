using System.Runtime.CompilerServices;

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
    public static ulong Combine(ulong key, ulong value) => Mix64(key ^ (value * 0xD6E8FEB86659FD93UL));

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
    /// The per-pixel key: pixels decorrelated from each other, and different global seeds
    /// giving independent replicates.
    /// </summary>
    public static ulong PixelKey(int x, int y, ulong seed) =>
        Combine(Mix64(seed), ((ulong)(uint)y << 32) | (uint)x);
}
