using System.Globalization;
using System.IO.Compression;
using System.Net;
using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using PathBench.Imaging;
using PathBench.Io;

namespace PathBench.Analysis.Report;

/// <summary>
/// Builds <c>report.html</c> from a study's outputs alone (<c>summary.json</c>, the plots' SVG
/// files and the float images in <c>images/</c>), so <c>pathbench report DIR</c> rebuilds it
/// without rendering. The page is one file that opens from disk with no network: styles, script,
/// plots (inline SVG) and images are embedded. Each image's float data is stored once, as its
/// 32-bit values split into four byte planes (which deflate well: the sign and exponent bytes
/// repeat), compressed with deflate (zlib) and base64-encoded; the page inflates them with the
/// browser's DecompressionStream and tone-maps them itself, so exposure and tone apply to the
/// exact values, and the pixel probe reads the very floats the EXR files hold.
/// </summary>
public static partial class StudyReport
{
    /// <summary>The largest image the report embeds (pixels), so a page stays small enough to open and to mail.</summary>
    public const long MaxPixels = 4L << 20;

    private static readonly string[] PlotFiles = ["mse-vs-spp.svg", "efficiency.svg", "mse-at-equal-time.svg", "win-map.svg"];

    /// <summary>Writes <c>DIR/report.html</c> and returns its path.</summary>
    /// <exception cref="ImageFileException">A file of the study is missing or unreadable (named in the message).</exception>
    public static string Write(string directory)
    {
        ArgumentNullException.ThrowIfNull(directory);
        string summaryPath = Path.Combine(directory, "summary.json");
        if (!File.Exists(summaryPath))
        {
            throw new ImageFileException(summaryPath, "not found: run 'pathbench study' into this folder first");
        }

        byte[] summaryBytes = InputFile.ReadAllBytes(summaryPath, reason => new ImageFileException(summaryPath, reason));
        using JsonDocument summary = ParseSummary(summaryPath, summaryBytes);
        try
        {
            return Write(directory, summary.RootElement, summaryPath);
        }
        catch (Exception e) when (e is KeyNotFoundException or InvalidOperationException or FormatException)
        {
            // A summary.json of another version or edited by hand: say so rather than fail obscurely.
            throw new ImageFileException(summaryPath, $"is not a study summary this version can read: {e.Message}");
        }
    }

    private static string Write(string directory, JsonElement root, string summaryPath)
    {
        int width = Int(root, "width", summaryPath);
        int height = Int(root, "height", summaryPath);
        if ((long)width * height > MaxPixels)
        {
            throw new ImageFileException(summaryPath, FormattableString.Invariant($"a {width}x{height} study is above the {MaxPixels} pixels a report embeds"));
        }

        var html = new StringBuilder(1 << 20);
        html.Append(Template.Head(Text(root, "scene")));
        html.Append(Header(root));
        html.Append(Template.SummaryTable(root));
        html.Append("<section id=\"plots\"><h2>Plots</h2>\n");
        for (int i = 0; i < PlotFiles.Length; i++)
        {
            string svgPath = Path.Combine(directory, PlotFiles[i]);
            if (File.Exists(svgPath))
            {
                html.Append("<figure class=\"plot\">").Append(InlineSvg(InputFile.ReadAllText(svgPath, reason => new ImageFileException(svgPath, reason)), i)).Append("</figure>\n");
            }
        }

        html.Append("</section>\n");
        html.Append(Template.Viewer);

        // Image data: one JSON list of what is there, then one element per image with its packed floats.
        var list = new List<object>();
        int index = 0;
        foreach (JsonElement image in root.GetProperty("images").EnumerateArray())
        {
            string file = Text(image, "file");
            string path = Path.GetFullPath(Path.Combine(directory, file));
            RgbImage data = ImageFile.Read(path).Image;
            if (data.Width != width || data.Height != height)
            {
                throw new ImageFileException(path, FormattableString.Invariant($"is {data.Width}x{data.Height}, the study {width}x{height}"));
            }

            string id = FormattableString.Invariant($"img{index++}");
            list.Add(new
            {
                id,
                kind = Text(image, "kind"),
                configuration = image.GetProperty("configuration").ValueKind == JsonValueKind.String ? image.GetProperty("configuration").GetString() : null,
                spp = image.GetProperty("spp").ValueKind == JsonValueKind.Number ? image.GetProperty("spp").GetInt32() : (int?)null,
                file,
            });
            html.Append("<script type=\"application/octet-stream\" id=\"").Append(id).Append("\">").Append(Pack(data.Data)).Append("</script>\n");
        }

        var meta = new
        {
            width,
            height,
            names = root.GetProperty("configurations").EnumerateArray().Select(c => c.GetProperty("name").GetString()).ToArray(),
            palette = WinMapImage.Palette.Select(c => FormattableString.Invariant($"#{c.R:x2}{c.G:x2}{c.B:x2}")).ToArray(),
            tile = root.GetProperty("win_map").GetProperty("tile_size").GetInt32(),
            tilesX = root.GetProperty("win_map").GetProperty("tiles_x").GetInt32(),
            winners = root.GetProperty("win_map").GetProperty("winners").EnumerateArray().Select(w => w.ValueKind == JsonValueKind.String ? w.GetString() : null).ToArray(),
            images = list,
        };

        // "</" cannot appear inside the script element: JSON escapes it.
        string metaJson = JsonSerializer.Serialize(meta).Replace("</", "<\\/", StringComparison.Ordinal);
        html.Append("<script type=\"application/json\" id=\"meta\">").Append(metaJson).Append("</script>\n");
        html.Append(Template.Script);
        html.Append("</body>\n</html>\n");

        string output = Path.Combine(directory, "report.html");
        AtomicFile.WriteText(output, html.ToString());
        return output;
    }

