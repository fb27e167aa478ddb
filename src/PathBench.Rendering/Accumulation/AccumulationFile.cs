using System.Buffers.Binary;
using System.Globalization;
using System.IO.Compression;
using System.Numerics;
using System.Runtime.InteropServices;
using System.Security.Cryptography;
using System.Text;
using PathBench.Io;

namespace PathBench.Rendering.Accumulation;

/// <summary>
/// Reads and writes the accumulation file: a film's exact sums with everything they depend on
/// (format: <c>tools/accumulation-format.md</c>). Writes are atomic (temp file in the same
/// folder, flushed to disk, renamed over the target), so a crash at any moment leaves either the
/// previous file or the new one, never a torn one. Reading checks every field, the lengths and the
/// SHA-256 checksum before it allocates the film.
/// </summary>
public static class AccumulationFile
{
    /// <summary>The first eight bytes of every accumulation file.</summary>
    public static ReadOnlySpan<byte> Magic => "PBACCUM\n"u8;

    /// <summary>The format version this code writes and reads.</summary>
    public const uint FormatVersion = 2;

    /// <summary>
    /// Longest wide sum in bytes: a channel value v below 2^1024 gives |q| = |v| · 2^32 &lt; 2^1056,
    /// so a sum over fewer than 2^31 samples is below 2^1087 (137 bytes with the sign) and a sum
    /// of squares below 2^2143 (269 bytes).
    /// </summary>
    public const int MaxWideBytes = 272;

    /// <summary>Longest string field in bytes (version, configuration names and values).</summary>
    public const int MaxStringBytes = 1024;

    /// <summary>Most configuration fields a file may hold.</summary>
    public const int MaxConfigurationFields = 64;

    /// <summary>Most sample ranges a file may hold (a merge of that many shards).</summary>
    public const int MaxRanges = 1 << 16;

    private const int TrailerBytes = 8 + 32;

    // Planes go through the compressor in slices of this many elements, so no span exceeds int bytes.
    private const int SliceElements = 1 << 20;

    /// <summary>
    /// Writes <paramref name="accumulation"/> to <paramref name="path"/> atomically.
    /// <paramref name="midWrite"/>, when given, runs once halfway through the temp file (tests use it
    /// to kill the process during a write).
    /// </summary>
    public static void Write(string path, Accumulation accumulation, Action? midWrite = null)
    {
        ArgumentNullException.ThrowIfNull(path);
        ArgumentNullException.ThrowIfNull(accumulation);
        RequireLittleEndian();
        AtomicFile.Write(path, file =>
        {
            using (var hashing = new HashingStream(file))
            {
                WriteHeader(hashing, accumulation);
                long payloadStart = hashing.Position;
                using (var zlib = new ZLibStream(hashing, CompressionLevel.Fastest, leaveOpen: true))
                {
                    Film film = accumulation.Film;
                    WritePlane<long>(zlib, film.CountPlane);
                    WritePlane<Int128>(zlib, film.SumPlane);
                    midWrite?.Invoke();
                    WritePlane<UInt128>(zlib, film.SquaresLowPlane);
                    WritePlane<uint>(zlib, film.SquaresHighPlane);
                    WriteWide(zlib, film.WideEntries());
                }

                Span<byte> length = stackalloc byte[8];
                BinaryPrimitives.WriteInt64LittleEndian(length, hashing.Position - payloadStart);
                hashing.Write(length);
                file.Write(hashing.Hash());
            }
        });
    }

    /// <summary>Reads the header only (no sums): what the file holds, for checks before a render.</summary>
    /// <exception cref="AccumulationFileException">The file is not a valid accumulation file.</exception>
    public static AccumulationHeader ReadHeader(string path) => Read(path, withSums: false).Header;

    /// <summary>Reads a whole file, after checking every field and the checksum.</summary>
    /// <exception cref="AccumulationFileException">The file is not a valid accumulation file.</exception>
    public static Accumulation Read(string path)
    {
        (AccumulationHeader header, Film? film) = Read(path, withSums: true);
        return new Accumulation(header.Identity, header.Ranges, film!);
    }

