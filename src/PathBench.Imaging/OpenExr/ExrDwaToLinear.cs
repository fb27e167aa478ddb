using System.Globalization;
using System.Reflection;

namespace PathBench.Imaging;

/// <summary>
/// OpenEXR's DWA to-linear table (dwaCompressorToLinear): HALF bits of a decoded nonlinear value →
/// HALF bits in linear light. The library ships the table pregenerated rather than computing it, so
/// the exact entries (rounding of its pow evaluations included) are read from
/// Data/dwa_to_linear.txt, which tools/imaging/extract_dwa_to_linear.py extracts from the installed
/// library (provenance in the file's header).
/// </summary>
internal static class ExrDwaToLinear
{
    private const string ResourceName = "PathBench.Imaging.dwa_to_linear.txt";

    private static readonly Lazy<ushort[]> Lazy = new(Load);

    /// <summary>The 65536 entries.</summary>
    public static ReadOnlySpan<ushort> Table => Lazy.Value;

    private static ushort[] Load()
    {
        using Stream stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(ResourceName)
            ?? throw new InvalidOperationException($"embedded resource {ResourceName} is missing from the build");
        using var reader = new StreamReader(stream);
        var table = new ushort[1 << 16];
        int count = 0;
        int lineNumber = 0;
        while (reader.ReadLine() is { } line)
        {
            lineNumber++;
            if (line.Length == 0 || line[0] == '#')
            {
                continue;
            }

            foreach (string field in line.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            {
                if (count == table.Length || !ushort.TryParse(field, NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture, out table[count]))
                {
                    throw new InvalidDataException($"{ResourceName}, line {lineNumber}: '{field}' is not one of 65536 hexadecimal HALF entries");
                }

                count++;
            }
        }

        if (count != table.Length)
        {
            throw new InvalidDataException($"{ResourceName} holds {count} entries, not 65536");
        }

        return table;
    }
}
