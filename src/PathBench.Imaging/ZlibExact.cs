using System.IO.Compression;

namespace PathBench.Imaging;

/// <summary>
/// zlib inflation into a buffer of the exact size a header implies: a stream that ends early or
/// would give more is an error, and never more than one byte beyond the buffer is inflated.
/// </summary>
internal static class ZlibExact
{
    /// <summary>Inflates the zlib stream in <paramref name="compressed"/> into exactly <paramref name="target"/>.</summary>
    /// <exception cref="ZlibDataException">The stream is corrupt, short, or inflates to more.</exception>
    public static void Inflate(Stream compressed, Span<byte> target)
    {
        try
        {
            using var z = new ZLibStream(compressed, CompressionMode.Decompress, leaveOpen: true);
            int total = 0;
            while (total < target.Length)
            {
                int n = z.Read(target[total..]);
                if (n == 0)
                {
                    throw new ZlibDataException(FormattableString.Invariant($"zlib data ends after {total} of {target.Length} bytes"));
                }

                total += n;
            }

            // A stream that inflates to more than the header implies is as wrong as a short one;
            // reading on to its end also makes the inflater check the Adler-32 trailer (RFC 1950).
            Span<byte> extra = stackalloc byte[1];
            if (z.Read(extra) != 0)
            {
                throw new ZlibDataException(FormattableString.Invariant($"zlib data inflates to more than the {target.Length} bytes expected"));
            }
        }
        catch (InvalidDataException e)
        {
            throw new ZlibDataException($"bad zlib stream: {e.Message}", e);
        }
    }
}

/// <summary>A zlib stream that is corrupt or does not inflate to the expected size; the message says which.</summary>
internal sealed class ZlibDataException : Exception
{
    /// <summary>Creates the exception with what was wrong.</summary>
    public ZlibDataException(string message) : base(message) { }

    /// <summary>Creates the exception with what was wrong and its cause.</summary>
    public ZlibDataException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates an exception with no message.</summary>
    public ZlibDataException() { }
}
