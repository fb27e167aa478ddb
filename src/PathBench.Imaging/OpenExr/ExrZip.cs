using System.Runtime.InteropServices;

namespace PathBench.Imaging;

/// <summary>
/// The byte reordering and delta predictor OpenEXR applies before zlib in ZIPS and ZIP chunks
/// (OpenEXR file layout specification, "ZIP compression"): the bytes at even positions go to
/// the first half, those at odd positions to the second half, then each byte after the first
/// is replaced by (byte − previous byte + 128) mod 256.
/// </summary>
internal static class ExrZip
{
    /// <summary>Raw scanline bytes → predictor-coded bytes ready for zlib.</summary>
    public static void Encode(ReadOnlySpan<byte> raw, Span<byte> coded)
    {
        int n = raw.Length;
        int half = (n + 1) / 2;
        for (int i = 0; i < n; i++)
        {
            int target = (i & 1) == 0 ? i >> 1 : half + (i >> 1);
            coded[target] = raw[i];
        }

        int previous = coded.Length > 0 && n > 0 ? coded[0] : 0;
        for (int i = 1; i < n; i++)
        {
            int current = coded[i];
            coded[i] = (byte)(current - previous + 128);
            previous = current;
        }
    }

    /// <summary>Inflated bytes (changed in place by the predictor) → raw scanline bytes.</summary>
    public static void Decode(Span<byte> inflated, Span<byte> raw)
    {
        int n = inflated.Length;
        for (int i = 1; i < n; i++)
        {
            inflated[i] = (byte)(inflated[i - 1] + inflated[i] - 128);
        }

        int half = (n + 1) / 2;
        for (int i = 0; i < n; i++)
        {
            raw[i] = (i & 1) == 0 ? inflated[i >> 1] : inflated[half + (i >> 1)];
        }
    }

    /// <summary>Decodes a ZIPS or ZIP chunk: zlib, then the predictor and the byte reordering.</summary>
    /// <param name="packed">The chunk's data.</param>
    /// <param name="raw">Receives exactly <c>raw.Length</c> bytes; the stream must inflate to that many, no more.</param>
    /// <param name="scratch">At least <c>raw.Length</c> bytes of working space.</param>
    public static void Decompress(ReadOnlyMemory<byte> packed, Span<byte> raw, Span<byte> scratch)
    {
        Span<byte> inflated = scratch[..raw.Length];
        Inflate(packed, inflated);
        Decode(inflated, raw);
    }

    /// <summary>zlib-inflates <paramref name="packed"/> into exactly <paramref name="target"/>.</summary>
    /// <exception cref="ExrCodecException">The stream is corrupt, short, or inflates to more.</exception>
    public static void Inflate(ReadOnlyMemory<byte> packed, Span<byte> target)
    {
        if (!MemoryMarshal.TryGetArray(packed, out ArraySegment<byte> segment))
        {
            throw new ArgumentException("the chunk must be held in an array", nameof(packed));
        }

        try
        {
            using var source = new MemoryStream(segment.Array!, segment.Offset, segment.Count, writable: false);
            ZlibExact.Inflate(source, target);
        }
        catch (ZlibDataException e)
        {
            throw new ExrCodecException(e.Message, e);
        }
    }
}