    private static (AccumulationHeader Header, Film? Film) Read(string path, bool withSums)
    {
        ArgumentNullException.ThrowIfNull(path);
        RequireLittleEndian();
        FileStream file = InputFile.OpenRead(path, reason => new AccumulationFileException(path, reason));

        using (file)
        {
            var reader = new FieldReader(file, path);
            AccumulationHeader header = reader.Header();
            long payloadStart = file.Position;
            if (file.Length - payloadStart < TrailerBytes)
            {
                throw new AccumulationFileException(path, $"truncated: the file ends {file.Length} bytes in, before the sums and the checksum");
            }

            file.Position = file.Length - TrailerBytes;
            long payloadLength = reader.Int64("sums length");
            if (payloadLength != file.Length - TrailerBytes - payloadStart)
            {
                throw new AccumulationFileException(path, $"truncated or padded: the trailer gives {payloadLength} bytes of sums, the file holds {file.Length - TrailerBytes - payloadStart}");
            }

            byte[] stored = new byte[32];
            file.ReadExactly(stored);
            file.Position = 0;
            byte[] actual = HashPrefix(file, file.Length - 32);
            if (!actual.AsSpan().SequenceEqual(stored))
            {
                throw new AccumulationFileException(path, $"checksum mismatch: the SHA-256 of the content is {Convert.ToHexStringLower(actual)}, the file records {Convert.ToHexStringLower(stored)} (the file is corrupted)");
            }

            if (!withSums)
            {
                return (header, null);
            }

            // Every field is checked and the content is what was written: only now allocate.
            var film = new Film(header.Identity.Width, header.Identity.Height);
            film.SetDropped(header.NonFiniteSamples);
            file.Position = payloadStart;
            using (var zlib = new ZLibStream(new BoundedStream(file, payloadLength), CompressionMode.Decompress))
            {
                try
                {
                    ReadPlane<long>(zlib, film.CountPlane, path);
                    ReadPlane<Int128>(zlib, film.SumPlane, path);
                    ReadPlane<UInt128>(zlib, film.SquaresLowPlane, path);
                    ReadPlane<uint>(zlib, film.SquaresHighPlane, path);
                    ReadWide(zlib, film, path);
                    if (zlib.ReadByte() != -1)
                    {
                        throw new AccumulationFileException(path, "the sums hold more bytes than a film of this size");
                    }
                }
                catch (InvalidDataException e)
                {
                    throw new AccumulationFileException(path, $"the compressed sums are damaged: {e.Message}", e);
                }
            }

            CheckCounts(path, header, film);
            return (header, film);
        }
    }

    private static void CheckCounts(string path, AccumulationHeader header, Film film)
    {
        // Every sample of every range either landed in its pixel or was counted as dropped.
        long samples = header.Ranges.Sum(r => (long)r.End - r.First);
        long expected = checked(samples * header.Identity.Width * header.Identity.Height);
        long counted = header.NonFiniteSamples;
        foreach (long c in film.CountPlane)
        {
            if (c < 0 || c > samples)
            {
                throw new AccumulationFileException(path, $"a pixel count of {c} is outside [0, {samples}], the samples of the file's ranges");
            }

            counted += c;
        }

        if (counted != expected)
        {
            throw new AccumulationFileException(path, $"the pixel counts and dropped samples add to {counted}, the ranges give {expected}");
        }
    }

