using System.Buffers.Binary;
using System.Globalization;
using System.Runtime.InteropServices;
using System.Security.Cryptography;
using System.Text;
using PathBench.Io;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Precomputed points read from a file, so that a sampler written in any language can be measured:
/// <c>--generator file:POINTS.csv</c>. Point <c>i</c> of every pixel is row <c>i</c> of the file and
/// dimension <c>d</c> its column <c>d</c>; the same set serves every pixel, decorrelated by the
/// per-pixel randomization (Cranley–Patterson rotation by default). Layouts (CSV, and a versioned
/// binary one for large sets) are specified in <c>tools/point-files.md</c>.
/// </summary>
public static class PointFile
{
    /// <summary>The first eight bytes of a binary point file.</summary>
    public static ReadOnlySpan<byte> Magic => "PBPOINTS"u8;

    /// <summary>The binary layout version this reader understands.</summary>
    public const uint Version = 1;

    /// <summary>Bytes before the values of a binary file: magic, version, dims, count.</summary>
    public const int HeaderBytes = 24;

    /// <summary>The most values (points × dimensions) a file may hold: 2^27 doubles, 1 GiB in memory.</summary>
    public const long MaxValues = 1L << 27;

    /// <summary>The largest CSV file read (text costs about three times its values' memory while parsed; larger sets use the binary layout).</summary>
    public const long MaxCsvBytes = 256L << 20;

    /// <summary>The generator <c>file:PATH</c>: reads and checks the whole file.</summary>
    public static GeneratorInfo Generator(string name)
    {
        ArgumentNullException.ThrowIfNull(name);
        string path = name.StartsWith(SamplerCatalog.FilePrefix, StringComparison.Ordinal) ? name[SamplerCatalog.FilePrefix.Length..] : name;
        if (path.Length == 0)
        {
            throw new SamplerSpecException($"'{name}': a point-file generator is {SamplerCatalog.FilePrefix}PATH, with the file's path");
        }

        PointSet set = Read(path);
        return new GeneratorInfo(
            name,
            FormattableString.Invariant($"points read from {path}: {set.Count} points of {set.Dims} dimensions, the same set in every pixel (sha256 {set.Sha256[..16]}…)"),
            false, set.Dims, [Randomization.None, Randomization.CranleyPatterson, Randomization.DigitalShift], Randomization.CranleyPatterson,
            "a file is only its points: the nested scramblings need the construction behind them",
            spec => new PointFileSampler(spec, set))
        {
            MaxPoints = set.Count,
            Origin = "point file " + path,
            Provenance = "sha256:" + set.Sha256,
        };
    }

    /// <summary>Reads a point file, binary when it starts with <see cref="Magic"/>, CSV otherwise; every value checked.</summary>
    public static PointSet Read(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        if (Directory.Exists(path))
        {
            throw new SamplerSpecException($"{path}: is a folder, not a point file");
        }

        if (!File.Exists(path))
        {
            throw new SamplerSpecException($"{path}: no such point file");
        }

        try
        {
            // Through the I/O layer: a pipe or device is refused before it is opened (it would block).
            using FileStream stream = InputFile.OpenRead(path, reason => new SamplerSpecException($"{path}: {reason}"));
            Span<byte> head = stackalloc byte[HeaderBytes];
            int got = stream.ReadAtLeast(head, HeaderBytes, throwOnEndOfStream: false);
            stream.Position = 0;
            return got >= Magic.Length && head[..Magic.Length].SequenceEqual(Magic)
                ? ReadBinary(path, stream, head[..got])
                : ReadCsv(path, stream);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new SamplerSpecException($"{path}: cannot read: {e.Message}", e);
        }
    }

