using System.Buffers.Binary;
using System.IO.Compression;
using System.Text;

namespace PathBench.Imaging.Tests;

/// <summary>
/// Builds PNG byte streams chunk by chunk for the malformed-file tests, following the chunk layout
/// of the PNG specification (3rd edition): length, type, data, CRC-32 of type and data. The CRC is
/// <see cref="PngCrc"/>, itself checked against published check values in <see cref="PngDecoderTests"/>.
/// </summary>
internal static class PngBytes
{
    /// <summary>One chunk with its CRC.</summary>
    public static byte[] Chunk(string type, params byte[] data)
    {
        byte[] typeBytes = Encoding.ASCII.GetBytes(type);
        var c = new byte[12 + data.Length];
        BinaryPrimitives.WriteUInt32BigEndian(c, (uint)data.Length);
        typeBytes.CopyTo(c, 4);
        data.CopyTo(c, 8);
        BinaryPrimitives.WriteUInt32BigEndian(c.AsSpan(8 + data.Length), PngCrc.Compute(c.AsSpan(4, 4 + data.Length)));
        return c;
    }

    /// <summary>An IHDR chunk (compression and filter method 0).</summary>
    public static byte[] Ihdr(uint width, uint height, byte depth, byte colourType, byte interlace = 0)
    {
        var d = new byte[13];
        BinaryPrimitives.WriteUInt32BigEndian(d, width);
        BinaryPrimitives.WriteUInt32BigEndian(d.AsSpan(4), height);
        d[8] = depth;
        d[9] = colourType;
        d[12] = interlace;
        return Chunk("IHDR", d);
    }

    /// <summary>The signature followed by the chunks.</summary>
    public static byte[] File(params byte[][] chunks) => [.. PngDecoder.Signature, .. chunks.SelectMany(c => c)];

    /// <summary>
    /// A file with IHDR, <paramref name="before"/> (PLTE, colour chunks …), one IDAT of the zlib-compressed
    /// <paramref name="filtered"/> bytes (filter-type byte first on every row), and IEND.
    /// </summary>
    public static byte[] Image(uint width, uint height, byte depth, byte colourType, byte[] filtered, byte interlace = 0, params byte[][] before) =>
        File([Ihdr(width, height, depth, colourType, interlace), .. before, Chunk("IDAT", Zlib(filtered)), Chunk("IEND")]);

    /// <summary>zlib-compresses <paramref name="data"/> (System.IO.Compression).</summary>
    public static byte[] Zlib(byte[] data)
    {
        var s = new MemoryStream();
        using (var z = new ZLibStream(s, CompressionLevel.Optimal, leaveOpen: true))
        {
            z.Write(data);
        }

        return s.ToArray();
    }

    /// <summary>Where the first chunk of <paramref name="type"/> starts (its length field).</summary>
    public static int Find(byte[] png, string type)
    {
        int at = 8;
        while (at + 8 <= png.Length)
        {
            if (Encoding.ASCII.GetString(png, at + 4, 4) == type)
            {
                return at;
            }

            at += 12 + (int)BinaryPrimitives.ReadUInt32BigEndian(png.AsSpan(at));
        }

        throw new ArgumentException($"no '{type}' chunk", nameof(type));
    }

    /// <summary>Recomputes the CRC of the chunk starting at <paramref name="at"/>, after its fields were changed on purpose.</summary>
    public static void FixCrc(byte[] png, int at)
    {
        int length = (int)BinaryPrimitives.ReadUInt32BigEndian(png.AsSpan(at));
        BinaryPrimitives.WriteUInt32BigEndian(png.AsSpan(at + 8 + length), PngCrc.Compute(png.AsSpan(at + 4, 4 + length)));
    }
}
