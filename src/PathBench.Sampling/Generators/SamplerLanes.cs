using System.Runtime.Intrinsics;

namespace PathBench.Sampling.Generators;

/// <summary>
/// Which vector form the generators' batches run on this machine: 256-bit lanes (AVX2) wherever the machine has them,
/// AVX-512 machines included, else one point at a time. Every form gives the same bits (<c>BatchTests</c>), so the choice
/// is one of speed only.
/// </summary>
/// <remarks>
/// Measured on a 2-core Intel Xeon with AVX-512 (issue 12, eleventh round, <c>docs/performance.md</c>): in the renderer's
/// pattern (runs of 4 to 16 points over many pixels and dimensions) the 512-bit forms cost more than the 256-bit ones,
/// 40 % more for the Kensler sets and 15 % more for Halton's digit permutations, and no generator gained from them. The
/// 512-bit forms stay, tested on every AVX-512 machine, and run when <see cref="Variable"/> asks for them.
/// </remarks>
public static class SamplerLanes
{
    /// <summary>
    /// Environment variable that picks the form for measurement: <c>scalar</c>, <c>narrow</c> (256-bit) or <c>wide</c>
    /// (512-bit where the machine has AVX-512, else narrow); unset, the default above.
    /// </summary>
    public const string Variable = "PATHBENCH_SAMPLER_LANES";

    internal static LaneWidth Width { get; } = Choose(Environment.GetEnvironmentVariable(Variable));

    /// <summary>The form in use: <c>scalar</c>, <c>narrow</c> or <c>wide</c> (what <c>pathbench bench</c> reports).</summary>
    public static string Form => Name(Width);

    /// <summary>
    /// Whether the generators' automatic choices use 512-bit vectors (only in the wide form): the padding hash's run length
    /// in the renderer's sample cache follows it.
    /// </summary>
    public static bool Uses512BitVectors => Width == LaneWidth.Wide;

    /// <summary>A usage error for a value of <see cref="Variable"/> that names no form, else null.</summary>
    public static string? CheckVariable() => Check(Environment.GetEnvironmentVariable(Variable));

    /// <summary><see cref="CheckVariable"/> for a given value.</summary>
    internal static string? Check(string? value) =>
        value is null or "" or "scalar" or "narrow" or "wide" ? null : $"{Variable}: '{value}' is not a lane form (scalar, narrow or wide)";

    /// <summary>The form a value of <see cref="Variable"/> asks for, down to what the machine runs.</summary>
    internal static LaneWidth Choose(string? requested)
    {
        LaneWidth narrowest = Vector256.IsHardwareAccelerated ? LaneWidth.Narrow : LaneWidth.Scalar;
        return requested switch
        {
            "scalar" => LaneWidth.Scalar,
            "wide" when Vector512.IsHardwareAccelerated && Vector256.IsHardwareAccelerated => LaneWidth.Wide,
            _ => narrowest,
        };
    }

    private static string Name(LaneWidth width) => width switch
    {
        LaneWidth.Scalar => "scalar",
        LaneWidth.Narrow => "narrow",
        _ => "wide",
    };
}