    private static PointSet ReadBinary(string path, FileStream stream, ReadOnlySpan<byte> head)
    {
        if (head.Length < HeaderBytes)
        {
            throw new SamplerSpecException(FormattableString.Invariant($"{path}: binary point file cut short in its header ({head.Length} of {HeaderBytes} bytes)"));
        }

        uint version = BinaryPrimitives.ReadUInt32LittleEndian(head[8..]);
        if (version != Version)
        {
            throw new SamplerSpecException(FormattableString.Invariant($"{path}: byte 8: binary point file version {version}; this PathBench reads version {Version}"));
        }

        uint dims = BinaryPrimitives.ReadUInt32LittleEndian(head[12..]);
        ulong count = BinaryPrimitives.ReadUInt64LittleEndian(head[16..]);
        if (dims < 1)
        {
            throw new SamplerSpecException($"{path}: byte 12: the header declares 0 dimensions");
        }

        if (count < 1)
        {
            throw new SamplerSpecException($"{path}: byte 16: the header declares 0 points");
        }

        // Sizes checked before anything is allocated: the product cannot overflow once each factor is bounded.
        if (count > int.MaxValue || dims > MaxValues || count * dims > (ulong)MaxValues)
        {
            throw new SamplerSpecException(FormattableString.Invariant(
                $"{path}: byte 12: the header declares {count} points of {dims} dimensions; at most {MaxValues} values ({int.MaxValue} points) are read"));
        }

        long values = (long)count * dims;
        long expected = HeaderBytes + values * sizeof(double);
        if (stream.Length != expected)
        {
            throw new SamplerSpecException(FormattableString.Invariant(
                $"{path}: the header declares {count} points of {dims} dimensions, {expected} bytes in all; the file has {stream.Length}"));
        }

        var data = new double[values];
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        stream.Position = 0;
        Span<byte> header = stackalloc byte[HeaderBytes];
        stream.ReadExactly(header);
        hash.AppendData(header);
        Span<byte> bytes = MemoryMarshal.AsBytes(data.AsSpan());
        stream.ReadExactly(bytes);
        hash.AppendData(bytes);
        if (!BitConverter.IsLittleEndian)
        {
            Span<ulong> words = MemoryMarshal.Cast<double, ulong>(data.AsSpan());
            BinaryPrimitives.ReverseEndianness(words, words);
        }

        for (long v = 0; v < values; v++)
        {
            if (Problem(data[v]) is { } problem)
            {
                long offset = HeaderBytes + v * sizeof(double);
                throw new SamplerSpecException(FormattableString.Invariant(
                    $"{path}: byte {offset} (point {v / dims + 1}, dimension {v % dims + 1}): {problem}"));
            }
        }

        return new PointSet((int)count, (int)dims, data, Convert.ToHexStringLower(hash.GetHashAndReset()));
    }

    private static PointSet ReadCsv(string path, FileStream stream)
    {
        if (stream.Length > MaxCsvBytes)
        {
            throw new SamplerSpecException(FormattableString.Invariant(
                $"{path}: {stream.Length} bytes of CSV; at most {MaxCsvBytes} are read as text, write larger sets in the binary layout (tools/point-files.md)"));
        }

        byte[] content = new byte[stream.Length];
        stream.ReadExactly(content);
        string sha = Convert.ToHexStringLower(SHA256.HashData(content));
        var values = new List<double>();
        int dims = 0, firstLine = 0, line = 0;
        using var reader = new StreamReader(new MemoryStream(content), new UTF8Encoding(false, true), detectEncodingFromByteOrderMarks: false);
        string? text;
        try
        {
            text = reader.ReadLine();
            while (text is not null)
            {
                line++;
                if (line == 1 && text.Length > 0 && text[0] == '\uFEFF')
                {
                    text = text[1..];
                }

                if (text.Length > 0 && !text.StartsWith('#') && !string.IsNullOrWhiteSpace(text))
                {
                    int fields = ParseLine(path, line, text, values);
                    if (dims == 0)
                    {
                        dims = fields;
                        firstLine = line;
                    }
                    else if (fields != dims)
                    {
                        throw new SamplerSpecException(FormattableString.Invariant(
                            $"{path}:{line}:1: {fields} values on this line, {dims} on line {firstLine}: every point has the same number of dimensions"));
                    }

                    if (values.Count > MaxValues)
                    {
                        throw new SamplerSpecException(FormattableString.Invariant($"{path}:{line}:1: more than {MaxValues} values; at most that many are read"));
                    }
                }

                text = reader.ReadLine();
            }
        }
        catch (DecoderFallbackException e)
        {
            throw new SamplerSpecException(FormattableString.Invariant($"{path}:{line + 1}: not UTF-8 text ({e.Message.ReplaceLineEndings(" ")}); a binary point file starts with PBPOINTS"), e);
        }

        if (dims == 0)
        {
            throw new SamplerSpecException($"{path}: no points (one point per line, comma-separated values in [0, 1); '#' starts a comment line)");
        }

        return new PointSet(values.Count / dims, dims, [.. values], sha);
    }

