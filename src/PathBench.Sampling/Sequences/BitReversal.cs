using System.Runtime.CompilerServices;

namespace PathBench.Sampling.Sequences;

/// <summary>Reverses the bits of a 32-bit word (the radical inverse in base 2, as an integer).</summary>
public static class BitReversal
{
    /// <summary>Bit 0 becomes bit 31 and so on.</summary>
    [MethodImpl(InliningOptions.ShortMethod)]
    public static uint Reverse(uint x)
    {
        x = ((x >> 1) & 0x55555555u) | ((x & 0x55555555u) << 1);
        x = ((x >> 2) & 0x33333333u) | ((x & 0x33333333u) << 2);
        x = ((x >> 4) & 0x0F0F0F0Fu) | ((x & 0x0F0F0F0Fu) << 4);
        return System.Buffers.Binary.BinaryPrimitives.ReverseEndianness(x);
    }
}
