using System.Text;
using System.Text.Encodings.Web;
using System.Text.Json;

namespace PathBench.Cli.Commands;

/// <summary>
/// Machine-readable output: indented UTF-8 JSON with stable snake_case field names; non-finite
/// numbers become null. Relaxed escaping keeps paths and versions readable (a file, not HTML).
/// </summary>
internal static class JsonOutput
{
    public static void Write(TextWriter output, Action<Utf8JsonWriter> body)
    {
        using var buffer = new MemoryStream();
        using (var json = new Utf8JsonWriter(buffer, new JsonWriterOptions { Indented = true, Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping }))
        {
            body(json);
        }

        output.WriteLine(Encoding.UTF8.GetString(buffer.ToArray()));
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
