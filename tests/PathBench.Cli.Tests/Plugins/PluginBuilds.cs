using System.Diagnostics;

namespace PathBench.Cli.Tests.Plugins;

/// <summary>
/// Builds the example plug-in (<c>tools/plugin-example</c>, its sources copied to a temp folder so the
/// repository's bin/obj are never touched) and a misbehaving test plug-in, once per test class. Each
/// is built against the PathBench.Sampling.dll these tests run with, without build servers or node
/// reuse, so no process outlives the build and the output depends on the sources alone.
/// </summary>
public sealed class PluginBuilds : IDisposable
{
    private readonly TempFolder _dir = new("pathbench-plugins-");

    public PluginBuilds()
    {
        string example = Path.Combine(RepositoryPaths.Root, "tools", "plugin-example");
        string exampleCopy = Path.Combine(_dir.Path, "example");
        Directory.CreateDirectory(exampleCopy);
        foreach (string file in Directory.GetFiles(example).Where(f => f.EndsWith(".cs", StringComparison.Ordinal) || f.EndsWith(".csproj", StringComparison.Ordinal)))
        {
            File.Copy(file, Path.Combine(exampleCopy, Path.GetFileName(file)));
        }

        Example = Path.Combine(Build(Path.Combine(exampleCopy, "PathBench.PluginExample.csproj"), "example-out"), "PathBench.PluginExample.dll");

        _dir.Write("misbehaving/Misbehaving.csproj", PluginProject());
        _dir.Write("misbehaving/MisbehavingPlugin.cs", MisbehavingSource);
        string built = Path.Combine(Build(_dir.File("misbehaving/Misbehaving.csproj"), "misbehaving-out"), "Misbehaving.dll");
        Throwing = CopyWithMode(built, "throw");
        Clashing = CopyWithMode(built, "clash");
        ThrowingWhileSampling = CopyWithMode(built, "sample-throw");
        OutOfRange = CopyWithMode(built, "out-of-range");

        _dir.Write("dependency/Invented.Constants.csproj", DependencyProject);
        _dir.Write("dependency/Constants.cs", DependencySource);
        _dir.Write("with-dependency/WithDependency.csproj", PluginProject("""<ProjectReference Include="../dependency/Invented.Constants.csproj" />"""));
        _dir.Write("with-dependency/QuarterPlugin.cs", WithDependencySource);
        WithDependency = Path.Combine(Build(_dir.File("with-dependency/WithDependency.csproj"), "with-dependency-out"), "WithDependency.dll");
    }

    /// <summary>A plug-in whose generator calls into an assembly shipped beside it (not in PathBench).</summary>
    public string WithDependency { get; }

    /// <summary>The example plug-in's assembly.</summary>
    public string Example { get; }

    /// <summary>A plug-in whose constructor throws.</summary>
    public string Throwing { get; }

    /// <summary>A plug-in whose generator 'half' throws from its fourth point on (index 3).</summary>
    public string ThrowingWhileSampling { get; }

    /// <summary>A plug-in whose generator 'half' returns 1, outside [0, 1), from its fourth point on (index 3).</summary>
    public string OutOfRange { get; }

    /// <summary>A plug-in that names its generator 'sobol'.</summary>
    public string Clashing { get; }

    public void Dispose() => _dir.Dispose();

    private string CopyWithMode(string dll, string mode)
    {
        string path = _dir.File(Path.Combine(mode, Path.GetFileName(dll)));
        Directory.CreateDirectory(Path.GetDirectoryName(path)!);
        File.Copy(dll, path);
        File.WriteAllText(Path.Combine(Path.GetDirectoryName(path)!, "mode.txt"), mode);
        return path;
    }

    private string Build(string project, string output)
    {
        string outDir = _dir.File(output);
        string dotnet = Environment.GetEnvironmentVariable("DOTNET_HOST_PATH") is { Length: > 0 } host && File.Exists(host) ? host : "dotnet";
        var start = new ProcessStartInfo(dotnet)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            UseShellExecute = false,
            WorkingDirectory = Path.GetDirectoryName(project)!,
        };
        foreach (string arg in new[]
        {
            "build", project, "-c", "Release", "-o", outDir, "--nologo", "-v:q", "-nodeReuse:false", "--disable-build-servers",
            "-p:UseSharedCompilation=false", "-p:Deterministic=true",
            "-p:PathBenchSamplingDll=" + Path.Combine(AppContext.BaseDirectory, "PathBench.Sampling.dll"),
        })
        {
            start.ArgumentList.Add(arg);
        }

