using System.Globalization;

namespace PathBench.Io;

/// <summary>
/// The memory a command may ask for, checked against estimates from declared sizes (an image
/// header, a film's width and height, a point count) before anything of that size is allocated or
/// decoded. One budget for every command, default 2 GiB (common practice: a fixed decoder budget far
/// below the memory of the machines this runs on), set with the global <c>--max-memory</c>.
/// </summary>
public sealed record MemoryBudget(long Bytes)
{
    /// <summary>2 GiB.</summary>
    public const long DefaultBytes = 2L << 30;

    private static readonly AsyncLocal<MemoryBudget?> CurrentValue = new();

    /// <summary>The default budget.</summary>
    public static MemoryBudget Default { get; } = new(DefaultBytes);

    /// <summary>
    /// The budget of the command running on this logical flow (set once by the command line; flows
    /// into the tasks and parallel loops it starts, so tests running commands side by side keep theirs).
    /// </summary>
    public static MemoryBudget Current
    {
        get => CurrentValue.Value ?? Default;
        set => CurrentValue.Value = value;
    }

    /// <summary>Parses a size: a number with an optional K, M, G or T suffix (powers of 1024; "iB" or "B" may follow), e.g. 512M, 4G, 1.5GiB.</summary>
    /// <exception cref="FormatException">Not such a size, or not above zero.</exception>
    public static MemoryBudget Parse(string text)
    {
        ArgumentNullException.ThrowIfNull(text);
        string t = text.Trim();
        foreach (string unit in new[] { "iB", "B" })
        {
            if (t.Length > unit.Length && t.EndsWith(unit, StringComparison.OrdinalIgnoreCase) && char.IsLetter(t[^(unit.Length + 1)]))
            {
                t = t[..^unit.Length];
                break;
            }
        }

        long scale = 1;
        if (t.Length > 0 && char.IsLetter(t[^1]))
        {
            scale = char.ToUpperInvariant(t[^1]) switch
            {
                'K' => 1L << 10,
                'M' => 1L << 20,
                'G' => 1L << 30,
                'T' => 1L << 40,
                _ => 0,
            };
            t = t[..^1];
        }

        if (scale == 0 || !double.TryParse(t, NumberStyles.AllowDecimalPoint, CultureInfo.InvariantCulture, out double value) || !(value > 0) || value * scale >= long.MaxValue)
        {
            throw new FormatException($"expected a size such as 512M, 4G or 1.5G (K, M, G, T are powers of 1024), got '{text}'");
        }

        return new MemoryBudget(Math.Max(1, (long)(value * scale)));
    }

    /// <summary>Throws unless <paramref name="bytes"/> fit the budget; <paramref name="what"/> says what asked, e.g. "decoding the 9459x9459 pixels the header declares".</summary>
    /// <exception cref="MemoryBudgetException">Above the budget.</exception>
    public void Require(Int128 bytes, string what)
    {
        if (bytes > Bytes)
        {
            // The suggestion: the need rounded up to a whole MiB below 1 GiB, to a whole GiB above;
            // above a PiB no machine holds it, and the message says so instead.
            string raise = bytes >= (Int128)1 << 50
                ? "no budget would do: no machine has that much memory"
                : "raise the budget with the global option --max-memory SIZE (" + (bytes < 1L << 30
                    ? FormattableString.Invariant($"--max-memory {(long)((bytes + (1L << 20) - 1) >> 20)}M")
                    : FormattableString.Invariant($"--max-memory {(long)((bytes + (1L << 30) - 1) >> 30)}G")) + " would do)";
            throw new MemoryBudgetException(FormattableString.Invariant(
                $"{what} needs about {Format(bytes)}, above the memory budget of {Format(Bytes)}; {raise}"));
        }
    }

    /// <summary>A size for people: bytes, KiB, MiB, GiB or TiB with three significant digits.</summary>
    public static string Format(Int128 bytes)
    {
        string[] units = ["bytes", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"];
        double v = (double)bytes;
        int u = 0;
        while (v >= 1024 && u < units.Length - 1)
        {
            v /= 1024;
            u++;
        }

        return u == 0 ? FormattableString.Invariant($"{bytes} bytes") : string.Create(CultureInfo.InvariantCulture, $"{v:G3} {units[u]}");
    }

    /// <inheritdoc/>
    public override string ToString() => Format(Bytes);
}

/// <summary>A command would need more memory than the budget allows; the message says what, how much, and how to raise it.</summary>
public sealed class MemoryBudgetException : Exception
{
    /// <summary>Creates the exception with its one line.</summary>
    public MemoryBudgetException(string message) : base(message) { }

    /// <summary>Creates the exception with its one line and cause.</summary>
    public MemoryBudgetException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates an empty exception.</summary>
    public MemoryBudgetException() { }
}
