using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Diagnosers;
using BenchmarkDotNet.Jobs;

namespace PathBench.Benchmarks;

/// <summary>One configuration for every benchmark: allocation counts on, a short but stable job.</summary>
public sealed class BenchConfig : ManualConfig
{
    public BenchConfig()
    {
        Add(DefaultConfig.Instance); // loggers, exporters and columns of the default configuration
        AddDiagnoser(MemoryDiagnoser.Default);
        AddJob(Job.Default.WithWarmupCount(3).WithIterationCount(10));
        WithOptions(ConfigOptions.DisableOptimizationsValidator);
    }
}
