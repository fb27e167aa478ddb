using System.Buffers.Binary;

namespace PathBench.Imaging;

/// <summary>
/// OpenEXR PXR24 chunks (OpenEXR file layout specification, "PXR24 compression"): one zlib stream
/// holding, for each line and each channel with samples on it, the differences of consecutive
/// samples split into byte planes, most significant first: four planes for UINT, two for HALF and
/// three for FLOAT, whose low byte was rounded away when the file was written (so FLOAT decodes to
/// the 32-bit pattern with a zero low byte). The differences accumulate modulo 2^32.
/// </summary>
internal static class ExrPxr24
{
    /// <summary>Bytes each sample takes in the zlib stream.</summary>
    private static int StoredSize(ExrPixelType t) => t switch { ExrPixelType.UInt => 4, ExrPixelType.Half => 2, _ => 3 };

    /// <summary>Inflates the planes into <paramref name="scratch"/> and rebuilds the raw layout of <paramref name="block"/>.</summary>
    /// <exception cref="ExrCodecException">The zlib stream is corrupt or not exactly the planes' size.</exception>
    public static void Decompress(ReadOnlyMemory<byte> packed, Span<byte> raw, ExrBlock block, Span<byte> scratch)
    {
        // The planes are never larger than the raw samples (3 or fewer bytes for 4, 2 for 2).
        long planeBytes = 0;
        for (int c = 0; c < block.Channels.Length; c++)
        {
            planeBytes += (long)block.LineCount(c) * block.SamplesPerLine(c) * StoredSize(block.Channels[c].Type);
        }

        Span<byte> planes = scratch[..(int)planeBytes];
        ExrZip.Inflate(packed, planes);

        int p = 0;
        int o = 0;
        for (int y = block.Y0; y < block.Y0 + block.Height; y++)
        {
            for (int c = 0; c < block.Channels.Length; c++)
            {
                if (!block.HasLine(c, y))
                {
                    continue;
                }

                int n = block.SamplesPerLine(c);
                uint pixel = 0;
                switch (block.Channels[c].Type)
                {
                    case ExrPixelType.UInt:
                        for (int j = 0; j < n; j++, o += 4)
                        {
                            pixel += ((uint)planes[p + j] << 24) | ((uint)planes[p + n + j] << 16) | ((uint)planes[p + (2 * n) + j] << 8) | planes[p + (3 * n) + j];
                            BinaryPrimitives.WriteUInt32LittleEndian(raw[o..], pixel);
                        }

                        p += 4 * n;
                        break;
                    case ExrPixelType.Half:
                        for (int j = 0; j < n; j++, o += 2)
                        {
                            pixel += ((uint)planes[p + j] << 8) | planes[p + n + j];
                            BinaryPrimitives.WriteUInt16LittleEndian(raw[o..], (ushort)pixel);
                        }

                        p += 2 * n;
                        break;
                    default:
                        for (int j = 0; j < n; j++, o += 4)
                        {
                            pixel += ((uint)planes[p + j] << 24) | ((uint)planes[p + n + j] << 16) | ((uint)planes[p + (2 * n) + j] << 8);
                            BinaryPrimitives.WriteUInt32LittleEndian(raw[o..], pixel);
                        }

                        p += 3 * n;
                        break;
                }
            }
        }
    }
}
