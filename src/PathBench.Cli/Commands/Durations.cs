using System.Globalization;
using System.Text.RegularExpressions;

namespace PathBench.Cli.Commands;

/// <summary>Durations as users write them: <c>8h</c>, <c>45m</c>, <c>90s</c>, <c>1h30m</c>, <c>0.5s</c>.</summary>
internal static partial class Durations
{
    /// <summary>Parses <paramref name="text"/>; a bad value is a usage error naming <paramref name="option"/>.</summary>
    public static TimeSpan Parse(string option, string text)
    {
        Match m = Pattern().Match(text);
        if (!m.Success)
        {
            throw new CliUsageException($"{option}: '{text}' is not a duration (write e.g. 8h, 45m, 90s or 1h30m)");
        }

        double seconds = 0;
        foreach (Capture c in m.Groups["part"].Captures)
        {
            string part = c.Value;
            double value = double.Parse(part[..^1], NumberStyles.AllowDecimalPoint, CultureInfo.InvariantCulture);
            seconds += value * (part[^1] switch { 'h' => 3600, 'm' => 60, _ => 1 });
        }

        if (seconds > TimeSpan.FromDays(365).TotalSeconds)
        {
            throw new CliUsageException($"{option}: '{text}' is more than a year");
        }

        return TimeSpan.FromSeconds(seconds);
    }

    [GeneratedRegex(@"^(?<part>[0-9]+(\.[0-9]+)?[hms])+$", RegexOptions.CultureInvariant)]
    private static partial Regex Pattern();
}