        // The test host runs inside 'dotnet test', whose MSBuild settings must not steer this build.
        foreach (string key in start.Environment.Keys.Where(k => k.StartsWith("MSBUILD", StringComparison.OrdinalIgnoreCase)).ToList())
        {
            start.Environment.Remove(key);
        }

        start.Environment["DOTNET_CLI_TELEMETRY_OPTOUT"] = "1";
        start.Environment["DOTNET_NOLOGO"] = "1";
        using Process process = Process.Start(start)!;
        Task<string> stdout = process.StandardOutput.ReadToEndAsync();
        Task<string> stderr = process.StandardError.ReadToEndAsync();
        process.WaitForExit();
        if (process.ExitCode != 0)
        {
            throw new InvalidOperationException($"dotnet build {project} exited {process.ExitCode}:\n{stdout.Result}\n{stderr.Result}");
        }

        return outDir;
    }

    // A plug-in project outside the repository: PathBench.Sampling referenced from the test's own
    // binaries and not copied (the host's copy is the one used), plus any further items.
    private static string PluginProject(string items = "") => $"""
        <Project Sdk="Microsoft.NET.Sdk">
          <PropertyGroup>
            <TargetFramework>net10.0</TargetFramework>
            <Nullable>enable</Nullable>
            <ImplicitUsings>enable</ImplicitUsings>
          </PropertyGroup>
          <ItemGroup>
            <Reference Include="PathBench.Sampling" HintPath="$(PathBenchSamplingDll)" Private="false" />
            {items}
          </ItemGroup>
        </Project>
        """;

    private const string DependencyProject = """
        <Project Sdk="Microsoft.NET.Sdk">
          <PropertyGroup>
            <TargetFramework>net10.0</TargetFramework>
          </PropertyGroup>
        </Project>
        """;

    // A method, not a const: a const would be copied into the plug-in at compile time.
    private const string DependencySource = """
        namespace Invented.Constants;

        public static class Constants
        {
            public static double Quarter() => 0.25;
        }
        """;

    private const string WithDependencySource = """
        using PathBench.Sampling.Generators;

        namespace WithDependency;

        public sealed class QuarterPlugin : IGeneratorPlugin
        {
            public IEnumerable<GeneratorInfo> Generators =>
            [
                new GeneratorInfo("quarter", "test only", false, 2, [Randomization.None], Randomization.None, "test only", s => new Quarter(s)),
            ];
        }

        public sealed class Quarter(SamplerSpec spec) : PointSampler(spec)
        {
            public override int MaxDimensions => 2;

            public override double Sample(ulong pixel, uint index, int dimension) => Invented.Constants.Constants.Quarter();
        }
        """;

    // Test only: what it does is read from mode.txt beside the assembly, so one build serves every case.
    private const string MisbehavingSource = """
        using PathBench.Sampling.Generators;

        namespace Misbehaving;

        public sealed class MisbehavingPlugin : IGeneratorPlugin
        {
            private readonly string _mode;

            public MisbehavingPlugin()
            {
                _mode = File.ReadAllText(Path.Combine(Path.GetDirectoryName(typeof(MisbehavingPlugin).Assembly.Location)!, "mode.txt")).Trim();
                if (_mode == "throw")
                {
                    throw new InvalidOperationException("the invented licence file is missing");
                }
            }

            public IEnumerable<GeneratorInfo> Generators =>
            [
                new GeneratorInfo(_mode == "clash" ? "sobol" : "half", "test only", false, 2, [Randomization.None], Randomization.None, "test only", s => new Half(s, _mode)),
            ];
        }

        public sealed class Half(SamplerSpec spec, string mode) : PointSampler(spec)
        {
            public override int MaxDimensions => 2;

            public override double Sample(ulong pixel, uint index, int dimension) =>
                index < 3 ? 0.5
                : mode == "sample-throw" ? throw new InvalidOperationException("the invented table holds 3 points")
                : mode == "out-of-range" ? 1.0
                : 0.5;
        }
        """;
}
