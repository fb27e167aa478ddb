using PathBench.Io;
using PathBench.TestSupport;

namespace PathBench.Cli.Tests.Io;

/// <summary>Whole-file reads (sidecars, baselines, summaries, suites) are held to the memory budget from the file's length, before it is read (our own rule, README: common practice).</summary>
public sealed class InputFileBudgetTests
{
    [Fact]
    public void A_whole_file_read_above_the_budget_is_refused_before_reading()
    {
        using var dir = new TempFolder();
        string path = dir.Write("baseline.json", new string(' ', 4000));
        MemoryBudget saved = MemoryBudget.Current;
        try
        {
            // 4000 bytes and what a parser builds from them, 12000 bytes: above 10 000, within 20 000.
            MemoryBudget.Current = new MemoryBudget(10_000);
            var e = Assert.Throws<IOException>(() => InputFile.ReadAllBytes(path, reason => new IOException($"{path}: {reason}")));
            Assert.Contains("reading the 4000 bytes of the file needs about 11.7 KiB, above the memory budget of 9.77 KiB", e.Message, StringComparison.Ordinal);
            MemoryBudget.Current = new MemoryBudget(20_000);
            Assert.Equal(4000, InputFile.ReadAllBytes(path, reason => new IOException(reason)).Length);
        }
        finally
        {
            MemoryBudget.Current = saved;
        }
    }
}
