using System.Reflection;
using System.Runtime.Loader;
using PathBench.Io;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Loads a plug-in assembly (<c>--plugin PATH.dll</c>) into a load context of its own and adds the
/// generators of every <see cref="IGeneratorPlugin"/> it exports to the catalog's current scope.
/// Every failure is a one-line <see cref="SamplerSpecException"/> naming the plug-in's path.
/// </summary>
public static class GeneratorPlugins
{
    /// <summary>Loads the plug-in at <paramref name="path"/> and adds its generators to <see cref="SamplerCatalog"/>'s current scope.</summary>
    public static IReadOnlyList<GeneratorInfo> Load(string path)
    {
        ArgumentNullException.ThrowIfNull(path);
        string full = Path.GetFullPath(path);
        string origin = "plug-in " + full;
        if (Directory.Exists(full))
        {
            throw new SamplerSpecException($"--plugin {path}: is a folder; name the plug-in's .dll");
        }

        if (!File.Exists(full))
        {
            throw new SamplerSpecException($"--plugin {path}: no such file");
        }

        // A pipe or device would block the loader's open: refused before anything opens it.
        if (InputFile.Refusal(full) is { } refusal)
        {
            throw new SamplerSpecException($"--plugin {path}: {refusal}");
        }

        try
        {
            AssemblyName.GetAssemblyName(full);
        }
        catch (BadImageFormatException)
        {
            throw new SamplerSpecException($"--plugin {path}: not a .NET assembly (build the plug-in project and name its .dll)");
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new SamplerSpecException($"--plugin {path}: cannot read: {e.Message}", e);
        }

        var context = new PluginLoadContext(full);
        Assembly assembly;
        Type[] types;
        try
        {
            assembly = context.LoadFromAssemblyPath(full);
            types = assembly.GetExportedTypes();
        }
        catch (Exception e) when (e is FileLoadException or FileNotFoundException or BadImageFormatException or ReflectionTypeLoadException or TypeLoadException)
        {
            throw new SamplerSpecException($"--plugin {path}: cannot load its types: {OneLine(e)}", e);
        }

        Type[] plugins = [.. types.Where(t => t.IsClass && !t.IsAbstract && typeof(IGeneratorPlugin).IsAssignableFrom(t)).OrderBy(t => t.FullName, StringComparer.Ordinal)];
        if (plugins.Length == 0)
        {
            throw new SamplerSpecException(
                $"--plugin {path}: no public class implementing {typeof(IGeneratorPlugin).FullName} (from {typeof(IGeneratorPlugin).Assembly.GetName().Name} {typeof(IGeneratorPlugin).Assembly.GetName().Version})");
        }

        string provenance = $"{assembly.GetName().Name} {assembly.GetName().Version} mvid {assembly.ManifestModule.ModuleVersionId}";
        var all = new List<GeneratorInfo>();
        foreach (Type type in plugins)
        {
            List<GeneratorInfo> generators;
            try
            {
                var plugin = (IGeneratorPlugin)Activator.CreateInstance(type)!;
                generators = [.. plugin.Generators];
            }
            catch (MissingMethodException)
            {
                throw new SamplerSpecException($"--plugin {path}: {type.FullName} needs a public parameterless constructor");
            }
            catch (TargetInvocationException e) when (e.InnerException is { } inner)
            {
                throw new SamplerSpecException($"--plugin {path}: {type.FullName}'s constructor failed: {OneLine(inner)}", inner);
            }
            catch (Exception e) when (e is not OutOfMemoryException and not SamplerSpecException)
            {
                throw new SamplerSpecException($"--plugin {path}: {type.FullName}.Generators failed: {OneLine(e)}", e);
            }

            SamplerCatalog.Add(origin, provenance, generators);
            all.AddRange(generators);
        }

        return all;
    }

    /// <summary>
    /// The plug-in whose code threw <paramref name="e"/> (or an exception it wraps): the first frame of
    /// its stack trace, from the throw outwards, that belongs to a loaded plug-in's assembly (so an exception a plug-in's call into
    /// the framework threw is the plug-in's too); null when no plug-in code is on it.
    /// </summary>
    public static (string Path, string Method)? Culprit(Exception e)
    {
        ArgumentNullException.ThrowIfNull(e);
        // The exception and then what it wraps: a caller that rethrew with a message of its own keeps the plug-in's frames in its inner exception.
        for (Exception? x = e; x is not null; x = x.InnerException)
        {
            foreach (System.Diagnostics.StackFrame frame in new System.Diagnostics.StackTrace(x, false).GetFrames())
            {
                MethodBase? method = frame.GetMethod();
                if (method?.DeclaringType is { } type && AssemblyLoadContext.GetLoadContext(type.Assembly) is PluginLoadContext context)
                {
                    return (context.PluginPath, $"{type.FullName}.{method.Name}");
                }
            }
        }

        return null;
    }

    private static string OneLine(Exception e) => $"{e.GetType().Name}: {e.Message.ReplaceLineEndings(" ")}";

    /// <summary>
    /// The plug-in's own context: its dependencies are resolved next to it (through its .deps.json when
    /// it has one), except PathBench.Sampling, which comes from the default context so that
    /// <see cref="IGeneratorPlugin"/>, <see cref="GeneratorInfo"/> and <see cref="PointSampler"/> are the
    /// host's own types. Not collectible: a plug-in lives as long as the command that named it.
    /// </summary>
    private sealed class PluginLoadContext(string pluginPath) : AssemblyLoadContext("pathbench-plugin " + Path.GetFileName(pluginPath), isCollectible: false)
    {
        private readonly AssemblyDependencyResolver _resolver = new(pluginPath);

        /// <summary>The plug-in's full path.</summary>
        public string PluginPath => pluginPath;

        protected override Assembly? Load(AssemblyName assemblyName)
        {
            if (string.Equals(assemblyName.Name, typeof(IGeneratorPlugin).Assembly.GetName().Name, StringComparison.Ordinal))
            {
                return null; // shared with the host
            }

            string? path = _resolver.ResolveAssemblyToPath(assemblyName);
            if (path is null)
            {
                string beside = Path.Combine(Path.GetDirectoryName(pluginPath)!, assemblyName.Name + ".dll");
                path = File.Exists(beside) ? beside : null;
            }

            // Nothing beside the plug-in: the host's copy (the framework, or a library PathBench ships).
            return path is null ? null : LoadFromAssemblyPath(path);
        }

        protected override IntPtr LoadUnmanagedDll(string unmanagedDllName)
        {
            string? path = _resolver.ResolveUnmanagedDllToPath(unmanagedDllName);
            return path is null ? IntPtr.Zero : LoadUnmanagedDllFromPath(path);
        }
    }
}