    private static void WriteHeader(Stream s, Accumulation a)
    {
        using var w = new BinaryWriter(s, Encoding.UTF8, leaveOpen: true);
        w.Write(Magic);
        w.Write(FormatVersion);
        WriteString(w, a.Identity.Version);
        w.Write(Convert.FromHexString(a.Identity.SceneSha256));
        w.Write((ushort)a.Identity.Configuration.Count);
        foreach (KeyValuePair<string, string> field in a.Identity.Configuration)
        {
            WriteString(w, field.Key);
            WriteString(w, field.Value);
        }

        w.Write(a.Identity.Width);
        w.Write(a.Identity.Height);
        w.Write(a.Ranges.Count);
        foreach (SampleRange r in a.Ranges)
        {
            w.Write(r.First);
            w.Write(r.End);
        }

        w.Write(a.Film.NonFiniteSamples);
    }

    private static void WriteWide(Stream s, IReadOnlyList<KeyValuePair<int, WideSums>> entries)
    {
        using var w = new BinaryWriter(s, Encoding.UTF8, leaveOpen: true);
        w.Write(entries.Count);
        byte[] buffer = new byte[(WideSums.MaxSquareWords * sizeof(ulong)) + 8];
        foreach ((int pixel, WideSums sums) in entries)
        {
            w.Write(pixel);
            for (int c = 0; c < 3; c++)
            {
                WriteInteger(w, sums, c, squares: false, buffer);
                WriteInteger(w, sums, c, squares: true, buffer);
            }
        }
    }

    // The shortest signed little-endian form, as BigInteger.ToByteArray gives it, written without allocating.
    private static void WriteInteger(BinaryWriter w, WideSums sums, int c, bool squares, byte[] buffer)
    {
        int n = sums.WriteMinimal(c, squares, buffer);
        w.Write((ushort)n);
        w.Write(buffer, 0, n);
    }

    private static void ReadWide(Stream s, Film film, string path)
    {
        Span<byte> word = stackalloc byte[4];
        ReadExact(s, word, path);
        int count = BinaryPrimitives.ReadInt32LittleEndian(word);
        long pixels = (long)film.Width * film.Height;
        if (count < 0 || count > pixels)
        {
            throw new AccumulationFileException(path, $"wide pixel count {count} is outside [0, {pixels}]");
        }

        byte[] buffer = new byte[MaxWideBytes];
        int previous = -1;
        for (int k = 0; k < count; k++)
        {
            ReadExact(s, word, path);
            int pixel = BinaryPrimitives.ReadInt32LittleEndian(word);
            if (pixel <= previous || pixel >= pixels || film.CountPlane[pixel] == 0)
            {
                throw new AccumulationFileException(path, $"wide pixel {k} has index {pixel}: not after {previous}, outside the film, or a pixel with no samples");
            }

            var sum = new BigInteger[3];
            var squares = new BigInteger[3];
            for (int c = 0; c < 3; c++)
            {
                sum[c] = ReadInteger(s, buffer, path);
                squares[c] = ReadInteger(s, buffer, path);
                if (squares[c].Sign < 0)
                {
                    throw new AccumulationFileException(path, $"wide pixel {pixel} has a negative sum of squares");
                }
            }

            WideSums sums = WideSums.FromIntegers(sum, squares)
                ?? throw new AccumulationFileException(path, $"wide pixel {pixel} has sums beyond what 2^31 finite samples can reach");
            film.SetWide(pixel, sums);
            previous = pixel;
        }
    }

    private static BigInteger ReadInteger(Stream s, byte[] buffer, string path)
    {
        Span<byte> length = buffer.AsSpan(0, 2);
        ReadExact(s, length, path);
        int n = BinaryPrimitives.ReadUInt16LittleEndian(length);
        if (n == 0 || n > MaxWideBytes)
        {
            throw new AccumulationFileException(path, $"a wide sum of {n} bytes is outside [1, {MaxWideBytes}]");
        }

        Span<byte> bytes = buffer.AsSpan(0, n);
        ReadExact(s, bytes, path);
        return new BigInteger(bytes, isUnsigned: false, isBigEndian: false);
    }

    private static void ReadExact(Stream s, Span<byte> bytes, string path)
    {
        if (s.ReadAtLeast(bytes, bytes.Length, throwOnEndOfStream: false) < bytes.Length)
        {
            throw new AccumulationFileException(path, "the sums end before the film's last pixel");
        }
    }

