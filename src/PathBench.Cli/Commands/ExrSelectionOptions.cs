using System.CommandLine;
using PathBench.Imaging;

namespace PathBench.Cli.Commands;

/// <summary>--part, --layer and --channels: which part and channels of an OpenEXR input are read.</summary>
internal sealed class ExrSelectionOptions
{
    public Option<string?> Part { get; } = new("--part") { Description = "OpenEXR part to read, by name or zero-based index (default: the first)" };

    public Option<string?> Layer { get; } = new("--layer") { Description = "OpenEXR layer to read: NAME reads NAME.R, NAME.G, NAME.B (or NAME.Y)" };

    public Option<string?> Channels { get; } = new("--channels") { Description = "OpenEXR channels to read: R,G,B names, or one name read as grey" };

    public void AddTo(Command command)
    {
        command.Options.Add(Part);
        command.Options.Add(Layer);
        command.Options.Add(Channels);
    }

    /// <summary>The read options the command line asks for (they are ignored for PFM and PNG inputs).</summary>
    public ExrReadOptions Read(ParseResult parse)
    {
        string? channels = parse.GetValue(Channels);
        string[]? names = channels?.Split(',', StringSplitOptions.TrimEntries);
        if (names is not null && (names.Length is not (1 or 3) || names.Any(n => n.Length == 0)))
        {
            throw new CliUsageException($"--channels takes one name or three comma-separated names, got '{channels}'");
        }

        if (names is not null && parse.GetValue(Layer) is not null)
        {
            throw new CliUsageException("--layer and --channels cannot be combined: --channels names full channel names");
        }

        return new ExrReadOptions(parse.GetValue(Part), parse.GetValue(Layer), names);
    }
}
