using System.Buffers.Binary;
using System.IO.Compression;
using System.Text;

namespace PathBench.Imaging;

/// <summary>
/// OpenEXR single-part scanline files: HALF and FLOAT channels, compression NONE, ZIPS and ZIP,
/// channel sets RGB, RGBA and Y. Layout and ZIP coding follow the OpenEXR file layout
/// specification ("The OpenEXR File Layout", openexr.com): magic 20000630, version 2, header
/// attributes ended by a null byte, an offset table of one uint64 per chunk in increasing y,
/// then chunks of (int32 y, int32 size, data) with each scanline stored channel by channel in
/// the header's (alphabetical) channel order.
/// </summary>
public static class ExrCodec
{
    private const int Magic = 20000630;
    private const int TiledFlag = 0x200;
    private const int LongNamesFlag = 0x400;
    private const int DeepFlag = 0x800;
    private const int MultiPartFlag = 0x1000;

    // Chunks read, then decoded in parallel, per batch: bounds the compressed bytes held at once.
    private const int ChunkBatch = 64;

    private static readonly string[] CompressionNames = ["NONE", "RLE", "ZIPS", "ZIP", "PIZ", "PXR24", "B44", "B44A", "DWAA", "DWAB", "HTJ2K"];

    /// <summary>Reads an OpenEXR file.</summary>
    /// <exception cref="ImageFileException">The file is unreadable, malformed, unsupported or above the limits.</exception>
    public static ImageReadResult Read(string path, ImageLimits? limits = null)
    {
        using FileStream stream = ImageFile.OpenRead(path);
        return Read(stream, path, limits);
    }

