namespace PathBench.Io;

/// <summary>
/// Checks a command's outputs against its inputs before any work: no output may name an input
/// (compared as files, so symbolic and hard links count) or another output, and each output's
/// extension must name what is written into it.
/// </summary>
public sealed class OutputPaths
{
    private readonly List<(string Path, FileStatus Status)> inputs = [];
    private readonly List<(string Path, string Full)> outputs = [];

    /// <summary>Records an input (a missing one is skipped: its reader reports it).</summary>
    public OutputPaths Input(string? path)
    {
        if (path is not null)
        {
            FileStatus s = FileStatus.Of(path);
            if (s.Kind != FileKind.Missing)
            {
                inputs.Add((path, s));
            }
        }

        return this;
    }

    /// <summary>
    /// Records an output and checks it at once: <paramref name="what"/> names its content for the
    /// error ("the heat map (PNG)"), <paramref name="extensions"/> the extensions that match it
    /// (any case; empty: any).
    /// </summary>
    /// <exception cref="OutputPathException">The output names an input or an earlier output, or its extension does not match.</exception>
    public OutputPaths Output(string? path, string what, params string[] extensions)
    {
        if (path is null)
        {
            return this;
        }

        ArgumentNullException.ThrowIfNull(extensions);
        string ext = Path.GetExtension(path);
        if (extensions.Length > 0 && !extensions.Any(e => string.Equals(e, ext, StringComparison.OrdinalIgnoreCase)))
        {
            throw new OutputPathException(path, $"{what} is written here, but the name ends in '{ext}'; use {string.Join(" or ", extensions)}");
        }

        FileStatus status = FileStatus.Of(path);
        if (status.Kind != FileKind.Missing)
        {
            foreach ((string input, FileStatus s) in inputs)
            {
                if (status.Kind == s.Kind && status.Device == s.Device && status.Inode == s.Inode && (s.Inode != 0 || SameFull(path, input)))
                {
                    throw new OutputPathException(path, $"{what} would overwrite the input {input}; choose another output name");
                }
            }
        }

        string full = Path.GetFullPath(path);
        foreach ((string other, string otherFull) in outputs)
        {
            if (string.Equals(full, otherFull, StringComparison.Ordinal))
            {
                throw new OutputPathException(path, $"{what} and another output ({other}) are the same file; choose another output name");
            }
        }

        outputs.Add((path, full));
        return this;
    }

    private static bool SameFull(string a, string b) => string.Equals(Path.GetFullPath(a), Path.GetFullPath(b), StringComparison.Ordinal);
}

/// <summary>An output path that would destroy an input or does not match its content; the message is one line.</summary>
public sealed class OutputPathException : Exception
{
    /// <summary>Creates the exception for <paramref name="path"/>.</summary>
    public OutputPathException(string path, string reason) : base($"{path}: {reason}") { }

    /// <summary>Creates the exception with a message.</summary>
    public OutputPathException(string message) : base(message) { }

    /// <summary>Creates the exception with a message and cause.</summary>
    public OutputPathException(string message, Exception inner) : base(message, inner) { }

    /// <summary>Creates an empty exception.</summary>
    public OutputPathException() { }
}