    /// <summary>Parses one line's fields into <paramref name="values"/>; returns how many there were.</summary>
    private static int ParseLine(string path, int line, string text, List<double> values)
    {
        int field = 0, start = 0;
        while (true)
        {
            int comma = text.IndexOf(',', start);
            int end = comma < 0 ? text.Length : comma;
            field++;
            ReadOnlySpan<char> raw = text.AsSpan(start, end - start);
            ReadOnlySpan<char> token = raw.Trim();
            int column = start + (raw.Length - raw.TrimStart().Length) + 1;
            string where = FormattableString.Invariant($"{path}:{line}:{column}: field {field}");
            if (token.IsEmpty)
            {
                throw new SamplerSpecException($"{where}: empty value");
            }

            if (!double.TryParse(token, NumberStyles.Float, CultureInfo.InvariantCulture, out double v))
            {
                throw new SamplerSpecException($"{where}: '{Shown(token)}' is not a number");
            }

            if (Problem(v) is { } problem)
            {
                throw new SamplerSpecException($"{where}: '{Shown(token)}': {problem}");
            }

            values.Add(v);
            if (comma < 0)
            {
                return field;
            }

            start = comma + 1;
        }
    }

    private static string? Problem(double v) =>
        double.IsNaN(v) ? "NaN is not a coordinate"
        : !double.IsFinite(v) ? "not a finite number"
        : v < 0 || v >= 1 ? FormattableString.Invariant($"{v:R} is outside [0, 1)")
        : null;

    private static string Shown(ReadOnlySpan<char> token) => token.Length <= 40 ? token.ToString() : string.Concat(token[..40], "…");
}

/// <summary>Points read from a file: <see cref="Count"/> rows of <see cref="Dims"/> values, row-major.</summary>
public sealed class PointSet
{
    private readonly double[] _values;

    /// <summary>Wraps values already checked to lie in [0, 1).</summary>
    internal PointSet(int count, int dims, double[] values, string sha256)
    {
        Count = count;
        Dims = dims;
        _values = values;
        Sha256 = sha256;
    }

    /// <summary>Number of points.</summary>
    public int Count { get; }

    /// <summary>Dimensions per point.</summary>
    public int Dims { get; }

    /// <summary>The SHA-256 of the file's bytes, lower-case hex.</summary>
    public string Sha256 { get; }

    /// <summary>Coordinate <paramref name="dimension"/> of point <paramref name="index"/>.</summary>
    public double this[uint index, int dimension] => _values[(long)index * Dims + dimension];
}

/// <summary>
/// The generator over a <see cref="PointSet"/>: point <c>i</c> of every pixel is the file's row
/// <c>i</c>, randomized per pixel and dimension by <see cref="PointRandomizations"/>.
/// </summary>
public sealed class PointFileSampler : PointSampler
{
    private readonly PointSet _set;

    /// <summary>Creates the sampler; the catalog has checked the count and dimensions against the file.</summary>
    public PointFileSampler(SamplerSpec spec, PointSet set) : base(spec)
    {
        ArgumentNullException.ThrowIfNull(set);
        _set = set;
    }

    /// <inheritdoc/>
    public override int MaxDimensions => _set.Dims;

    /// <inheritdoc/>
    public override double Sample(ulong pixel, uint index, int dimension)
    {
        if (index >= (uint)_set.Count || (uint)dimension >= (uint)_set.Dims)
        {
            throw new SamplerSpecException(FormattableString.Invariant(
                $"'{Spec.Generator}' holds {_set.Count} points of {_set.Dims} dimensions; point {index + 1}, dimension {dimension + 1} was asked for"));
        }

        return PointRandomizations.Apply(Spec.Randomize, _set[index, dimension], pixel, dimension);
    }
}
