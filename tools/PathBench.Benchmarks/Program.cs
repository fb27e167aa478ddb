using BenchmarkDotNet.Running;

namespace PathBench.Benchmarks;

/// <summary>Runs the benchmarks chosen on the command line (e.g. --filter '*Sampler*').</summary>
public static class Program
{
    public static void Main(string[] args) => BenchmarkSwitcher.FromAssembly(typeof(Program).Assembly).Run(args, new BenchConfig());
}
