using System.Buffers.Binary;
using System.Text;

namespace PathBench.Imaging;

/// <summary>An inclusive pixel box as OpenEXR stores it (box2i).</summary>
internal readonly record struct ExrBox(int XMin, int YMin, int XMax, int YMax)
{
    public long Width => (long)XMax - XMin + 1;

    public long Height => (long)YMax - YMin + 1;

    public override string ToString() => FormattableString.Invariant($"({XMin},{YMin})-({XMax},{YMax})");
}

/// <summary>A tiled part's tile size and level mode (tiledesc).</summary>
internal readonly record struct ExrTiles(int Width, int Height, int LevelMode, int RoundingMode)
{
    public string LevelName => LevelMode switch { 0 => "one level", 1 => "mip-mapped", _ => "rip-mapped" };
}

/// <summary>One part's header: what the reader needs of it.</summary>
internal sealed record ExrPartHeader(
    int Index,
    string? Name,
    bool Tiled,
    ExrChannelLayout[] Channels,
    ExrCompression Compression,
    ExrBox DataWindow,
    ExrBox DisplayWindow,
    ExrTiles? Tiles,
    int? ChunkCount)
{
    /// <summary>The part's name, or its index when it has none.</summary>
    public string Label => Name ?? Index.ToString(System.Globalization.CultureInfo.InvariantCulture);
}

/// <summary>
/// Parses the magic number, the version field and every part's attribute list (OpenEXR file layout
/// specification: one header for single-part files; for multi-part files headers one after another,
/// ended by an empty header), checking every size against the file.
/// </summary>
internal sealed class ExrHeaderReader(Stream stream, string fileName, long length)
{
    private const int Magic = 20000630;
    private const int TiledFlag = 0x200;
    private const int LongNamesFlag = 0x400;
    private const int DeepFlag = 0x800;
    private const int MultiPartFlag = 0x1000;
    private const int MaxParts = 10_000;

    /// <summary>The compression names by code, as the format lists them.</summary>
    public static readonly string[] CompressionNames = ["NONE", "RLE", "ZIPS", "ZIP", "PIZ", "PXR24", "B44", "B44A", "DWAA", "DWAB", "HTJ2K"];

    /// <summary>Whether the file is multi-part (chunks then carry a part number).</summary>
    public bool MultiPart { get; private set; }

    /// <summary>Reads the headers; the stream is left at the first offset table.</summary>
    public List<ExrPartHeader> ReadHeaders()
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

        if ((flags & DeepFlag) != 0)
        {
            throw new ImageNotSupportedException(fileName, "deep OpenEXR data");
        }