    private static void WriteString(BinaryWriter w, string text)
    {
        byte[] bytes = Encoding.UTF8.GetBytes(text);
        if (bytes.Length > MaxStringBytes)
        {
            throw new ArgumentException($"a field of {bytes.Length} bytes is longer than the format's {MaxStringBytes}", nameof(text));
        }

        w.Write((ushort)bytes.Length);
        w.Write(bytes);
    }

    private static void WritePlane<T>(Stream s, T[] plane)
        where T : unmanaged
    {
        for (int i = 0; i < plane.Length; i += SliceElements)
        {
            s.Write(MemoryMarshal.AsBytes(plane.AsSpan(i, Math.Min(SliceElements, plane.Length - i))));
        }
    }

    private static void ReadPlane<T>(Stream s, T[] plane, string path)
        where T : unmanaged
    {
        for (int i = 0; i < plane.Length; i += SliceElements)
        {
            Span<byte> bytes = MemoryMarshal.AsBytes(plane.AsSpan(i, Math.Min(SliceElements, plane.Length - i)));
            ReadExact(s, bytes, path);
        }
    }

    private static byte[] HashPrefix(Stream s, long length)
    {
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        byte[] buffer = new byte[1 << 16];
        long left = length;
        while (left > 0)
        {
            int n = s.Read(buffer, 0, (int)Math.Min(buffer.Length, left));
            if (n == 0)
            {
                throw new EndOfStreamException();
            }

            hash.AppendData(buffer, 0, n);
            left -= n;
        }

        return hash.GetHashAndReset();
    }

    private static void RequireLittleEndian()
    {
        if (!BitConverter.IsLittleEndian)
        {
            // The planes are written as they lie in memory; the format is little-endian.
            throw new PlatformNotSupportedException("the accumulation file is little-endian; this machine is not");
        }
    }

    /// <summary>Reads the header's fields one at a time, each checked against the file's remaining length and the format's limits.</summary>
    private sealed class FieldReader(FileStream file, string path)
    {
        private readonly byte[] _buffer = new byte[MaxStringBytes];

        public AccumulationHeader Header()
        {
            Span<byte> magic = Bytes(8, "magic");
            if (!magic.SequenceEqual(Magic))
            {
                throw new AccumulationFileException(path, "not a PathBench accumulation file (the first bytes are not the format's magic)");
            }

            uint format = UInt32("format version");
            if (format == 1)
            {
                // Version 1 dropped sample values of 2^32 or more (counting them) and had no wide sums: its image cannot be completed exactly.
                throw new AccumulationFileException(path, $"format version 1 (written by a PathBench that dropped sample values of 2^32 or more); this PathBench reads version {FormatVersion}: render it again");
            }

            if (format != FormatVersion)
            {
                throw new AccumulationFileException(path, $"format version {format}; this PathBench reads version {FormatVersion}");
            }

            string version = String("PathBench version");
            string sha = Convert.ToHexStringLower(Bytes(32, "scene SHA-256"));
            int fields = UInt16("configuration field count");
            if (fields > MaxConfigurationFields)
            {
                throw Bad($"configuration field count {fields} is more than {MaxConfigurationFields}");
            }

            var configuration = new List<KeyValuePair<string, string>>(fields);
            for (int i = 0; i < fields; i++)
            {
                string name = String("configuration field name");
                configuration.Add(new(name, String($"configuration field '{name}'")));
            }

            int width = Int32("width");
            int height = Int32("height");
            if (width <= 0 || height <= 0 || Film.RequiredBytes(width, height) > Film.MaxBytes)
            {
                throw Bad(string.Create(CultureInfo.InvariantCulture, $"width×height {width}×{height} is not a film size this PathBench can hold (positive, at most {Film.MaxBytes >> 30} GiB of sums)"));
            }

            int count = Int32("range count");
            if (count <= 0 || count > MaxRanges)
            {
                throw Bad($"range count {count} is outside [1, {MaxRanges}]");
            }

            var ranges = new List<SampleRange>(count);
            for (int i = 0; i < count; i++)
            {
                int first = Int32("range start"), end = Int32("range end");
                if (first < 0 || end <= first || (i > 0 && first < ranges[^1].End))
                {
                    throw Bad($"range {i} [{first}, {end}) is empty, negative or not after the one before it");
                }

                ranges.Add(new SampleRange(first, end));
            }

            long nonFinite = Int64("non-finite count");
            if (nonFinite < 0)
            {
                throw Bad($"negative non-finite sample count {nonFinite}");
            }

            return new AccumulationHeader(new RenderIdentity(version, sha, configuration, width, height), ranges, nonFinite);
        }

