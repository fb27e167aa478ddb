using System.Text;

namespace PathBench.Io;

/// <summary>
/// The one way PathBench writes an output (images, sidecars, heat maps, reports, CSV/JSON, JUnit,
/// accumulation files): into a temporary file in the same folder, flushed to the disk, then renamed
/// over the target. A signal, a full disk or an exception mid-write leaves the previous file of
/// that name whole and no temporary file behind; a reader never sees a torn file.
/// </summary>
public static class AtomicFile
{
    /// <summary>
    /// Test hook: when set to a file name, writing a file of that name fails after its body is
    /// written to the temporary file, as a full disk would, so tests can see what a failed write leaves.
    /// </summary>
    public const string FailVariable = "PATHBENCH_TEST_FAIL_WRITE";

    private const int BufferSize = 1 << 16;
    private static int counter;

    /// <summary>Writes <paramref name="path"/> from <paramref name="body"/> atomically.</summary>
    /// <exception cref="IOException">The folder cannot hold the file, the target is not a regular file, or the write failed; the target is unchanged.</exception>
    public static void Write(string path, Action<Stream> body)
    {
        ArgumentNullException.ThrowIfNull(body);
        string full = Path.GetFullPath(path);
        FileKind kind = FileStatus.Of(full).Kind;
        if (kind is not (FileKind.Regular or FileKind.Missing))
        {
            throw new IOException($"the output is {FileStatus.Describe(kind)}, not a regular file to replace");
        }

        string temp = TempPath(full);
        try
        {
            using (var stream = new FileStream(temp, FileMode.CreateNew, FileAccess.ReadWrite, FileShare.None, BufferSize))
            {
                body(stream);
                stream.Flush(flushToDisk: true);
            }

            if (Environment.GetEnvironmentVariable(FailVariable) is { Length: > 0 } failing && failing == Path.GetFileName(full))
            {
                throw new IOException($"injected write failure ({FailVariable})");
            }

            File.Move(temp, full, overwrite: true);
        }
        finally
        {
            // Gone after a successful move; after a failure the partial file is removed.
            try
            {
                File.Delete(temp);
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                // The failure that brought us here is the one to report.
            }
        }
    }

    /// <summary>Writes UTF-8 text (no byte-order mark) atomically.</summary>
    public static void WriteText(string path, Action<TextWriter> body)
    {
        ArgumentNullException.ThrowIfNull(body);
        Write(path, stream =>
        {
            using var writer = new StreamWriter(stream, new UTF8Encoding(false), BufferSize, leaveOpen: true);
            body(writer);
        });
    }

    /// <summary>Writes <paramref name="text"/> as UTF-8 (no byte-order mark) atomically.</summary>
    public static void WriteText(string path, string text) => WriteText(path, w => w.Write(text));

    /// <summary>Writes <paramref name="bytes"/> atomically.</summary>
    public static void WriteBytes(string path, ReadOnlySpan<byte> bytes)
    {
        byte[] copy = bytes.ToArray();
        Write(path, s => s.Write(copy));
    }

    /// <summary>True for the name of a temporary file this class writes (dot, name, dot, process id, dot, counter, ".tmp").</summary>
    public static bool IsTempName(string fileName) => fileName.StartsWith('.') && fileName.EndsWith(".tmp", StringComparison.Ordinal);

    /// <summary>A hidden name in the target's folder, unique within this process and across processes (the id).</summary>
    private static string TempPath(string full) =>
        Path.Combine(Path.GetDirectoryName(full) ?? ".", FormattableString.Invariant($".{Path.GetFileName(full)}.{Environment.ProcessId}.{Interlocked.Increment(ref counter)}.tmp"));
}
