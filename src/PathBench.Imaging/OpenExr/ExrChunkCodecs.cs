namespace PathBench.Imaging;

/// <summary>
/// What each OpenEXR compression needs from the reader: how many scanlines a chunk holds, the
/// largest ratio of raw to stored bytes it can reach (so a file too short for the pixels its header
/// declares is refused before the image is allocated), and its decoder.
/// </summary>
internal static class ExrChunkCodecs
{
    /// <summary>The compressions the reader decodes.</summary>
    public static bool CanDecode(ExrCompression c) =>
        c is ExrCompression.None or ExrCompression.Rle or ExrCompression.Zips or ExrCompression.Zip or ExrCompression.Pxr24
        or ExrCompression.B44 or ExrCompression.B44A or ExrCompression.Piz or ExrCompression.Dwaa or ExrCompression.Dwab;

    /// <summary>Scanlines per chunk of a scanline part (OpenEXR file layout specification, "Compression").</summary>
    public static int LinesPerChunk(ExrCompression c) => c switch
    {
        ExrCompression.None or ExrCompression.Rle or ExrCompression.Zips => 1,
        ExrCompression.Zip or ExrCompression.Pxr24 => 16,
        ExrCompression.Piz or ExrCompression.B44 or ExrCompression.B44A or ExrCompression.Dwaa => 32,
        ExrCompression.Dwab => 256,
        _ => throw new ArgumentOutOfRangeException(nameof(c), c, "unknown compression"),
    };

    /// <summary>
    /// An upper bound on raw bytes per stored byte. zlib cannot expand data by more than about 1032:1
    /// (deflate's longest match, 258 bytes, costs at least two bits; from memory); RLE turns two bytes
    /// into at most 128; a flat B44A block codes 32 bytes in 3; PIZ's Huffman runs bound it near 453
    /// (see <see cref="ExrPiz.MaxExpansion"/>); DWA's densest data, a lossy block's DC and end-of-block values or an RLE
    /// run through zlib, reach 66048 (see <see cref="ExrDwa.MaxExpansion"/>).
    /// </summary>
    public static long MaxExpansion(ExrCompression c) => c switch
    {
        ExrCompression.None => 1,
        ExrCompression.Rle => 64,
        ExrCompression.Zips or ExrCompression.Zip => 1032,
        ExrCompression.Pxr24 => 1032 * 4 / 3 + 1, // FLOAT samples lose a byte before zlib
        ExrCompression.B44 or ExrCompression.B44A => 11, // a flat B44A block: 3 bytes for 32
        ExrCompression.Piz => ExrPiz.MaxExpansion,
        ExrCompression.Dwaa or ExrCompression.Dwab => ExrDwa.MaxExpansion,
        _ => long.MaxValue,
    };

    /// <summary>
    /// Decodes one chunk's stored bytes into its raw layout (see <see cref="ExrBlock"/>). The caller
    /// handles chunks stored uncompressed (stored size = raw size) and checks that the stored size is
    /// below the raw size.
    /// </summary>
    /// <param name="compression">The part's compression.</param>
    /// <param name="packed">The chunk's stored bytes (array-backed).</param>
    /// <param name="raw">Receives the <see cref="ExrBlock.RawSize"/> raw bytes.</param>
    /// <param name="block">The chunk's rectangle and channels.</param>
    /// <param name="scratch">At least <see cref="ExrBlock.RawSize"/> bytes of working space, reused between chunks.</param>
    /// <exception cref="ExrCodecException">The stored bytes break the codec's rules.</exception>
    public static void Decompress(ExrCompression compression, ReadOnlyMemory<byte> packed, Span<byte> raw, ExrBlock block, Span<byte> scratch)
    {
        switch (compression)
        {
            case ExrCompression.Rle:
                ExrRle.Decompress(packed.Span, raw, scratch);
                break;
            case ExrCompression.Zips:
            case ExrCompression.Zip:
                ExrZip.Decompress(packed, raw, scratch);
                break;
            case ExrCompression.Pxr24:
                ExrPxr24.Decompress(packed, raw, block, scratch);
                break;
            case ExrCompression.B44:
            case ExrCompression.B44A:
                ExrB44.Decompress(packed.Span, raw, block, scratch);
                break;
            case ExrCompression.Piz:
                ExrPiz.Decompress(packed.Span, raw, block, scratch);
                break;
            case ExrCompression.Dwaa:
            case ExrCompression.Dwab:
                ExrDwa.Decompress(packed, raw, block);
                break;
            default:
                throw new ArgumentOutOfRangeException(nameof(compression), compression, "no decoder for this compression");
        }
    }
}
