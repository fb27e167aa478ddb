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

    /// <summary>
    /// Tiny helpers that the JIT should always inline, also on a path that a process may profile as cold because another
    /// randomization ran first: there the JIT leaves a helper without this attribute a call (the rotation's Wrap and
    /// Rotate once an unrotated generator had run first).
    /// </summary>
    public const MethodImplOptions ShortMethod = MethodImplOptions.AggressiveInlining;

    /// <summary>
    /// A vector kernel (a run of points on SIMD lanes) whose helpers are <see cref="ShortMethod"/>s: a method of its own,
    /// never inlined, with one instantiation per randomization where several share it. Otherwise dynamic PGO inlines it
    /// into whichever hot caller the process profiled first (a guarded devirtualization of the virtual batch call brings
    /// in the override, then the kernel), the caller's inlining budget runs out inside it, and its helpers stay calls that
    /// pass 256-bit vectors through memory; and a kernel shared by several randomizations is laid out by the profile of
    /// the first that ran, the others' branches as cold. pmj02/owen's replay took 14.8 ms a frame when it was the first
    /// combination a process ran and 7.5 after pmj02/none; now 6.3-6.9 either way.
    /// </summary>
    public const MethodImplOptions Kernel = MethodImplOptions.NoInlining;

    /// <summary>Error paths: keep them out of the callers' code.</summary>
    public const MethodImplOptions ColdPath = MethodImplOptions.NoInlining;
}
