namespace PathBench.Imaging;

/// <summary>
/// OpenEXR RLE chunks (OpenEXR file layout specification, "RLE compression"): the bytes after the
/// ZIP predictor and even/odd reordering (<see cref="ExrZip"/>) coded as runs. Each run starts with a
/// signed count byte c: c ≥ 0 repeats the next byte c + 1 times; c &lt; 0 copies the next −c bytes.
/// </summary>
internal static class ExrRle
{
    /// <summary>Decodes the runs into <paramref name="scratch"/>, then undoes the predictor into <paramref name="raw"/>.</summary>
    /// <exception cref="ExrCodecException">The runs do not fill exactly <c>raw.Length</c> bytes.</exception>
    public static void Decompress(ReadOnlySpan<byte> packed, Span<byte> raw, Span<byte> scratch)
    {
        Span<byte> coded = scratch[..raw.Length];
        DecodeRuns(packed, coded);
        ExrZip.Decode(coded, raw);
    }

    /// <summary>Decodes the runs of <paramref name="packed"/> into exactly <paramref name="coded"/>.Length bytes (no predictor; DWA's RLE section uses the runs alone).</summary>
    /// <exception cref="ExrCodecException">The runs do not fill exactly <c>coded.Length</c> bytes.</exception>
    public static void DecodeRuns(ReadOnlySpan<byte> packed, Span<byte> coded)
    {
        int o = 0;
        int i = 0;
        while (i < packed.Length)
        {
            int count = (sbyte)packed[i++];
            if (count < 0)
            {
                int n = -count;
                if (n > packed.Length - i)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"RLE literal run of {n} bytes at byte {i - 1} runs past the end of the chunk"));
                }

                if (n > coded.Length - o)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"RLE data decode to more than the {coded.Length} bytes expected"));
                }

                packed.Slice(i, n).CopyTo(coded[o..]);
                i += n;
                o += n;
            }
            else
            {
                if (i >= packed.Length)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"RLE repeat run at byte {i - 1} has no byte to repeat"));
                }

                int n = count + 1;
                if (n > coded.Length - o)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"RLE data decode to more than the {coded.Length} bytes expected"));
                }

                coded.Slice(o, n).Fill(packed[i++]);
                o += n;
            }
        }

        if (o != coded.Length)
        {
            throw new ExrCodecException(FormattableString.Invariant($"RLE data end after {o} of {coded.Length} bytes"));
        }
    }
}
