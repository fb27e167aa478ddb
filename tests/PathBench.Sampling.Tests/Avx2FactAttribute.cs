using System.Runtime.Intrinsics.X86;

namespace PathBench.Sampling.Tests;

/// <summary>
/// A fact about an AVX2 lane form: reported as skipped, with the reason, on a processor without AVX2 (where the form is
/// never chosen and its instructions would throw), instead of failing there or passing without checking anything.
/// </summary>
public sealed class Avx2FactAttribute : FactAttribute
{
    /// <summary>Skips the fact when the processor lacks AVX2.</summary>
    public Avx2FactAttribute()
    {
        if (!Avx2.IsSupported)
        {
            Skip = "this processor has no AVX2, so the AVX2 lane form is not used here";
        }
    }
}