    /// <summary>
    /// Packs floats for the page: the little-endian bytes of every value, regrouped into four
    /// planes (all first bytes, then all second bytes, …), zlib-compressed, base64.
    /// </summary>
    public static string Pack(ReadOnlySpan<float> values)
    {
        int n = values.Length;
        var planes = new byte[4 * n];
        for (int i = 0; i < n; i++)
        {
            uint bits = BitConverter.SingleToUInt32Bits(values[i]);
            planes[i] = (byte)bits;
            planes[n + i] = (byte)(bits >> 8);
            planes[(2 * n) + i] = (byte)(bits >> 16);
            planes[(3 * n) + i] = (byte)(bits >> 24);
        }

        using var packed = new MemoryStream();
        using (var z = new ZLibStream(packed, CompressionLevel.SmallestSize, leaveOpen: true))
        {
            z.Write(planes);
        }

        return Convert.ToBase64String(packed.GetBuffer(), 0, (int)packed.Length);
    }

    private static string Header(JsonElement root)
    {
        JsonElement reference = root.GetProperty("reference");
        JsonElement machine = root.GetProperty("machine");
        string spp = reference.GetProperty("spp").ValueKind == JsonValueKind.Number ? reference.GetProperty("spp").GetInt32().ToString(CultureInfo.InvariantCulture) : "unknown";
        string variance = reference.GetProperty("mean_variance").ValueKind == JsonValueKind.Number
            ? reference.GetProperty("mean_variance").GetDouble().ToString("G3", CultureInfo.InvariantCulture) : "unknown";
        var sb = new StringBuilder();
        sb.Append("<header><h1>Sampler study: ").Append(Html(Text(root, "scene"))).Append("</h1>\n<dl class=\"facts\">\n");
        Fact(sb, "Study file", Text(root, "study_file"));
        Fact(sb, "Reference", $"{Text(reference, "path")}: {spp} spp, mean variance of the mean {variance}");
        Fact(sb, "Image", FormattableString.Invariant($"{Int(root, "width", "")}×{Int(root, "height", "")} pixels, {Int(root, "replicates", "")} replicates per configuration and spp"));
        Fact(sb, "Machine", FormattableString.Invariant($"{machine.GetProperty("cores").GetInt32()} cores, {Text(machine, "os")}, {Text(machine, "runtime")}"));
        Fact(sb, "PathBench", Text(root, "pathbench_version"));
        Fact(sb, "Date", Text(root, "date"));
        sb.Append("</dl>\n");
        JsonElement[] warnings = [.. root.GetProperty("warnings").EnumerateArray()];
        if (warnings.Length > 0)
        {
            sb.Append("<ul class=\"warnings\" aria-label=\"Warnings\">\n");
            foreach (JsonElement w in warnings)
            {
                sb.Append("<li>").Append(Html(w.GetString() ?? "")).Append("</li>\n");
            }

            sb.Append("</ul>\n");
        }

        sb.Append("</header>\n");
        return sb.ToString();
    }

    private static void Fact(StringBuilder sb, string term, string value) =>
        sb.Append("<dt>").Append(Html(term)).Append("</dt><dd>").Append(Html(value)).Append("</dd>\n");

    /// <summary>An SVG file's markup for inlining: no XML declaration, its ids made unique to this page.</summary>
    internal static string InlineSvg(string svg, int index)
    {
        string body = XmlDeclaration().Replace(svg, "");
        string prefix = FormattableString.Invariant($"p{index}-");
        body = IdAttribute().Replace(body, m => $"id=\"{prefix}{m.Groups[1].Value}\"");
        body = UrlReference().Replace(body, m => $"url(#{prefix}{m.Groups[1].Value})");
        body = HrefReference().Replace(body, m => $"{m.Groups[1].Value}=\"#{prefix}{m.Groups[2].Value}\"");
        return body;
    }

    internal static string Html(string text) => WebUtility.HtmlEncode(text);

    private static string Text(JsonElement e, string name) =>
        e.TryGetProperty(name, out JsonElement v) && v.ValueKind == JsonValueKind.String ? v.GetString() ?? "" : "";

    private static int Int(JsonElement e, string name, string file) =>
        e.TryGetProperty(name, out JsonElement v) && v.ValueKind == JsonValueKind.Number && v.TryGetInt32(out int i) && i > 0
            ? i
            : throw new ImageFileException(file, $"'{name}' is missing or not a positive whole number");

    private static JsonDocument ParseSummary(string path, byte[] bytes)
    {
        try
        {
            return JsonDocument.Parse(bytes);
        }
        catch (JsonException e)
        {
            throw new ImageFileException(path, $"not valid JSON: {e.Message}");
        }
    }

    [GeneratedRegex(@"<\?xml[^>]*\?>\s*")]
    private static partial Regex XmlDeclaration();

    [GeneratedRegex("id=\"([^\"]+)\"")]
    private static partial Regex IdAttribute();

    [GeneratedRegex(@"url\(#([^)]+)\)")]
    private static partial Regex UrlReference();

    [GeneratedRegex("(href|xlink:href)=\"#([^\"]+)\"")]
    private static partial Regex HrefReference();
}
