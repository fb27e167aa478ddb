namespace PathBench.Imaging;

/// <summary>Exact reads that turn a short stream into a one-line "truncated" error.</summary>
internal static class StreamReading
{
    /// <summary>Fills <paramref name="buffer"/> or throws naming what was being read.</summary>
    public static void ReadExactly(Stream stream, Span<byte> buffer, string fileName, string what)
    {
        int total = 0;
        while (total < buffer.Length)
        {
            int n = stream.Read(buffer[total..]);
            if (n == 0)
            {
                throw new ImageFileException(
                    fileName, FormattableString.Invariant($"truncated: file ends inside {what} ({total} of {buffer.Length} bytes)"));
            }

            total += n;
        }
    }

    /// <summary>The stream's length, which every reader needs to check a header against.</summary>
    public static long RequireLength(Stream stream, string fileName)
    {
        if (!stream.CanSeek)
        {
            throw new ArgumentException($"{fileName}: the image readers need a seekable stream to check sizes against the file length", nameof(stream));
        }

        return stream.Length;
    }
}
