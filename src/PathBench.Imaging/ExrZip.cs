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
}
