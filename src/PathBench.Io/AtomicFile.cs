using System.Text;

namespace PathBench.Io;

/// <summary>
/// The one way PathBench writes an output (images, sidecars, heat maps, reports, CSV/JSON, JUnit,
/// accumulation files): into a temporary file in the same folder, flushed to the disk, then renamed
/// over the target. A signal, a full disk or an exception mid-write leaves the previous file of
/// that name whole and no temporary file behind; a reader never sees a torn file. A hard kill
/// (SIGKILL) can leave the temporary file; the next write of the same target removes it once its
/// process is gone (<see cref="RemoveStaleTemps"/>).
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

        RemoveStaleTemps(full);
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

    /// <summary>
    /// Removes the temporary files an earlier write of <paramref name="full"/> left behind when its
    /// process was killed outright (SIGKILL, a power cut: no <c>finally</c> runs): those named for this
    /// target whose process id belongs to no running process. A temporary file of a live process, this
    /// one included (another thread may be writing the same name), is never touched; a process id that
    /// a new process has since taken keeps its file until that process ends too, which is safe.
    /// </summary>
    public static void RemoveStaleTemps(string full)
    {
        string folder = Path.GetDirectoryName(full) ?? ".";
        string name = Path.GetFileName(full);
        string[] candidates;
        try
        {
            candidates = Directory.GetFiles(folder, "." + name + ".*.tmp");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            return; // The write itself will report an unusable folder.
        }

        foreach (string candidate in candidates)
        {
            if (TempOwner(Path.GetFileName(candidate), name) is int pid && pid != Environment.ProcessId && !ProcessIsAlive(pid))
            {
                try
                {
                    File.Delete(candidate);
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    // Another writer's cleanup got there first, or it is not ours to remove: harmless.
                }
            }
        }
    }

    /// <summary>The process id in a temporary file name of this class for target <paramref name="targetName"/> (".NAME.PID.N.tmp"); null for any other name.</summary>
    public static int? TempOwner(string fileName, string targetName)
    {
        ArgumentNullException.ThrowIfNull(fileName);
        ArgumentNullException.ThrowIfNull(targetName);
        string prefix = "." + targetName + ".";
        if (!fileName.StartsWith(prefix, StringComparison.Ordinal) || !fileName.EndsWith(".tmp", StringComparison.Ordinal))
        {
            return null;
        }

        string[] middle = fileName[prefix.Length..^4].Split('.');
        return middle.Length == 2 && middle[1].Length > 0 && middle[1].All(char.IsAsciiDigit)
            && int.TryParse(middle[0], System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out int pid) && pid > 0
            ? pid
            : null;
    }

    /// <summary>Whether a process with id <paramref name="pid"/> exists (on Linux: /proc/PID; elsewhere the process table).</summary>
    public static bool ProcessIsAlive(int pid)
    {
        if (OperatingSystem.IsLinux())
        {
            // A zombie (exited, not yet reaped) still has its /proc entry and counts as alive: safe.
            return Directory.Exists(FormattableString.Invariant($"/proc/{pid}"));
        }

        try
        {
            using var process = System.Diagnostics.Process.GetProcessById(pid);
            return !process.HasExited;
        }
        catch (Exception e) when (e is ArgumentException or InvalidOperationException)
        {
            return false;
        }
    }

    /// <summary>A hidden name in the target's folder, unique within this process and across processes (the id).</summary>
    private static string TempPath(string full) =>
        Path.Combine(Path.GetDirectoryName(full) ?? ".", FormattableString.Invariant($".{Path.GetFileName(full)}.{Environment.ProcessId}.{Interlocked.Increment(ref counter)}.tmp"));
}