        if ((flags & ~(LongNamesFlag | TiledFlag | MultiPartFlag)) != 0)
        {
            throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"unknown OpenEXR version flags 0x{flags:x}"));
        }

        MultiPart = (flags & MultiPartFlag) != 0;
        if (MultiPart && (flags & TiledFlag) != 0)
        {
            throw new ImageFileException(fileName, "version field sets both the multi-part and the single-part tiled flag");
        }

        int maxName = (flags & LongNamesFlag) != 0 ? 255 : 31;
        var parts = new List<ExrPartHeader>();
        if (!MultiPart)
        {
            parts.Add(ReadHeader(0, maxName, (flags & TiledFlag) != 0, out _));
            return parts;
        }

        while (true)
        {
            ExrPartHeader part = ReadHeader(parts.Count, maxName, tiledDefault: false, out bool empty);
            if (empty)
            {
                break;
            }

            parts.Add(part);
            if (parts.Count > MaxParts)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"more than {MaxParts} parts"));
            }
        }

        if (parts.Count == 0)
        {
            throw new ImageFileException(fileName, "multi-part file with no part");
        }

        foreach (ExrPartHeader p in parts)
        {
            if (p.Name is null)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"part {p.Index} of a multi-part file has no 'name' attribute"));
            }

            if (p.ChunkCount is null)
            {
                throw new ImageFileException(fileName, $"part '{p.Name}' of a multi-part file has no 'chunkCount' attribute");
            }
        }

        string? duplicate = parts.GroupBy(p => p.Name).FirstOrDefault(g => g.Count() > 1)?.Key;
        if (duplicate is not null)
        {
            throw new ImageFileException(fileName, $"two parts are named '{duplicate}'");
        }

        return parts;
    }

    private ExrPartHeader ReadHeader(int index, int maxName, bool tiledDefault, out bool empty)
    {
        ExrChannelLayout[]? channels = null;
        ExrCompression? compression = null;
        ExrBox? dataWindow = null;
        ExrBox? displayWindow = null;
        ExrTiles? tiles = null;
        string? name = null;
        string? type = null;
        int? chunkCount = null;
        empty = false;
        for (int count = 0; ; count++)
        {
            string attribute = ReadName(maxName, "attribute name");
            if (attribute.Length == 0)
            {
                if (count == 0 && MultiPart)
                {
                    empty = true;
                    return null!;
                }

                break;
            }

            string attributeType = ReadName(maxName, $"type of attribute '{attribute}'");
            if (attributeType.Length == 0)
            {
                throw new ImageFileException(fileName, $"attribute '{attribute}' has an empty type name");
            }

            byte[] sizeBytes = new byte[4];
            StreamReading.ReadExactly(stream, sizeBytes, fileName, $"the size of attribute '{attribute}'");
            int size = BinaryPrimitives.ReadInt32LittleEndian(sizeBytes);
            if (size < 0 || size > length - stream.Position)
            {
                throw new ImageFileException(
                    fileName, FormattableString.Invariant($"attribute '{attribute}' declares {size} bytes but {length - stream.Position} remain"));
            }

            switch (attribute)
            {
                case "channels":
                    channels = ParseChannels(ReadValue(attribute, attributeType, "chlist", size, -1), maxName);
                    break;
                case "compression":
                    byte code = ReadValue(attribute, attributeType, "compression", size, 1)[0];
                    if (code >= CompressionNames.Length || !ExrChunkCodecs.CanDecode((ExrCompression)code))
                    {
                        string known = code < CompressionNames.Length ? CompressionNames[code] : FormattableString.Invariant($"code {code}");
                        throw new ImageNotSupportedException(fileName, $"{known} compression");
                    }

                    compression = (ExrCompression)code;
                    break;
                case "dataWindow":
                    dataWindow = ParseBox(ReadValue(attribute, attributeType, "box2i", size, 16));
                    break;
                case "displayWindow":
                    displayWindow = ParseBox(ReadValue(attribute, attributeType, "box2i", size, 16));
                    break;
                case "name":
                    name = Encoding.UTF8.GetString(ReadValue(attribute, attributeType, "string", size, -1));
                    break;
                case "type":
                    type = Encoding.ASCII.GetString(ReadValue(attribute, attributeType, "string", size, -1));
                    if (type is not ("scanlineimage" or "tiledimage"))
                    {
                        throw new ImageNotSupportedException(fileName, $"part type '{type}'");
                    }

                    break;
                case "chunkCount":
                    chunkCount = BinaryPrimitives.ReadInt32LittleEndian(ReadValue(attribute, attributeType, "int", size, 4));
                    if (chunkCount < 1)
                    {
                        throw new ImageFileException(fileName, FormattableString.Invariant($"chunkCount {chunkCount} is not positive"));
                    }

                    break;
                case "tiles":
                    byte[] t = ReadValue(attribute, attributeType, "tiledesc", size, 9);
                    uint tw = BinaryPrimitives.ReadUInt32LittleEndian(t);
                    uint th = BinaryPrimitives.ReadUInt32LittleEndian(t.AsSpan(4));
                    if (tw == 0 || th == 0 || tw > int.MaxValue || th > int.MaxValue)
                    {
                        throw new ImageFileException(fileName, FormattableString.Invariant($"tile size {tw}x{th} is out of range"));
                    }

                    if ((t[8] & 0x0f) > 2 || (t[8] >> 4) > 1)
                    {
                        throw new ImageFileException(fileName, FormattableString.Invariant($"unknown tile level mode 0x{t[8]:x2}"));
                    }

                    tiles = new ExrTiles((int)tw, (int)th, t[8] & 0x0f, t[8] >> 4);
                    break;
                default:
                    stream.Seek(size, SeekOrigin.Current);
                    break;
            }

            if (count > 10_000)
            {
                throw new ImageFileException(fileName, "header has more than 10000 attributes");
            }
        }

        bool tiled = type is null ? tiledDefault : type == "tiledimage";
        if (MultiPart && type is null)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"part {index} of a multi-part file has no 'type' attribute"));
        }

        if (!MultiPart && type is not null && tiled != tiledDefault)
        {
            throw new ImageFileException(fileName, $"part type '{type}' contradicts the version field's tiled flag");
        }

        if (tiled && tiles is null)
        {
            throw Missing("tiles");
        }

        return new ExrPartHeader(
            index,
            name,
            tiled,
            channels ?? throw Missing("channels"),
            compression ?? throw Missing("compression"),
            dataWindow ?? throw Missing("dataWindow"),
            displayWindow ?? throw Missing("displayWindow"),
            tiled ? tiles : null,
            chunkCount);
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

    private ExrChannelLayout[] ParseChannels(byte[] value, int maxName)
    {
        var list = new List<ExrChannelLayout>();
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

            string name = Encoding.UTF8.GetString(value, p, end - p);
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
            bool pLinear = value[p + 4] != 0;
            int xSampling = BinaryPrimitives.ReadInt32LittleEndian(value.AsSpan(p + 8));
            int ySampling = BinaryPrimitives.ReadInt32LittleEndian(value.AsSpan(p + 12));
            p += 16;
            if (type is < 0 or > 2)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"channel '{name}' has unknown pixel type {type}"));
            }

            if (xSampling < 1 || ySampling < 1)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"channel '{name}' has sampling {xSampling}x{ySampling}; both must be at least 1"));
            }

            if (list.Any(c => c.Name == name))
            {
                throw new ImageFileException(fileName, $"channel '{name}' appears twice");
            }

            list.Add(new ExrChannelLayout(name, (ExrPixelType)type, xSampling, ySampling, pLinear));
        }

        if (list.Count == 0)
        {
            throw new ImageFileException(fileName, "channel list is empty");
        }

        return [.. list];
    }

    private static ExrBox ParseBox(byte[] v) => new(
        BinaryPrimitives.ReadInt32LittleEndian(v),
        BinaryPrimitives.ReadInt32LittleEndian(v.AsSpan(4)),
        BinaryPrimitives.ReadInt32LittleEndian(v.AsSpan(8)),
        BinaryPrimitives.ReadInt32LittleEndian(v.AsSpan(12)));
}
