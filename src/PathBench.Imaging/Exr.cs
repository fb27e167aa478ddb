using System.Buffers.Binary;
using System.IO.Compression;
using System.Text;

namespace PathBench.Imaging;

/// <summary>
/// OpenEXR files. Reading (<see cref="ExrReader"/>): one part of any single- or multi-part, scanline
/// or tiled file in the compressions <see cref="ExrChunkCodecs"/> decodes. Writing: single-part
/// scanline files, HALF and FLOAT channels, compression NONE, ZIPS and ZIP, channel sets RGB, RGBA
/// and Y. Layout and ZIP coding follow the OpenEXR file layout
/// specification ("The OpenEXR File Layout", openexr.com): magic 20000630, version 2, header
/// attributes ended by a null byte, an offset table of one uint64 per chunk in increasing y,
/// then chunks of (int32 y, int32 size, data) with each scanline stored channel by channel in
/// the header's (alphabetical) channel order.
/// </summary>
public static class ExrCodec
{
    private const int Magic = 20000630;

    // Chunks read, then decoded in parallel, per batch: bounds the compressed bytes held at once.
    private const int ChunkBatch = 64;

    /// <summary>Reads part and channels <paramref name="options"/> name (default: the first part's R, G, B or Y) of an OpenEXR file.</summary>
    /// <exception cref="ImageFileException">The file is unreadable, malformed, unsupported or above the limits.</exception>
    public static ImageReadResult Read(string path, ImageLimits? limits = null, ExrReadOptions? options = null)
    {
        using FileStream stream = ImageFile.OpenRead(path);
        return Read(stream, path, limits, options);
    }

    /// <summary>Reads an OpenEXR image from a seekable stream; <paramref name="fileName"/> goes into error messages.</summary>
    /// <exception cref="ImageFileException">The data is malformed, unsupported or above the limits.</exception>
    public static ImageReadResult Read(Stream stream, string fileName, ImageLimits? limits = null, ExrReadOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(stream);
        return ExrReader.Read(stream, fileName, limits ?? ImageLimits.Default, options ?? ExrReadOptions.Default);
    }

    /// <summary>Writes an OpenEXR file.</summary>
    public static void Write(string path, RgbImage image, ExrWriteOptions? options = null)
    {
        ImageFile.WriteAtomically(path, stream => Write(stream, image, options));
    }

