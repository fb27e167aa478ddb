using System.Buffers.Binary;
using System.Globalization;

namespace PathBench.Imaging;

/// <summary>Which part and channels of an OpenEXR file to read.</summary>
/// <param name="Part">A part's name or zero-based index; null reads the first part.</param>
/// <param name="Layer">A layer prefix: "diffuse" reads diffuse.R, diffuse.G, diffuse.B (or diffuse.Y).</param>
/// <param name="Channels">Exact channel names: three for R, G, B, or one read as grey; overrides <paramref name="Layer"/>.</param>
public sealed record ExrReadOptions(string? Part = null, string? Layer = null, IReadOnlyList<string>? Channels = null)
{
    /// <summary>The first part; R, G, B or else Y.</summary>
    public static ExrReadOptions Default { get; } = new();
}

/// <summary>
/// Reads one part of an OpenEXR 2/3 file (OpenEXR file layout specification): single- or multi-part,
/// scanline or tiled (the top level of mip- and rip-mapped parts), any compression
/// <see cref="ExrChunkCodecs"/> decodes, HALF, FLOAT and UINT channels. The image covers the display
/// window; pixels outside the data window are zero and data outside the display window is dropped,
/// with a note either way.
/// </summary>
internal static class ExrReader
{
    // Chunks read, then decoded in parallel, per batch: bounds the compressed bytes held at once.
    private const int ChunkBatch = 64;

