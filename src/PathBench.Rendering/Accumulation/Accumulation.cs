using System.Security.Cryptography;
using PathBench.Rendering.Scenes;

namespace PathBench.Rendering.Accumulation;

/// <summary>The half-open sample range [<paramref name="First"/>, <paramref name="End"/>) of every pixel.</summary>
/// <param name="First">First sample index (inclusive).</param>
/// <param name="End">End sample index (exclusive).</param>
public sealed record SampleRange(int First, int End)
{
    /// <summary>The number of samples per pixel in the range.</summary>
    public int Count => End - First;

    /// <summary>The range as <c>[first, end)</c>.</summary>
    public override string ToString() => $"[{First}, {End})";

    /// <summary>
    /// The <paramref name="index"/>-th of <paramref name="shards"/> disjoint ranges that cover [0, <paramref name="spp"/>):
    /// [⌊i·spp/N⌋, ⌊(i+1)·spp/N⌋), so shard sizes differ by at most one sample.
    /// </summary>
    public static SampleRange Shard(int index, int shards, int spp)
    {
        if (shards <= 0 || index < 0 || index >= shards)
        {
            throw new ArgumentOutOfRangeException(nameof(index), $"shard {index}/{shards}: need 0 ≤ I < N");
        }

        return new SampleRange((int)((long)index * spp / shards), (int)((long)(index + 1) * spp / shards));
    }
}

/// <summary>
/// What an accumulation depends on. Two accumulations can be merged, or one resumed, only when
/// every field agrees: the PathBench version, the scene digest, the image size and every
/// configuration field (generator, randomization, seed, planned count, strategies, depth…).
/// </summary>
/// <param name="Version">PathBench's informational version.</param>
/// <param name="SceneSha256">The scene digest (<see cref="SceneDigest"/>), lower-case hex.</param>
/// <param name="Configuration">Every setting the samples depend on, as ordered name/value pairs.</param>
/// <param name="Width">Image width in pixels.</param>
/// <param name="Height">Image height in pixels.</param>
public sealed record RenderIdentity(string Version, string SceneSha256, IReadOnlyList<KeyValuePair<string, string>> Configuration, int Width, int Height)
{
    /// <summary>
    /// The first field in which <paramref name="other"/> differs, as "field: this value vs other
    /// value", or null when they are the same render.
    /// </summary>
    public string? FirstDifference(RenderIdentity other)
    {
        ArgumentNullException.ThrowIfNull(other);
        if (Version != other.Version)
        {
            return $"version: {Version} vs {other.Version}";
        }

        if (SceneSha256 != other.SceneSha256)
        {
            return $"scene_sha256: {SceneSha256} vs {other.SceneSha256}";
        }

        if (Width != other.Width || Height != other.Height)
        {
            return $"size: {Width}x{Height} vs {other.Width}x{other.Height}";
        }

        var theirs = other.Configuration.ToDictionary(p => p.Key, p => p.Value, StringComparer.Ordinal);
        foreach ((string name, string value) in Configuration)
        {
            if (!theirs.TryGetValue(name, out string? v))
            {
                return $"{name}: {value} vs (absent)";
            }

            if (v != value)
            {
                return $"{name}: {value} vs {v}";
            }
        }

        string? extra = other.Configuration.Select(p => p.Key).FirstOrDefault(k => !Configuration.Any(p => p.Key == k));
        return extra is null ? null : $"{extra}: (absent) vs {theirs[extra]}";
    }
}

/// <summary>The fields of an accumulation file before its sums.</summary>
/// <param name="Identity">What the sums depend on.</param>
/// <param name="Ranges">The sample ranges held, sorted and disjoint.</param>
/// <param name="NonFiniteSamples">Samples dropped as NaN or infinite.</param>
public sealed record AccumulationHeader(RenderIdentity Identity, IReadOnlyList<SampleRange> Ranges, long NonFiniteSamples);

/// <summary>A film's exact sums over <paramref name="Ranges"/> with what they depend on.</summary>
/// <param name="Identity">What the sums depend on.</param>
/// <param name="Ranges">The sample ranges held, sorted and disjoint.</param>
/// <param name="Film">The sums.</param>
public sealed record Accumulation(RenderIdentity Identity, IReadOnlyList<SampleRange> Ranges, Film Film)
{
    /// <summary>Samples per pixel held: the sum of the ranges' lengths.</summary>
    public int SamplesPerPixel => Ranges.Sum(r => r.Count);
}

/// <summary>A malformed, truncated, corrupted or foreign accumulation file; the message is one line, <c>FILE: what was wrong</c>.</summary>
public sealed class AccumulationFileException : Exception
{
    /// <summary>Creates the exception for <paramref name="path"/>.</summary>
    public AccumulationFileException(string path, string what, Exception? inner = null)
        : base($"{path}: {what}", inner)
    {
    }

    /// <summary>Creates an empty exception.</summary>
    public AccumulationFileException() { }

    /// <summary>Creates the exception with a ready message.</summary>
    public AccumulationFileException(string message) : base(message) { }

    /// <summary>Creates the exception with a ready message and its cause.</summary>
    public AccumulationFileException(string message, Exception inner) : base(message, inner) { }
}

/// <summary>The scene digest an accumulation records: the scene file and every mesh it loaded.</summary>
public static class SceneDigest
{
    /// <summary>
    /// SHA-256 over the scene file's SHA-256 (32 bytes) followed, for each mesh shape in file
    /// order, by its positions, normals and texture coordinates as loaded (little-endian doubles,
    /// each list preceded by its length): editing an OBJ a scene names changes the digest.
    /// </summary>
    public static string Compute(SceneDescription scene)
    {
        ArgumentNullException.ThrowIfNull(scene);
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        hash.AppendData(Convert.FromHexString(scene.Sha256));
        Span<byte> word = stackalloc byte[8];
        foreach (MeshShape mesh in scene.Shapes.OfType<MeshShape>())
        {
            var values = new List<double>();
            foreach (var v in mesh.Positions.Concat(mesh.Normals))
            {
                values.Add(v.X);
                values.Add(v.Y);
                values.Add(v.Z);
            }

            values.AddRange(mesh.TexCoords);
            foreach (double d in new double[] { mesh.Positions.Count, mesh.Normals.Count, mesh.TexCoords.Count }.Concat(values))
            {
                System.Buffers.Binary.BinaryPrimitives.WriteDoubleLittleEndian(word, d);
                hash.AppendData(word);
            }
        }

        return Convert.ToHexStringLower(hash.GetHashAndReset());
    }
}
