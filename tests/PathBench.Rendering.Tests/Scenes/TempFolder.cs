namespace PathBench.Rendering.Tests.Scenes;

/// <summary>A fresh folder under the system temp folder, deleted on dispose; tests write scene and mesh files into it.</summary>
public sealed class TempFolder : IDisposable
{
    public TempFolder()
    {
        Path = Directory.CreateTempSubdirectory("pathbench-scenes-").FullName;
    }

    public string Path { get; }

    /// <summary>Writes <paramref name="text"/> to <paramref name="relative"/> (creating folders) and returns the full path.</summary>
    public string Write(string relative, string text)
    {
        string full = System.IO.Path.Combine(Path, relative);
        Directory.CreateDirectory(System.IO.Path.GetDirectoryName(full)!);
        File.WriteAllText(full, text);
        return full;
    }

    public void Dispose() => Directory.Delete(Path, recursive: true);
}

/// <summary>The meshes the malformed-scene corpus refers to: one good triangle and one file with vertices but no faces.</summary>
public sealed class CorpusMeshes : IDisposable
{
    private readonly TempFolder _folder = new();

    public CorpusMeshes()
    {
        _folder.Write("meshes/tri.obj", "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n");
        _folder.Write("meshes/points.obj", "v 0 0 0\nv 1 0 0\nv 0 1 0\n");
    }

    public string Path => _folder.Path;

    public void Dispose() => _folder.Dispose();
}
