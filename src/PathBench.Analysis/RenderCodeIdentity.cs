using System.Reflection;
using System.Runtime.InteropServices;
using System.Security.Cryptography;
using System.Text;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Sampling.Generators;

namespace PathBench.Analysis;

/// <summary>
/// The identity of the code a study's renders come from, part of every cache key: the module version
/// ids of the assemblies that produce a render (rendering, sampling, the I/O layer and this one,
/// which plans seeds and sample counts), the runtime and the processor architecture. Builds are
/// deterministic, so a module version id is a hash of the assembly's content: it changes when that
/// code changes and not when an unrelated part of the program (the CLI, the report) or the commit
/// does. Those assemblies are built without the commit in their informational version
/// (Directory.Build.props) for this reason.
/// </summary>
public static class RenderCodeIdentity
{
    private static readonly Lazy<string> s_value = new(Compute);

    /// <summary>The assemblies whose content decides a render's pixels.</summary>
    public static IReadOnlyList<Assembly> Assemblies { get; } =
    [
        typeof(Scene).Assembly,
        typeof(PointSampler).Assembly,
        typeof(InputFile).Assembly,
        typeof(RenderCodeIdentity).Assembly,
    ];

    /// <summary>A 32-hex-digit digest of <see cref="Assemblies"/>' module version ids, the runtime and the architecture.</summary>
    public static string Value => s_value.Value;

    private static string Compute()
    {
        var text = new StringBuilder();
        foreach (Assembly a in Assemblies)
        {
            text.Append(a.GetName().Name).Append('=').Append(a.ManifestModule.ModuleVersionId.ToString("N")).Append('|');
        }

        text.Append(RuntimeInformation.FrameworkDescription).Append('|').Append(RuntimeInformation.ProcessArchitecture);
        return Convert.ToHexStringLower(SHA256.HashData(Encoding.UTF8.GetBytes(text.ToString())))[..32];
    }
}
