namespace PathBench.Imaging;

/// <summary>
/// An image file could not be read or written: the message is one line that names the file
/// and says what was wrong with it.
/// </summary>
public class ImageFileException : Exception
{
    /// <summary>Creates the exception for <paramref name="fileName"/>: message "FILE: WHAT".</summary>
    public ImageFileException(string fileName, string what) : base($"{fileName}: {what}")
    {
        FileName = fileName;
    }

    /// <summary>Creates the exception for <paramref name="fileName"/> with its cause.</summary>
    public ImageFileException(string fileName, string what, Exception inner) : base($"{fileName}: {what}", inner)
    {
        FileName = fileName;
    }

    /// <summary>Creates an exception with no file.</summary>
    public ImageFileException() { }

    /// <summary>Creates an exception with a ready message.</summary>
    public ImageFileException(string message) : base(message) { }

    /// <summary>Creates an exception with a ready message and cause.</summary>
    public ImageFileException(string message, Exception inner) : base(message, inner) { }

    /// <summary>The file the message is about.</summary>
    public string FileName { get; } = "";
}

/// <summary>A well-formed file that uses a feature PathBench does not read: "FILE: not supported: FEATURE".</summary>
public sealed class ImageNotSupportedException : ImageFileException
{
    /// <summary>Creates the exception for <paramref name="fileName"/> and the feature found.</summary>
    public ImageNotSupportedException(string fileName, string feature) : base(fileName, $"not supported: {feature}") { }

    /// <summary>Creates an exception with no file.</summary>
    public ImageNotSupportedException() { }

    /// <summary>Creates an exception with a ready message and cause.</summary>
    public ImageNotSupportedException(string message, Exception inner) : base(message, inner) { }
}
