using System.Runtime.CompilerServices;

namespace PathBench.Sampling;

/// <summary>The inlining policy, named once so hot paths say what they want.</summary>
internal static class InliningOptions
{
    /// <summary>
    /// Per-sample code: inline aggressively. Not AggressiveOptimization: that skips tiering
    /// and with it dynamic PGO, which measured slower here (SamplerBenchmarks).
    /// </summary>
    public const MethodImplOptions HotPath = MethodImplOptions.AggressiveInlining;

    /// <summary>Tiny helpers that the JIT should always inline.</summary>
    public const MethodImplOptions ShortMethod = MethodImplOptions.AggressiveInlining;

    /// <summary>Error paths: keep them out of the callers' code.</summary>
    public const MethodImplOptions ColdPath = MethodImplOptions.NoInlining;
}
