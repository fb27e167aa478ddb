namespace PathBench.TestSupport;

/// <summary>A fresh folder under the system temp folder, deleted on dispose.</summary>
public sealed class TempFolder : IDisposable
{
    /// <summary>Creates the folder; <paramref name="prefix"/> names it for whoever finds a leftover.</summary>
    public TempFolder(string prefix = "pathbench-") => Path = Directory.CreateTempSubdirectory(prefix).FullName;

    /// <summary>The folder.</summary>
    public string Path { get; }

    /// <summary>The full path of <paramref name="name"/> in the folder.</summary>
    public string File(string name) => System.IO.Path.Combine(Path, name);

    /// <summary>Writes <paramref name="text"/> to <paramref name="relative"/> (creating folders) and returns the full path.</summary>
    public string Write(string relative, string text)
    {
        string full = System.IO.Path.Combine(Path, relative);
        Directory.CreateDirectory(System.IO.Path.GetDirectoryName(full)!);
        System.IO.File.WriteAllText(full, text);
        return full;
    }

    /// <inheritdoc/>
    public void Dispose()
    {
        try
        {
            Directory.Delete(Path, recursive: true);
        }
        catch (IOException)
        {
            // A leftover temp folder is harmless; the test's own result is what matters.
        }
    }
}

/// <summary>Paths inside the repository the tests run from.</summary>
public static class RepositoryPaths
{
    /// <summary>The nearest folder above the test binaries that holds PathBench.sln.</summary>
    public static string Root
    {
        get
        {
            var dir = new DirectoryInfo(AppContext.BaseDirectory);
            while (dir is not null && !System.IO.File.Exists(System.IO.Path.Combine(dir.FullName, "PathBench.sln")))
            {
                dir = dir.Parent;
            }

            return dir?.FullName ?? throw new DirectoryNotFoundException("PathBench.sln not found above " + AppContext.BaseDirectory);
        }
    }

    /// <summary>The scenes folder.</summary>
    public static string Scenes => System.IO.Path.Combine(Root, "scenes");
}
