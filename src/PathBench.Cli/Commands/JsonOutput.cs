using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;

namespace PathBench.Cli.Commands;

/// <summary>
/// Machine-readable output: indented UTF-8 JSON with stable snake_case field names; non-finite
/// numbers become null. Relaxed escaping keeps paths and versions readable (a file, not HTML).
/// The text goes to the writer as the body flushes it, so a long document (<c>points --format
/// json</c>) is never held whole.
/// </summary>
internal static class JsonOutput
{
    /// <summary>The pending bytes at which a body that writes many values calls <see cref="Utf8JsonWriter.Flush"/> (common practice: a pipe-sized chunk).</summary>
    public const int FlushBytes = 1 << 16;

    public static void Write(TextWriter output, Action<Utf8JsonWriter> body)
    {
        using var sink = new TextWriterStream(output);
        using var json = new Utf8JsonWriter(sink, new JsonWriterOptions { Indented = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping });
        try
        {
            body(json);
            json.Flush();
        }
        finally
        {
            // After a failure the unflushed rest is dropped, not written as a torn document by Dispose.
            json.Reset();
        }

        output.WriteLine();
    }

    /// <summary>A write-only stream that decodes UTF-8 onto a text writer (a character split across two writes is carried over).</summary>
    private sealed class TextWriterStream(TextWriter output) : Stream
    {
        private readonly Decoder _decoder = new UTF8Encoding(false, throwOnInvalidBytes: true).GetDecoder();
        private char[] _chars = new char[1024];

        public override bool CanRead => false;

        public override bool CanSeek => false;

        public override bool CanWrite => true;

        public override long Length => throw new NotSupportedException();

        public override long Position { get => throw new NotSupportedException(); set => throw new NotSupportedException(); }

        public override void Write(byte[] buffer, int offset, int count) => Write(buffer.AsSpan(offset, count));

        public override void Write(ReadOnlySpan<byte> buffer)
        {
            int needed = _decoder.GetCharCount(buffer, flush: false);
            if (needed > _chars.Length)
            {
                _chars = new char[needed];
            }

            int n = _decoder.GetChars(buffer, _chars, flush: false);
            output.Write(_chars, 0, n);
        }

        public override void Flush() => output.Flush();

        public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();

        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();

        public override void SetLength(long value) => throw new NotSupportedException();
    }

    public static void Number(this Utf8JsonWriter json, string name, double value)
    {
        if (double.IsFinite(value))
        {
            json.WriteNumber(name, value);
        }
        else
        {
            json.WriteNull(name);
        }
    }

    public static void NumberValue(this Utf8JsonWriter json, double value)
    {
        if (double.IsFinite(value))
        {
            json.WriteNumberValue(value);
        }
        else
        {
            json.WriteNullValue();
        }
    }
}
