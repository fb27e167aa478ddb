using System.Text;

namespace PathBench.Io;

/// <summary>
/// The one way PathBench opens a file it reads (scenes, meshes, images, suites, studies, batches,
/// accumulation files, sidecars): the file's type is checked <em>before</em> it is opened, because
/// opening a FIFO that has no writer never returns, and a device or socket has no length to check a
/// header against. Every failure is one line built by the caller's <c>fail</c>, so each library
/// keeps its own exception type.
/// </summary>
public static class InputFile
{
    private const int BufferSize = 1 << 16;

    /// <summary>Why <paramref name="path"/> cannot be read as a file, or null when it is a regular file (or missing: the open says so).</summary>
    public static string? Refusal(string path)
    {
        FileKind kind = FileStatus.Of(path).Kind;
        return kind is FileKind.Regular or FileKind.Missing
            ? null
            : $"not a regular file but {FileStatus.Describe(kind)}; only regular files are read (save the data to a file first)";
    }

    /// <summary>Opens a regular file for reading; anything else, or an I/O failure, becomes <paramref name="fail"/>(reason).</summary>
    public static FileStream OpenRead(string path, Func<string, Exception> fail)
    {
        ArgumentNullException.ThrowIfNull(fail);
        if (Refusal(path) is { } refusal)
        {
            throw fail(refusal);
        }

        FileStream stream;
        try
        {
            stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.Read, BufferSize);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or ArgumentException or NotSupportedException)
        {
            throw fail($"cannot open: {e.Message}");
        }

        // The type may change between the check and the open (a file swapped for a pipe): still refused.
        if (!stream.CanSeek)
        {
            stream.Dispose();
            throw fail("not a regular file; only regular files are read (save the data to a file first)");
        }

        return stream;
    }

    /// <summary>Reads a whole regular file, refusing one longer than <paramref name="maxBytes"/>, or whose bytes and what is built from them (3 bytes a byte) exceed the memory budget, before reading it.</summary>
    public static byte[] ReadAllBytes(string path, Func<string, Exception> fail, long maxBytes = int.MaxValue)
    {
        using FileStream stream = OpenRead(path, fail);
        long length = stream.Length;
        if (length > Math.Min(maxBytes, Array.MaxLength))
        {
            throw fail(FormattableString.Invariant($"{length} bytes is above the limit of {Math.Min(maxBytes, Array.MaxLength)} bytes for this kind of file"));
        }

        // The bytes, and what a reader builds from them (a JSON document, UTF-16 text: about twice
        // as much again; common practice), against the budget before anything is read.
        try
        {
            MemoryBudget.Current.Require((Int128)length * 3, FormattableString.Invariant($"reading the {length} bytes of the file"));
        }
        catch (MemoryBudgetException e)
        {
            throw fail(e.Message);
        }

        byte[] bytes = new byte[length];
        try
        {
            stream.ReadExactly(bytes);
        }
        catch (Exception e) when (e is IOException)
        {
            throw fail($"cannot read: {e.Message}");
        }

        return bytes;
    }

    /// <summary>Reads a whole regular file as UTF-8 text (a byte-order mark is skipped); invalid UTF-8 is refused.</summary>
    public static string ReadAllText(string path, Func<string, Exception> fail, long maxBytes = int.MaxValue)
    {
        byte[] bytes = ReadAllBytes(path, fail, maxBytes);
        ReadOnlySpan<byte> body = bytes.AsSpan().StartsWith((ReadOnlySpan<byte>)[0xEF, 0xBB, 0xBF]) ? bytes.AsSpan(3) : bytes;
        try
        {
            return Strict.GetString(body);
        }
        catch (DecoderFallbackException)
        {
            throw fail("not UTF-8 text");
        }
    }

    private static readonly UTF8Encoding Strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);
}
