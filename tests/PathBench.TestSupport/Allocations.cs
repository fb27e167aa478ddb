namespace PathBench.TestSupport;

/// <summary>Measures what a piece of work allocates on the calling thread.</summary>
public static class Allocations
{
    /// <summary>
    /// Bytes allocated on this thread by each of three runs of <paramref name="pass"/>, which the
    /// caller has run once already as a warm-up (per-thread tables, lazily built data).
    /// GC.GetAllocatedBytesForCurrentThread counts exactly. An allocation per sample or per ray
    /// allocates in every pass; one-time runtime work (the tiered JIT promoting a method, seen once
    /// as 3128 bytes in a single measured pass of a clean CI run) can land in any one. So "allocates
    /// nothing per item" means the least of the three is zero.
    /// </summary>
    public static long[] OfThreePasses(Action pass)
    {
        ArgumentNullException.ThrowIfNull(pass);
        var allocated = new long[3];
        for (int i = 0; i < allocated.Length; i++)
        {
            long before = GC.GetAllocatedBytesForCurrentThread();
            pass();
            allocated[i] = GC.GetAllocatedBytesForCurrentThread() - before;
        }

        return allocated;
    }
}