    public static ImageReadResult Read(Stream stream, string fileName, ImageLimits limits, ExrReadOptions options)
    {
        long length = StreamReading.RequireLength(stream, fileName);
        var headers = new ExrHeaderReader(stream, fileName, length);
        List<ExrPartHeader> parts = headers.ReadHeaders();
        long tableStart = stream.Position;
        var notes = new List<string>();

        ExrPartHeader part = ChoosePart(parts, options.Part, fileName, notes);
        ExrBox data = part.DataWindow;
        ExrBox display = part.DisplayWindow;
        if (data.Width <= 0 || data.Height <= 0 || data.Width > int.MaxValue || data.Height > int.MaxValue)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"data window {data} is empty or too large"));
        }

        if (display.Width <= 0 || display.Height <= 0 || display.Width > int.MaxValue || display.Height > int.MaxValue)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"display window {display} is empty or too large"));
        }

        // B44 codes perceptually linear HALF channels through an exp/log table this reader does not have.
        if (part.Compression is ExrCompression.B44 or ExrCompression.B44A
            && part.Channels.FirstOrDefault(c => c.PerceptuallyLinear && c.Type == ExrPixelType.Half) is { Name: { } linear })
        {
            throw new ImageNotSupportedException(fileName, $"B44 with the perceptually linear channel '{linear}'");
        }

        Selection selection = SelectChannels(part.Channels, options, fileName, notes);

        // Where this part's offset table starts: after the tables of the parts before it.
        long skip = 0;
        for (int i = 0; i < part.Index; i++)
        {
            skip += parts[i].ChunkCount!.Value;
        }

        ChunkGrid grid = ChunkGrid.Of(part, fileName);
        long bytesPerPixel = part.Channels.Sum(c => (long)c.Size);
        long maxChunkRaw = bytesPerPixel * grid.MaxBlockWidth * grid.MaxBlockHeight;
        // Chunks are decoded a batch at a time into the image: besides it the reader holds one
        // batch of compressed chunks and a decompressed one per worker (each at most the raw size,
        // within the codecs' bounds). Checked from the header alone, before the file's length is.
        limits.Check(fileName, display.Width, display.Height, (Int128)(ChunkBatch + Environment.ProcessorCount) * maxChunkRaw);
        if (maxChunkRaw > Array.MaxLength)
        {
            throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"chunks of {maxChunkRaw} bytes"));
        }
        long tableEntries = part.ChunkCount ?? grid.TableEntries;
        if (tableEntries < grid.Count)
        {
            throw new ImageFileException(
                fileName, FormattableString.Invariant($"part {part.Label} declares {tableEntries} chunks; its data window needs {grid.Count}"));
        }

        long partTable = tableStart + (8 * skip);
        if (partTable + (8 * (long)grid.Count) > length)
        {
            throw new ImageFileException(
                fileName, FormattableString.Invariant($"truncated: the offset table of {grid.Count} chunks does not fit in the file"));
        }

        long firstChunk = tableStart + (8 * (skip + tableEntries));
        foreach (ExrPartHeader p in parts.Skip(part.Index + 1))
        {
            firstChunk += 8L * p.ChunkCount!.Value;
        }


        // The chunks must be able to hold the pixels the header declares before anything that size is
        // allocated: uncompressed they need every byte, compressed at least a codec's bound of them.
        long chunkArea = length - firstChunk;
        long pixelBytes = bytesPerPixel * data.Width * data.Height;
        int headLength = (headers.MultiPart ? 4 : 0) + (part.Tiled ? 16 : 4) + 4;
        long needed = (pixelBytes / ExrChunkCodecs.MaxExpansion(part.Compression))
            + ((headLength + (part.Compression == ExrCompression.None ? 0 : 1)) * (long)grid.Count);
        if (chunkArea < needed)
        {
            throw new ImageFileException(
                fileName,
                FormattableString.Invariant($"truncated or lying: {Math.Max(chunkArea, 0)} bytes of chunks cannot hold the {data.Width}x{data.Height} pixels the header declares"));
        }

        stream.Position = partTable;
        var table = new byte[grid.Count * 8];
        StreamReading.ReadExactly(stream, table, fileName, "the offset table");

        NoteWindows(data, display, notes);
        var image = new RgbImage((int)display.Width, (int)display.Height);
        byte[] chunkHead = new byte[headLength];
        for (int b0 = 0; b0 < grid.Count; b0 += ChunkBatch)
        {
            int b1 = Math.Min(grid.Count, b0 + ChunkBatch);
            var payloads = new byte[b1 - b0][];
            var blocks = new ExrBlock[b1 - b0];
            for (int i = b0; i < b1; i++)
            {
                ulong offset = BinaryPrimitives.ReadUInt64LittleEndian(table.AsSpan(i * 8));
                if (offset < (ulong)firstChunk || offset > (ulong)(length - headLength))
                {
                    throw new ImageFileException(
                        fileName,
                        FormattableString.Invariant($"offset table entry {i} points to byte {offset}, outside the chunk area {firstChunk}..{length - headLength}"));
                }

                stream.Position = (long)offset;
                StreamReading.ReadExactly(stream, chunkHead, fileName, FormattableString.Invariant($"the header of chunk {i}"));
                int p = 0;
                if (headers.MultiPart)
                {
                    int number = BinaryPrimitives.ReadInt32LittleEndian(chunkHead);
                    if (number != part.Index)
                    {
                        throw new ImageFileException(fileName, FormattableString.Invariant($"chunk {i} belongs to part {number}, expected part {part.Index}"));
                    }

                    p = 4;
                }

                ExrBlock block = grid.Block(i, part.Channels);
                if (part.Tiled)
                {
                    int tx = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(p));
                    int ty = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(p + 4));
                    int lx = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(p + 8));
                    int ly = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(p + 12));
                    (int ex, int ey) = (i % grid.TilesX, i / grid.TilesX);
                    if ((tx, ty, lx, ly) != (ex, ey, 0, 0))
                    {
                        throw new ImageFileException(
                            fileName, FormattableString.Invariant($"chunk {i} is tile ({tx},{ty}) of level ({lx},{ly}); expected tile ({ex},{ey}) of level (0,0)"));
                    }

                    p += 16;
                }
                else
                {
                    int y = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(p));
                    if (y != block.Y0)
                    {
                        throw new ImageFileException(fileName, FormattableString.Invariant($"chunk {i} is for scanline {y}, expected {block.Y0}"));
                    }

                    p += 4;
                }

                int size = BinaryPrimitives.ReadInt32LittleEndian(chunkHead.AsSpan(p));
                string where = Where(part, block, i);
                if (size <= 0 || size > block.RawSize)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"{where} declares {size} bytes of data; it must be 1..{block.RawSize}"));
                }

                if (size > length - stream.Position)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"truncated: {where} declares {size} bytes but {length - stream.Position} remain"));
                }

                // A chunk of exactly the raw size is stored as is: writers keep a chunk uncompressed
                // when compression does not shrink it.
                if (size != block.RawSize && part.Compression == ExrCompression.None)
                {
                    throw new ImageFileException(
                        fileName, FormattableString.Invariant($"{where} holds {size} bytes; uncompressed it needs {block.RawSize}"));
                }

                payloads[i - b0] = new byte[size];
                StreamReading.ReadExactly(stream, payloads[i - b0], fileName, FormattableString.Invariant($"chunk {i}"));
                blocks[i - b0] = block;
            }

            // Chunks of a batch decode in parallel: their pixels are disjoint, and the first failing
            // chunk (lowest index) is the one reported.
            var failures = new ImageFileException?[b1 - b0];
            Parallel.For(
                b0,
                b1,
                () => (Scratch: new byte[maxChunkRaw], Raw: new byte[maxChunkRaw]),
                (i, _, buffers) =>
                {
                    ExrBlock block = blocks[i - b0];
                    byte[] payload = payloads[i - b0];
                    try
                    {
                        byte[] source = payload;
                        if (payload.Length != block.RawSize)
                        {
                            ExrChunkCodecs.Decompress(part.Compression, payload, buffers.Raw.AsSpan(0, (int)block.RawSize), block, buffers.Scratch);
                            source = buffers.Raw;
                        }

                        Scatter(source, block, selection, image, display);
                    }
                    catch (ExrCodecException e)
                    {
                        failures[i - b0] = new ImageFileException(fileName, $"{Where(part, block, i)}: {e.Message}", e);
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

        string types = string.Join('/', selection.Used.Select(s => part.Channels[s].Type).Distinct().Select(t => t.ToString().ToUpperInvariant()));
        string format = $"OpenEXR {(selection.Grey ? "Y" : "RGB")} {types} {ExrHeaderReader.CompressionNames[(int)part.Compression]}";
        if (part.Tiled)
        {
            ExrTiles t = part.Tiles!.Value;
            format += FormattableString.Invariant($", tiled {t.Width}x{t.Height} {t.LevelName}");
            if (t.LevelMode != 0)
            {
                notes.Add($"{t.LevelName} file: the top (full-resolution) level is read");
            }
        }

        if (parts.Count > 1)
        {
            format += $", part {part.Label} of {parts.Count}";
        }

        return new ImageReadResult(image, format, notes) { DisplayWindow = new PixelRect(display.XMin, display.YMin, (int)display.Width, (int)display.Height) };
    }

    private static string Where(ExrPartHeader part, ExrBlock block, int i) => part.Tiled
        ? FormattableString.Invariant($"chunk {i} (tile at x={block.X0}, y={block.Y0})")
        : FormattableString.Invariant($"chunk {i} (y={block.Y0})");

    private static ExrPartHeader ChoosePart(List<ExrPartHeader> parts, string? wanted, string fileName, List<string> notes)
    {
        string list = string.Join(", ", parts.Select(p => p.Name is null ? p.Label : FormattableString.Invariant($"{p.Index}: '{p.Name}'")));
        if (wanted is null)
        {
            if (parts.Count > 1)
            {
                notes.Add($"{parts.Count} parts ({list}): the first is read; choose another with --part");
            }

            return parts[0];
        }

        ExrPartHeader? byName = parts.FirstOrDefault(p => p.Name == wanted);
        if (byName is not null)
        {
            return byName;
        }

        if (int.TryParse(wanted, NumberStyles.None, CultureInfo.InvariantCulture, out int index) && index < parts.Count)
        {
            return parts[index];
        }

        throw new ImageFileException(fileName, $"no part '{wanted}'; parts: {list}");
    }

    private static void NoteWindows(ExrBox data, ExrBox display, List<string> notes)
    {
        if (data == display)
        {
            if (display.XMin != 0 || display.YMin != 0)
            {
                notes.Add(FormattableString.Invariant($"display window {display} starts away from the origin"));
            }

            return;
        }

        notes.Add(FormattableString.Invariant($"display window {display} is read; the data window {data} differs: pixels outside it are zero, data outside the display window is dropped"));
    }

    /// <summary>Which channel feeds which of R, G, B (-1: not read); a grey selection feeds all three from one.</summary>
    private sealed record Selection(int[] Target, bool Grey, int[] Used);

    private static Selection SelectChannels(ExrChannelLayout[] channels, ExrReadOptions options, string fileName, List<string> notes)
    {
        string[] names = [.. channels.Select(c => c.Name)];
        string[] chosen;
        if (options.Channels is { Count: > 0 } explicitNames)
        {
            if (explicitNames.Count is not (1 or 3))
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"--channels takes one name (read as grey) or three (R,G,B), got {explicitNames.Count}"));
            }

            foreach (string n in explicitNames)
            {
                if (!names.Contains(n))
                {
                    throw new ImageFileException(fileName, $"no channel '{n}'; channels: {string.Join(",", names)}");
                }
            }

            chosen = [.. explicitNames];
        }
        else
        {
            string prefix = options.Layer is { Length: > 0 } layer ? layer + "." : "";
            if (names.Contains(prefix + "R") && names.Contains(prefix + "G") && names.Contains(prefix + "B"))
            {
                chosen = [prefix + "R", prefix + "G", prefix + "B"];
            }
            else if (names.Contains(prefix + "Y") && !names.Contains(prefix + "R") && !names.Contains(prefix + "G") && !names.Contains(prefix + "B"))
            {
                if (names.Contains(prefix + "RY") || names.Contains(prefix + "BY"))
                {
                    throw new ImageNotSupportedException(fileName, $"luminance/chroma channels (found {string.Join(",", names)})");
                }

                chosen = [prefix + "Y"];
            }
            else
            {
                string what = prefix.Length == 0 ? "no R,G,B or Y channels" : $"layer '{options.Layer}' has no R,G,B or Y channels";
                throw new ImageFileException(fileName, $"{what}; layers: {Layers(names)} (choose with --layer NAME or --channels A,B,C)");
            }
        }

        var target = new int[channels.Length];
        Array.Fill(target, -1);
        var used = new int[chosen.Length];
        for (int k = 0; k < chosen.Length; k++)
        {
            int i = Array.IndexOf(names, chosen[k]);
            if (chosen.Length == 3 && target[i] >= 0)
            {
                throw new ImageFileException(fileName, $"channel '{chosen[k]}' is chosen twice");
            }

            target[i] = k;
            used[k] = i;
            ExrChannelLayout c = channels[i];
            if (c.XSampling != 1 || c.YSampling != 1)
            {
                throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"subsampled channel '{c.Name}' ({c.XSampling}x{c.YSampling})"));
            }

            if (c.Type == ExrPixelType.UInt)
            {
                notes.Add($"UINT channel '{c.Name}' is read as float (exact up to 2^24)");
            }
        }

        bool grey = chosen.Length == 1;
        if (grey)
        {
            notes.Add($"{chosen[0]} (one channel) is copied to R, G and B");
        }

        string[] ignored = [.. names.Where((_, i) => target[i] < 0)];
        if (ignored.Length > 0)
        {
            notes.Add($"channels ignored: {string.Join(",", ignored)}");
        }

        return new Selection(target, grey, used);
    }

    /// <summary>"(none) (R,G,B,A), diffuse (R,G,B), depth (Z)": channel names grouped by the prefix before their last dot.</summary>
    private static string Layers(string[] names) => string.Join(", ", names
        .GroupBy(n => n.LastIndexOf('.') is int dot and >= 0 ? n[..dot] : "")
        .Select(g => $"{(g.Key.Length == 0 ? "(none)" : g.Key)} ({string.Join(",", g.Select(n => n.LastIndexOf('.') is int dot and >= 0 ? n[(dot + 1)..] : n))})"));

    /// <summary>Copies the chosen channels of one raw chunk into the display-window image.</summary>
    private static void Scatter(byte[] raw, ExrBlock block, Selection selection, RgbImage image, ExrBox display)
    {
        ExrChannelLayout[] channels = block.Channels;
        int p = 0;
        for (int y = block.Y0; y < block.Y0 + block.Height; y++)
        {
            long row = (long)y - display.YMin;
            bool rowInside = row >= 0 && row < image.Height;
            for (int c = 0; c < channels.Length; c++)
            {
                if (!block.HasLine(c, y))
                {
                    continue;
                }

                int samples = block.SamplesPerLine(c);
                int size = channels[c].Size;
                int target = selection.Target[c];
                if (target < 0 || !rowInside)
                {
                    p += size * samples;
                    continue;
                }

                Span<float> line = image.Row((int)row);
                ExrPixelType type = channels[c].Type;
                for (int k = 0; k < samples; k++, p += size)
                {
                    long x = (long)block.X0 + k - display.XMin;
                    if (x < 0 || x >= image.Width)
                    {
                        continue;
                    }

                    float v = type switch
                    {
                        ExrPixelType.Half => (float)BitConverter.UInt16BitsToHalf(BinaryPrimitives.ReadUInt16LittleEndian(raw.AsSpan(p))),
                        ExrPixelType.Float => BinaryPrimitives.ReadSingleLittleEndian(raw.AsSpan(p)),
                        _ => BinaryPrimitives.ReadUInt32LittleEndian(raw.AsSpan(p)),
                    };
                    if (selection.Grey)
                    {
                        line[(int)(x * 3)] = v;
                        line[(int)(x * 3) + 1] = v;
                        line[(int)(x * 3) + 2] = v;
                    }
                    else
                    {
                        line[(int)(x * 3) + target] = v;
                    }
                }
            }
        }
    }

    /// <summary>How a part's data window is cut into chunks: blocks of scanlines, or the top level's tiles in row order.</summary>
    private sealed record ChunkGrid(ExrBox Data, int BlockWidth, int BlockHeight, int TilesX, int TilesY, long TableEntries)
    {
        public int Count => TilesX * TilesY;

        public int MaxBlockWidth => (int)Math.Min(BlockWidth, Data.Width);

        public int MaxBlockHeight => (int)Math.Min(BlockHeight, Data.Height);

        public static ChunkGrid Of(ExrPartHeader part, string fileName)
        {
            ExrBox d = part.DataWindow;
            if (!part.Tiled)
            {
                int lines = ExrChunkCodecs.LinesPerChunk(part.Compression);
                long count = (d.Height + lines - 1) / lines;
                return new ChunkGrid(d, (int)d.Width, lines, 1, (int)count, count);
            }

            ExrTiles t = part.Tiles!.Value;
            long tilesX = (d.Width + t.Width - 1) / t.Width;
            long tilesY = (d.Height + t.Height - 1) / t.Height;
            if (tilesX * tilesY > int.MaxValue / 8)
            {
                throw new ImageFileException(fileName, FormattableString.Invariant($"{tilesX}x{tilesY} tiles of {t.Width}x{t.Height} are too many"));
            }

            return new ChunkGrid(d, t.Width, t.Height, (int)tilesX, (int)tilesY, LevelTiles(d, t));
        }

        public ExrBlock Block(int i, ExrChannelLayout[] channels)
        {
            int tx = i % TilesX;
            int ty = i / TilesX;
            long x0 = Data.XMin + ((long)tx * BlockWidth);
            long y0 = Data.YMin + ((long)ty * BlockHeight);
            int w = (int)Math.Min(BlockWidth, Data.XMax - x0 + 1);
            int h = (int)Math.Min(BlockHeight, Data.YMax - y0 + 1);
            return new ExrBlock(channels, (int)x0, (int)y0, w, h);
        }

        /// <summary>Tiles over every level of a single-part tiled file (its offset table has one entry each).</summary>
        private static long LevelTiles(ExrBox d, ExrTiles t)
        {
            int levelsX = Levels(d.Width, t.RoundingMode);
            int levelsY = Levels(d.Height, t.RoundingMode);
            long total = 0;
            if (t.LevelMode == 0)
            {
                levelsX = levelsY = 1;
            }

            if (t.LevelMode == 1)
            {
                int levels = Math.Max(levelsX, levelsY);
                for (int l = 0; l < levels; l++)
                {
                    total += Tiles(LevelSize(d.Width, l, t.RoundingMode), t.Width) * Tiles(LevelSize(d.Height, l, t.RoundingMode), t.Height);
                }

                return total;
            }

            for (int ly = 0; ly < levelsY; ly++)
            {
                for (int lx = 0; lx < levelsX; lx++)
                {
                    total += Tiles(LevelSize(d.Width, lx, t.RoundingMode), t.Width) * Tiles(LevelSize(d.Height, ly, t.RoundingMode), t.Height);
                }
            }

            return total;
        }

        private static long Tiles(long size, int tile) => (size + tile - 1) / tile;

        // Level sizes halve, rounding down (mode 0) or up (mode 1), never below one pixel.
        private static long LevelSize(long size, int level, int rounding)
        {
            long s = rounding == 0 ? size >> level : (size + (1L << level) - 1) >> level;
            return Math.Max(s, 1);
        }

        private static int Levels(long size, int rounding)
        {
            int levels = 1;
            while (LevelSize(size, levels - 1, rounding) > 1)
            {
                levels++;
            }

            return levels;
        }
    }
}