    /// <summary>Reads an OpenEXR image from a seekable stream; <paramref name="fileName"/> goes into error messages.</summary>
    /// <exception cref="ImageFileException">The data is malformed, unsupported or above the limits.</exception>
    public static ImageReadResult Read(Stream stream, string fileName, ImageLimits? limits = null)
    {
        ArgumentNullException.ThrowIfNull(stream);
        limits ??= ImageLimits.Default;
        long length = StreamReading.RequireLength(stream, fileName);
        var reader = new HeaderReader(stream, fileName, length);
        Header header = reader.ReadHeader();
        var notes = new List<string>(header.Notes);

        long width = (long)header.DataWindow.XMax - header.DataWindow.XMin + 1;
        long height = (long)header.DataWindow.YMax - header.DataWindow.YMin + 1;
        if (width <= 0 || height <= 0 || width > int.MaxValue || height > int.MaxValue)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"data window {header.DataWindow} is empty or too large"));
        }

        if (header.DisplayWindow != header.DataWindow)
        {
            notes.Add(FormattableString.Invariant($"data window {header.DataWindow} differs from display window {header.DisplayWindow}: the data window is read"));
        }

        Channel[] channels = header.Channels;
        limits.Check(fileName, width, height, channels.Length);

        int[] select = SelectChannels(channels, fileName, notes, out bool grey);
        int w = (int)width;
        int h = (int)height;
        int linesPerChunk = ExrChunkCodecs.LinesPerChunk(header.Compression);
        long chunkCountLong = (height + linesPerChunk - 1) / linesPerChunk;
        long tableStart = stream.Position;
        if (chunkCountLong * 8 > length - tableStart)
        {
            throw new ImageFileException(
                fileName, FormattableString.Invariant($"truncated: the offset table of {chunkCountLong} chunks does not fit in the file"));
        }

        int chunkCount = (int)chunkCountLong;
        var table = new byte[chunkCount * 8];
        StreamReading.ReadExactly(stream, table, fileName, "the offset table");
        long firstChunk = tableStart + table.Length;

        long bytesPerPixel = 0;
        foreach (Channel c in channels)
        {
            bytesPerPixel += c.Size;
        }

        long rowBytes = bytesPerPixel * w;
        long maxChunkBytes = rowBytes * linesPerChunk;

        // rowBytes·16 ≤ 4·channels·width·16, and width·channels is bounded by the value limit,
        // but a chunk buffer must also fit one array.
        if (maxChunkBytes > Array.MaxLength)
        {
            throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"scanline blocks of {maxChunkBytes} bytes"));
        }

        // The chunks must be able to hold the pixels the header declares before anything that size is
        // allocated: uncompressed they need every byte, compressed at least a codec's bound of them.
        long chunkArea = length - firstChunk;
        long pixelBytes = rowBytes * height;
        long needed = header.Compression == ExrCompression.None
            ? pixelBytes + (8 * chunkCountLong)
            : (pixelBytes / ExrChunkCodecs.MaxExpansion(header.Compression)) + (9 * chunkCountLong);
        if (chunkArea < needed)
        {
            throw new ImageFileException(
                fileName,
                FormattableString.Invariant($"truncated or lying: {chunkArea} bytes of chunks cannot hold the {w}x{h} pixels the header declares"));
        }

        var image = new RgbImage(w, h);
        byte[] chunkHead = new byte[8];
        ExrChannelLayout[] layouts = channels.Select(c => new ExrChannelLayout(c.Name, c.Type, 1, 1, false)).ToArray();

        // Chunks are read in order in batches, then inflated and decoded in parallel: rows of
        // different chunks are disjoint, and the first failing chunk (lowest index) is reported.
        for (int b0 = 0; b0 < chunkCount; b0 += ChunkBatch)
        {
            int b1 = Math.Min(chunkCount, b0 + ChunkBatch);
            var payloads = new byte[b1 - b0][];
            var ys = new int[b1 - b0];
            for (int i = b0; i < b1; i++)
            {
                ulong offset = BinaryPrimitives.ReadUInt64LittleEndian(table.AsSpan(i * 8));
                if (offset < (ulong)firstChunk || offset > (ulong)(length - 8))
                {
                    throw new ImageFileException(
                        fileName,
                        FormattableString.Invariant($"offset table entry {i} points to byte {offset}, outside the chunk area {firstChunk}..{length - 8}"));
                }

                stream.Position = (long)offset;
                StreamReading.ReadExactly(stream, chunkHead, fileName, FormattableString.Invariant($"the header of chunk {i}"));
                int y = BinaryPrimitives.ReadInt32LittleEndian(chunkHead);
                int size = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(4));
                long expectedY = (long)header.DataWindow.YMin + ((long)i * linesPerChunk);
                if (y != expectedY)
                {
                    throw new ImageFileException(fileName, FormattableString.Invariant($"chunk {i} is for scanline {y}, expected {expectedY}"));
                }

                int lines = (int)Math.Min(linesPerChunk, (long)header.DataWindow.YMax - y + 1);
                int rawSize = (int)(rowBytes * lines);
                if (size <= 0 || size > rawSize)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"chunk {i} (y={y}) declares {size} bytes of data; it must be 1..{rawSize}"));
                }

                if (size > length - stream.Position)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"truncated: chunk {i} (y={y}) declares {size} bytes but {length - stream.Position} remain"));
                }

                // A chunk of exactly the raw size is stored as is: writers keep a chunk uncompressed
                // when compression does not shrink it.
                if (size != rawSize && header.Compression == ExrCompression.None)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"chunk {i} (y={y}) holds {size} bytes; uncompressed scanlines need {rawSize}"));
                }

                payloads[i - b0] = new byte[size];
                StreamReading.ReadExactly(stream, payloads[i - b0], fileName, FormattableString.Invariant($"chunk {i}"));
                ys[i - b0] = y;
            }

            var failures = new ImageFileException?[b1 - b0];
            Parallel.For(
                b0,
                b1,
                () => (Scratch: new byte[maxChunkBytes], Raw: new byte[maxChunkBytes]),
                (i, _, buffers) =>
                {
                    int y = ys[i - b0];
                    byte[] payload = payloads[i - b0];
                    int lines = (int)Math.Min(linesPerChunk, (long)header.DataWindow.YMax - y + 1);
                    int rawSize = (int)(rowBytes * lines);
                    try
                    {
                        byte[] source = payload;
                        if (payload.Length != rawSize)
                        {
                            var block = new ExrBlock(layouts, header.DataWindow.XMin, y, w, lines);
                            ExrChunkCodecs.Decompress(header.Compression, payload, buffers.Raw.AsSpan(0, rawSize), block, buffers.Scratch);
                            source = buffers.Raw;
                        }

                        DecodeLines(source, channels, select, grey, image, y - header.DataWindow.YMin, lines, w);
                    }
                    catch (ExrCodecException e)
                    {
                        failures[i - b0] = new ImageFileException(fileName, FormattableString.Invariant($"chunk {i} (y={y}): {e.Message}"), e);
                    }
                    catch (ImageFileException e)
                    {
                        failures[i - b0] = e;
                    }

                    return buffers;
                },
                _ => { });
            ImageFileException? first = failures.FirstOrDefault(f => f is not null);
            if (first is not null)
            {
                throw first;
            }
        }

        string types = string.Join('/', select.Where(s => s >= 0).Select(s => channels[s].Type).Distinct().Select(t => t.ToString().ToUpperInvariant()));
        return new ImageReadResult(image, $"OpenEXR {(grey ? "Y" : "RGB")} {types} {CompressionNames[(int)header.Compression]}", notes);
    }

    /// <summary>Writes an OpenEXR file.</summary>
    public static void Write(string path, RgbImage image, ExrWriteOptions? options = null)
    {
        using FileStream stream = ImageFile.Create(path);
        Write(stream, image, options);
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

        if (options.Compression is not (ExrCompression.None or ExrCompression.Zips or ExrCompression.Zip))
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

        int linesPerChunk = options.Compression == ExrCompression.Zip ? 16 : 1;
        int chunkCount = (h + linesPerChunk - 1) / linesPerChunk;
        long start = stream.Position;
        stream.Write(header.GetBuffer(), 0, (int)header.Length);
        long tablePosition = stream.Position;
        stream.Write(new byte[chunkCount * 8]);

        int sampleSize = options.PixelType == ExrPixelType.Half ? 2 : 4;
        int rowBytes = w * layout.Length * sampleSize;
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
                payloads[i - b0] = options.Compression == ExrCompression.None ? raw : Deflate(raw);
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

    private static void DecodeLines(byte[] raw, Channel[] channels, int[] select, bool grey, RgbImage image, int row0, int lines, int w)
    {
        int p = 0;
        for (int line = 0; line < lines; line++)
        {
            Span<float> row = image.Row(row0 + line);
            for (int c = 0; c < channels.Length; c++)
            {
                int target = select[c];
                int size = channels[c].Size;
                if (target < 0)
                {
                    p += size * w;
                    continue;
                }

                bool half = channels[c].Type == ExrPixelType.Half;
                for (int x = 0; x < w; x++)
                {
                    float v = half
                        ? (float)BitConverter.UInt16BitsToHalf(BinaryPrimitives.ReadUInt16LittleEndian(raw.AsSpan(p)))
                        : BinaryPrimitives.ReadSingleLittleEndian(raw.AsSpan(p));
                    p += size;
                    if (grey)
                    {
                        row[x * 3] = v;
                        row[(x * 3) + 1] = v;
                        row[(x * 3) + 2] = v;
                    }
                    else
                    {
                        row[(x * 3) + target] = v;
                    }
                }
            }
        }
    }

    private static int[] SelectChannels(Channel[] channels, string fileName, List<string> notes, out bool grey)
    {
        var select = new int[channels.Length];
        int r = -1, g = -1, b = -1, yIndex = -1;
        for (int i = 0; i < channels.Length; i++)
        {
            select[i] = -1;
            switch (channels[i].Name)
            {
                case "R": r = i; break;
                case "G": g = i; break;
                case "B": b = i; break;
                case "Y": yIndex = i; break;
            }
        }

        string names = string.Join(",", channels.Select(c => c.Name));
        var used = new List<int>();
        if (r >= 0 && g >= 0 && b >= 0)
        {
            grey = false;
            select[r] = 0;
            select[g] = 1;
            select[b] = 2;
            used.AddRange([r, g, b]);
        }
        else if (yIndex >= 0 && r < 0 && g < 0 && b < 0)
        {
            grey = true;
            select[yIndex] = 0;
            used.Add(yIndex);
            notes.Add("Y (luminance) file: the value is copied to R, G and B");
            if (channels.Any(c => c.Name is "RY" or "BY"))
            {
                throw new ImageNotSupportedException(fileName, $"luminance/chroma channels (found {names})");
            }
        }
        else
        {
            throw new ImageNotSupportedException(fileName, $"channel set {names} (need R,G,B or Y)");
        }

        foreach (int i in used)
        {
            if (channels[i].Type != ExrPixelType.Half && channels[i].Type != ExrPixelType.Float)
            {
                throw new ImageNotSupportedException(fileName, $"{channels[i].Type.ToString().ToUpperInvariant()} channel '{channels[i].Name}'");
            }
        }

        string[] ignored = channels.Where((_, i) => select[i] < 0).Select(c => c.Name).ToArray();
        if (ignored.Length > 0)
        {
            notes.Add($"channels ignored: {string.Join(",", ignored)}");
        }

        return select;
    }

    private readonly record struct Box(int XMin, int YMin, int XMax, int YMax)
    {
        public override string ToString() => FormattableString.Invariant($"({XMin},{YMin})-({XMax},{YMax})");
    }

    private sealed record Channel(string Name, ExrPixelType Type)
    {
        public int Size => Type == ExrPixelType.Half ? 2 : 4;
    }

    private sealed record Header(Channel[] Channels, ExrCompression Compression, Box DataWindow, Box DisplayWindow, List<string> Notes);

    /// <summary>Parses the version field and the attribute list, checking every size against the file.</summary>
    private sealed class HeaderReader(Stream stream, string fileName, long length)
    {
        public Header ReadHeader()
        {
            if (length - stream.Position < 8)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"truncated: {length} bytes is too short for an OpenEXR file"));
            }

            Span<byte> start = stackalloc byte[8];
            StreamReading.ReadExactly(stream, start, fileName, "the magic number");
            if (BinaryPrimitives.ReadInt32LittleEndian(start) != Magic)
            {
                throw new ImageFileException(fileName, "not an OpenEXR file: wrong magic number");
            }

            int versionField = BinaryPrimitives.ReadInt32LittleEndian(start[4..]);
            int version = versionField & 0xff;
            int flags = versionField & ~0xff;
            if (version != 2)
            {
                throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"OpenEXR file format version {version} (only 2 exists)"));
            }

            if ((flags & MultiPartFlag) != 0)
            {
                throw new ImageNotSupportedException(fileName, "multi-part OpenEXR file");
            }

            if ((flags & DeepFlag) != 0)
            {
                throw new ImageNotSupportedException(fileName, "deep OpenEXR data");
            }

            if ((flags & TiledFlag) != 0)
            {
                throw new ImageNotSupportedException(fileName, "tiled OpenEXR file");
            }

            if ((flags & ~LongNamesFlag) != 0)
            {
                throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"unknown OpenEXR version flags 0x{flags:x}"));
            }

            int maxName = (flags & LongNamesFlag) != 0 ? 255 : 31;
            Channel[]? channels = null;
            ExrCompression? compression = null;
            Box? dataWindow = null;
            Box? displayWindow = null;
            var notes = new List<string>();
            for (int count = 0; ; count++)
            {
                string name = ReadName(maxName, "attribute name");
                if (name.Length == 0)
                {
                    break;
                }

                string type = ReadName(maxName, $"type of attribute '{name}'");
                if (type.Length == 0)
                {
                    throw new ImageFileException(fileName, $"attribute '{name}' has an empty type name");
                }

                byte[] sizeBytes = new byte[4];
                StreamReading.ReadExactly(stream, sizeBytes, fileName, $"the size of attribute '{name}'");
                int size = BinaryPrimitives.ReadInt32LittleEndian(sizeBytes);
                if (size < 0 || size > length - stream.Position)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"attribute '{name}' declares {size} bytes but {length - stream.Position} remain"));
                }

                switch (name)
                {
                    case "channels":
                        channels = ParseChannels(ReadValue(name, type, "chlist", size, -1), maxName);
                        break;
                    case "compression":
                        byte code = ReadValue(name, type, "compression", size, 1)[0];
                        if (code >= CompressionNames.Length || !ExrChunkCodecs.CanDecode((ExrCompression)code))
                        {
                            string known = code < CompressionNames.Length ? CompressionNames[code] : FormattableString.Invariant($"code {code}");
                            throw new ImageNotSupportedException(fileName, $"{known} compression");
                        }

                        compression = (ExrCompression)code;
                        break;
                    case "dataWindow":
                        dataWindow = ParseBox(ReadValue(name, type, "box2i", size, 16));
                        break;
                    case "displayWindow":
                        displayWindow = ParseBox(ReadValue(name, type, "box2i", size, 16));
                        break;
                    case "type":
                        string partType = Encoding.ASCII.GetString(ReadValue(name, type, "string", size, -1));
                        if (partType != "scanlineimage")
                        {
                            throw new ImageNotSupportedException(fileName, $"part type '{partType}'");
                        }

                        break;
                    case "tiles":
                        throw new ImageNotSupportedException(fileName, "tiled OpenEXR file (a 'tiles' attribute without the tiled flag)");
                    default:
                        stream.Seek(size, SeekOrigin.Current);
                        break;
                }

                if (count > 10_000)
                {
                    throw new ImageFileException(fileName, "header has more than 10000 attributes");
                }
            }

            return new Header(
                channels ?? throw Missing("channels"),
                compression ?? throw Missing("compression"),
                dataWindow ?? throw Missing("dataWindow"),
                displayWindow ?? throw Missing("displayWindow"),
                notes);
        }

        private ImageFileException Missing(string name) => new(fileName, $"header lacks the required attribute '{name}'");

        private byte[] ReadValue(string name, string type, string expectedType, int size, int expectedSize)
        {
            if (type != expectedType)
            {
                throw new ImageFileException(fileName, $"attribute '{name}' has type '{type}', expected '{expectedType}'");
            }

            if (expectedSize >= 0 && size != expectedSize)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"attribute '{name}' has {size} bytes, expected {expectedSize}"));
            }

            var value = new byte[size];
            StreamReading.ReadExactly(stream, value, fileName, $"attribute '{name}'");
            return value;
        }

        private string ReadName(int maxName, string what)
        {
            Span<byte> buffer = stackalloc byte[256];
            for (int i = 0; ; i++)
            {
                int b = stream.ReadByte();
                if (b < 0)
                {
                    throw new ImageFileException(fileName, $"truncated: file ends inside the header ({what})");
                }

                if (b == 0)
                {
                    return Encoding.ASCII.GetString(buffer[..i]);
                }

                if (i >= maxName)
                {
                    throw new ImageFileException(fileName, FormattableString.Invariant($"{what} is longer than {maxName} bytes"));
                }

                buffer[i] = (byte)b;
            }
        }

        private Channel[] ParseChannels(byte[] value, int maxName)
        {
            var list = new List<Channel>();
            int p = 0;
            while (true)
            {
                int end = Array.IndexOf(value, (byte)0, p);
                if (end < 0)
                {
                    throw new ImageFileException(fileName, "channel list is not terminated");
                }

                if (end == p)
                {
                    break;
                }

                string name = Encoding.ASCII.GetString(value, p, end - p);
                if (end - p > maxName)
                {
                    throw new ImageFileException(fileName, $"channel name '{name}' is too long");
                }

                p = end + 1;
                if (value.Length - p < 16)
                {
                    throw new ImageFileException(fileName, $"channel list ends inside the entry for '{name}'");
                }

                int type = BinaryPrimitives.ReadInt32LittleEndian(value.AsSpan(p));
                int xSampling = BinaryPrimitives.ReadInt32LittleEndian(value.AsSpan(p + 8));
                int ySampling = BinaryPrimitives.ReadInt32LittleEndian(value.AsSpan(p + 12));
                p += 16;
                if (type is < 0 or > 2)
                {
                    throw new ImageFileException(fileName, FormattableString.Invariant($"channel '{name}' has unknown pixel type {type}"));
                }

                if (xSampling != 1 || ySampling != 1)
                {
                    throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"subsampled channel '{name}' ({xSampling}x{ySampling})"));
                }

                if (list.Any(c => c.Name == name))
                {
                    throw new ImageFileException(fileName, $"channel '{name}' appears twice");
                }

                list.Add(new Channel(name, (ExrPixelType)type));
            }

            if (list.Count == 0)
            {
                throw new ImageFileException(fileName, "channel list is empty");
            }

            return [.. list];
        }

        private static Box ParseBox(byte[] v) => new(
            BinaryPrimitives.ReadInt32LittleEndian(v),
            BinaryPrimitives.ReadInt32LittleEndian(v.AsSpan(4)),
            BinaryPrimitives.ReadInt32LittleEndian(v.AsSpan(8)),
            BinaryPrimitives.ReadInt32LittleEndian(v.AsSpan(12)));
    }
}