        public long Int64(string field) => BinaryPrimitives.ReadInt64LittleEndian(Bytes(8, field));

        private int Int32(string field) => BinaryPrimitives.ReadInt32LittleEndian(Bytes(4, field));

        private uint UInt32(string field) => BinaryPrimitives.ReadUInt32LittleEndian(Bytes(4, field));

        private ushort UInt16(string field) => BinaryPrimitives.ReadUInt16LittleEndian(Bytes(2, field));

        private string String(string field)
        {
            int length = UInt16(field + " length");
            if (length > MaxStringBytes)
            {
                throw Bad($"{field} is {length} bytes, more than {MaxStringBytes}");
            }

            try
            {
                return new UTF8Encoding(false, throwOnInvalidBytes: true).GetString(Bytes(length, field));
            }
            catch (DecoderFallbackException)
            {
                throw Bad($"{field} is not valid UTF-8");
            }
        }

        private Span<byte> Bytes(int n, string field)
        {
            if (file.Length - file.Position < n)
            {
                throw new AccumulationFileException(path, $"truncated: the file ends at byte {file.Length}, inside the {field}");
            }

            Span<byte> span = _buffer.AsSpan(0, n);
            file.ReadExactly(span);
            return span;
        }

        private AccumulationFileException Bad(string what) => new(path, what);
    }

    /// <summary>Passes writes on to the file and hashes them, so the checksum needs no second pass.</summary>
    private sealed class HashingStream(Stream inner) : Stream
    {
        private readonly IncrementalHash _hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        private long _position;

        public override bool CanRead => false;

        public override bool CanSeek => false;

        public override bool CanWrite => true;

        public override long Length => _position;

        public override long Position { get => _position; set => throw new NotSupportedException(); }

        public byte[] Hash() => _hash.GetHashAndReset();

        public override void Write(byte[] buffer, int offset, int count) => Write(buffer.AsSpan(offset, count));

        public override void Write(ReadOnlySpan<byte> buffer)
        {
            _hash.AppendData(buffer);
            inner.Write(buffer);
            _position += buffer.Length;
        }

        public override void Flush() => inner.Flush();

        public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        protected override void Dispose(bool disposing)
        {
            if (disposing)
            {
                _hash.Dispose();
            }

            base.Dispose(disposing);
        }
    }

    /// <summary>A read-only window of <paramref name="length"/> bytes from the current position, so the decompressor never reads the trailer.</summary>
    private sealed class BoundedStream(Stream inner, long length) : Stream
    {
        private long _left = length;

        public override bool CanRead => true;

        public override bool CanSeek => false;

        public override bool CanWrite => false;

        public override long Length => throw new NotSupportedException();

        public override long Position { get => throw new NotSupportedException(); set => throw new NotSupportedException(); }

        public override int Read(byte[] buffer, int offset, int count) => Read(buffer.AsSpan(offset, count));

        public override int Read(Span<byte> buffer)
        {
            int n = inner.Read(buffer[..(int)Math.Min(buffer.Length, _left)]);
            _left -= n;
            return n;
        }

        public override void Flush() { }

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();

        public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();
    }
}