    /// <summary>Writes a single-part scanline OpenEXR image, increasing y, to a seekable stream.</summary>
    public static void Write(Stream stream, RgbImage image, ExrWriteOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(stream);
        ArgumentNullException.ThrowIfNull(image);
        options ??= new ExrWriteOptions();
        if (options.PixelType is not (ExrPixelType.Half or ExrPixelType.Float))
        {
            throw new ArgumentException($"pixel type {options.PixelType} cannot be written", nameof(options));
        }

        if (options.Compression is not (ExrCompression.None or ExrCompression.Zips or ExrCompression.Zip or ExrCompression.Piz))
        {
            throw new ArgumentException($"compression {options.Compression} cannot be written", nameof(options));
        }

        if (!stream.CanSeek)
        {
            throw new ArgumentException("the EXR writer needs a seekable stream to fill in the offset table", nameof(stream));
        }

        // Channel names in the file's required alphabetical order, with the RGB source of each (-1 = A, 3 = luminance).
        (string Name, int Source)[] layout = options.Channels switch
        {
            ExrChannelSet.Rgb => [("B", 2), ("G", 1), ("R", 0)],
            ExrChannelSet.Rgba => [("A", -1), ("B", 2), ("G", 1), ("R", 0)],
            ExrChannelSet.Y => [("Y", 3)],
            _ => throw new ArgumentException($"channel set {options.Channels} cannot be written", nameof(options)),
        };

        int w = image.Width;
        int h = image.Height;
        var header = new MemoryStream();
        var hw = new BinaryWriter(header, Encoding.ASCII, leaveOpen: true);
        hw.Write(Magic);
        hw.Write(2); // version 2, no flags: single-part scanline, short names

        var chlist = new MemoryStream();
        var cw = new BinaryWriter(chlist);
        foreach ((string name, _) in layout)
        {
            cw.Write(Encoding.ASCII.GetBytes(name));
            cw.Write((byte)0);
            cw.Write((int)options.PixelType);
            cw.Write((byte)0); // pLinear
            cw.Write((byte)0);
            cw.Write((byte)0);
            cw.Write((byte)0);
            cw.Write(1); // xSampling
            cw.Write(1); // ySampling
        }

        cw.Write((byte)0);
        WriteAttribute(hw, "channels", "chlist", chlist.ToArray());
        WriteAttribute(hw, "compression", "compression", [(byte)options.Compression]);
        byte[] box = new byte[16];
        BinaryPrimitives.WriteInt32LittleEndian(box.AsSpan(8), w - 1);
        BinaryPrimitives.WriteInt32LittleEndian(box.AsSpan(12), h - 1);
        WriteAttribute(hw, "dataWindow", "box2i", box);
        WriteAttribute(hw, "displayWindow", "box2i", box);
        WriteAttribute(hw, "lineOrder", "lineOrder", [0]); // INCREASING_Y
        WriteAttribute(hw, "pixelAspectRatio", "float", BitConverter.GetBytes(1.0f));
        WriteAttribute(hw, "screenWindowCenter", "v2f", new byte[8]);
        WriteAttribute(hw, "screenWindowWidth", "float", BitConverter.GetBytes(1.0f));
        hw.Write((byte)0);
        hw.Flush();

        int linesPerChunk = ExrChunkCodecs.LinesPerChunk(options.Compression);
        int chunkCount = (h + linesPerChunk - 1) / linesPerChunk;
        long start = stream.Position;
        stream.Write(header.GetBuffer(), 0, (int)header.Length);
        long tablePosition = stream.Position;
        stream.Write(new byte[chunkCount * 8]);

        int sampleSize = options.PixelType == ExrPixelType.Half ? 2 : 4;
        int rowBytes = w * layout.Length * sampleSize;
        ExrChannelLayout[] channelLayouts = [.. layout.Select(l => new ExrChannelLayout(l.Name, options.PixelType, 1, 1, false))];
        var offsets = new byte[chunkCount * 8];
        var chunkHead = new byte[8];
        for (int b0 = 0; b0 < chunkCount; b0 += ChunkBatch)
        {
            int b1 = Math.Min(chunkCount, b0 + ChunkBatch);
            var payloads = new byte[b1 - b0][];
            Parallel.For(b0, b1, i =>
            {
                int y0 = i * linesPerChunk;
                int rawSize = rowBytes * Math.Min(linesPerChunk, h - y0);
                var raw = new byte[rawSize];
                EncodeLines(image, layout, options.PixelType, y0, rawSize / rowBytes, raw);
                payloads[i - b0] = options.Compression switch
                {
                    ExrCompression.None => raw,
                    ExrCompression.Piz => ExrPiz.Compress(raw, new ExrBlock(channelLayouts, 0, y0, w, rawSize / rowBytes)) ?? raw,
                    _ => Deflate(raw),
                };
            });

            for (int i = b0; i < b1; i++)
            {
                BinaryPrimitives.WriteUInt64LittleEndian(offsets.AsSpan(i * 8), (ulong)(stream.Position - start));
                BinaryPrimitives.WriteInt32LittleEndian(chunkHead, i * linesPerChunk);
                BinaryPrimitives.WriteInt32LittleEndian(chunkHead.AsSpan(4), payloads[i - b0].Length);
                stream.Write(chunkHead);
                stream.Write(payloads[i - b0]);
            }
        }

        long end = stream.Position;
        stream.Position = tablePosition;
        stream.Write(offsets);
        stream.Position = end;
    }

    /// <summary>Predictor + zlib; the raw bytes when that does not make the chunk smaller (as the format requires).</summary>
    private static byte[] Deflate(byte[] raw)
    {
        var coded = new byte[raw.Length];
        ExrZip.Encode(raw, coded);
        using var compressed = new MemoryStream();
        using (var z = new ZLibStream(compressed, CompressionLevel.Optimal, leaveOpen: true))
        {
            z.Write(coded);
        }

        return compressed.Length < raw.Length ? compressed.ToArray() : raw;
    }

    private static void WriteAttribute(BinaryWriter w, string name, string type, byte[] value)
    {
        w.Write(Encoding.ASCII.GetBytes(name));
        w.Write((byte)0);
        w.Write(Encoding.ASCII.GetBytes(type));
        w.Write((byte)0);
        w.Write(value.Length);
        w.Write(value);
    }

    private static void EncodeLines(RgbImage image, (string Name, int Source)[] layout, ExrPixelType type, int y0, int lines, byte[] raw)
    {
        int w = image.Width;
        int p = 0;
        for (int line = 0; line < lines; line++)
        {
            Span<float> row = image.Row(y0 + line);
            foreach ((_, int source) in layout)
            {
                for (int x = 0; x < w; x++)
                {
                    float v = source switch
                    {
                        -1 => 1f,
                        3 => (float)Luminance.Rec709(row[x * 3], row[(x * 3) + 1], row[(x * 3) + 2]),
                        _ => row[(x * 3) + source],
                    };
                    if (type == ExrPixelType.Half)
                    {
                        BinaryPrimitives.WriteUInt16LittleEndian(raw.AsSpan(p), BitConverter.HalfToUInt16Bits((Half)v));
                        p += 2;
                    }
                    else
                    {
                        BinaryPrimitives.WriteSingleLittleEndian(raw.AsSpan(p), v);
                        p += 4;
                    }
                }
            }
        }
    }
}
