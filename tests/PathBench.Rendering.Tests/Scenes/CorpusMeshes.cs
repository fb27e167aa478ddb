namespace PathBench.Rendering.Tests.Scenes;

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
