using System.Buffers.Binary;

namespace PathBench.Imaging;

/// <summary>
/// OpenEXR B44 and B44A chunks (OpenEXR file layout specification, "B44 compression"), channel by
/// channel in file order: a HALF channel's samples in 4×4 blocks, each block either 14 bytes (a
/// 16-bit start value, a 6-bit shift, then fifteen 6-bit differences down the columns and along the
/// first row) or, in B44A, 3 bytes for a flat block (marked by a shift byte of 13 or more); FLOAT and
/// UINT channels stored as they are. Block values are in the sign-flipped order that makes 16-bit
/// halves compare as integers; blocks at the right and bottom edges hold padding that is dropped.
/// </summary>
internal static class ExrB44
{
    /// <summary>Decodes the chunk of <paramref name="block"/> into <paramref name="raw"/>, channel planes built in <paramref name="scratch"/>.</summary>
    /// <exception cref="ExrCodecException">The chunk is shorter than its blocks, or has bytes left over.</exception>
    public static void Decompress(ReadOnlySpan<byte> packed, Span<byte> raw, ExrBlock block, Span<byte> scratch)
    {
        ExrChannelLayout[] channels = block.Channels;
        var planeStart = new int[channels.Length];
        int i = 0;
        int planes = 0;
        Span<ushort> s = stackalloc ushort[16];
        for (int c = 0; c < channels.Length; c++)
        {
            int nx = block.SamplesPerLine(c);
            int ny = block.LineCount(c);
            planeStart[c] = planes;
            Span<byte> plane = scratch.Slice(planes, nx * ny * channels[c].Size);
            planes += plane.Length;
            if (channels[c].Type != ExrPixelType.Half)
            {
                if (plane.Length > packed.Length - i)
                {
                    throw new ExrCodecException(FormattableString.Invariant($"B44 data end inside the samples of channel '{channels[c].Name}'"));
                }

                packed.Slice(i, plane.Length).CopyTo(plane);
                i += plane.Length;
                continue;
            }

            for (int by = 0; by < ny; by += 4)
            {
                for (int bx = 0; bx < nx; bx += 4)
                {
                    if (packed.Length - i < 3)
                    {
                        throw new ExrCodecException(FormattableString.Invariant($"B44 data end inside a block of channel '{channels[c].Name}' at ({bx},{by})"));
                    }

                    if (packed[i + 2] >= 13 << 2)
                    {
                        UnpackFlat(packed.Slice(i, 3), s);
                        i += 3;
                    }
                    else
                    {
                        if (packed.Length - i < 14)
                        {
                            throw new ExrCodecException(FormattableString.Invariant($"B44 data end inside a block of channel '{channels[c].Name}' at ({bx},{by})"));
                        }

                        Unpack(packed.Slice(i, 14), s);
                        i += 14;
                    }

                    for (int row = 0; row < 4 && by + row < ny; row++)
                    {
                        for (int col = 0; col < 4 && bx + col < nx; col++)
                        {
                            BinaryPrimitives.WriteUInt16LittleEndian(plane[((((by + row) * nx) + bx + col) * 2)..], s[(row * 4) + col]);
                        }
                    }
                }
            }
        }

        if (i != packed.Length)
        {
            throw new ExrCodecException(FormattableString.Invariant($"B44 chunk has {packed.Length - i} bytes after its last block"));
        }

        // The planes, line by line, into the raw layout.
        var line = new int[channels.Length];
        int o = 0;
        for (int y = block.Y0; y < block.Y0 + block.Height; y++)
        {
            for (int c = 0; c < channels.Length; c++)
            {
                if (!block.HasLine(c, y))
                {
                    continue;
                }

                int rowBytes = block.SamplesPerLine(c) * channels[c].Size;
                scratch.Slice(planeStart[c] + (line[c]++ * rowBytes), rowBytes).CopyTo(raw[o..]);
                o += rowBytes;
            }
        }
    }

    /// <summary>A 14-byte block: 16-bit s[0], a shift, and 6-bit differences biased by 32 (down column 0, then along each row).</summary>
    private static void Unpack(ReadOnlySpan<byte> b, Span<ushort> s)
    {
        s[0] = (ushort)((b[0] << 8) | b[1]);
        int shift = b[2] >> 2;
        int bias = 0x20 << shift;
        s[4] = (ushort)(s[0] + ((((b[2] << 4) | (b[3] >> 4)) & 0x3f) << shift) - bias);
        s[8] = (ushort)(s[4] + ((((b[3] << 2) | (b[4] >> 6)) & 0x3f) << shift) - bias);
        s[12] = (ushort)(s[8] + ((b[4] & 0x3f) << shift) - bias);
        s[1] = (ushort)(s[0] + ((b[5] >> 2) << shift) - bias);
        s[5] = (ushort)(s[4] + ((((b[5] << 4) | (b[6] >> 4)) & 0x3f) << shift) - bias);
        s[9] = (ushort)(s[8] + ((((b[6] << 2) | (b[7] >> 6)) & 0x3f) << shift) - bias);
        s[13] = (ushort)(s[12] + ((b[7] & 0x3f) << shift) - bias);
        s[2] = (ushort)(s[1] + ((b[8] >> 2) << shift) - bias);
        s[6] = (ushort)(s[5] + ((((b[8] << 4) | (b[9] >> 4)) & 0x3f) << shift) - bias);
        s[10] = (ushort)(s[9] + ((((b[9] << 2) | (b[10] >> 6)) & 0x3f) << shift) - bias);
        s[14] = (ushort)(s[13] + ((b[10] & 0x3f) << shift) - bias);
        s[3] = (ushort)(s[2] + ((b[11] >> 2) << shift) - bias);
        s[7] = (ushort)(s[6] + ((((b[11] << 4) | (b[12] >> 4)) & 0x3f) << shift) - bias);
        s[11] = (ushort)(s[10] + ((((b[12] << 2) | (b[13] >> 6)) & 0x3f) << shift) - bias);
        s[15] = (ushort)(s[14] + ((b[13] & 0x3f) << shift) - bias);
        for (int k = 0; k < 16; k++)
        {
            s[k] = FromOrdered(s[k]);
        }
    }

    /// <summary>A 3-byte flat block: one value for all sixteen samples.</summary>
    private static void UnpackFlat(ReadOnlySpan<byte> b, Span<ushort> s) => s.Fill(FromOrdered((ushort)((b[0] << 8) | b[1])));

    // The ordered form sets the top bit of non-negative halves and inverts negative ones.
    private static ushort FromOrdered(ushort v) => (v & 0x8000) != 0 ? (ushort)(v & 0x7fff) : (ushort)~v;
}
