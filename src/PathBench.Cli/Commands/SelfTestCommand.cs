using System.CommandLine;
using System.Numerics;
using PathBench.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary><c>pathbench selftest</c>: a generator's published properties as tests; exit 1 when one fails.</summary>
internal static class SelfTestCommand
{
    public static Command Create(CliIo io)
    {
        var sampler = new SamplerOptions();
        var count = new Option<int>("--count") { Description = "Points per pixel (a power of two, 16 or more)", DefaultValueFactory = _ => 1024 };
        var threads = new Option<int>("--threads") { Description = "Worker threads (results do not depend on it)", DefaultValueFactory = _ => Environment.ProcessorCount };
        var json = new Option<bool>("--json") { Description = "Write JSON instead of a table" };
        var command = new Command("selftest", "Test a generator and randomization against their published properties: determinism, uniformity, net property, unbiasedness, convergence, independence, warps");
        sampler.AddTo(command);
        command.Options.Add(count);
        command.Options.Add(threads);
        command.Options.Add(json);
        command.SetAction(parse =>
        {
            int n = parse.GetValue(count), t = parse.GetValue(threads);
            SamplerOptions.RequireAtLeast("--count", n, 16);
            SamplerOptions.RequireAtMost("--count", n, 1 << 16, "points per pixel");
            SamplerOptions.RequireAtLeast("--threads", t, 1);
            if (!BitOperations.IsPow2(n))
            {
                throw new CliUsageException($"--count must be a power of two, got {n}");
            }

            SamplerSpec spec = sampler.Spec(parse, n);
            IReadOnlyList<SelfTestResult> results = SamplerSelfTest.Run(spec.Generator, spec.Randomize, spec.Antithetic, n, spec.Seed, t);
            if (parse.GetValue(json))
            {
                JsonOutput.Write(io.Out, w =>
                {
                    w.WriteStartObject();
                    w.WriteString("generator", spec.Generator);
                    w.WriteString("randomize", spec.RandomizeName);
                    w.WriteNumber("count", n);
                    w.WriteBoolean("passed", results.All(r => r.Passed));
                    w.WriteStartArray("tests");
                    foreach (SelfTestResult r in results)
                    {
                        w.WriteStartObject();
                        w.WriteString("test", r.Test);
                        w.WriteString("statistic", r.Statistic);
                        w.WriteString("criterion", r.Criterion);
                        w.WriteString("source", r.Source);
                        w.WriteBoolean("passed", r.Passed);
                        w.WriteEndObject();
                    }

                    w.WriteEndArray();
                    w.WriteEndObject();
                });
            }
            else
            {
                io.Out.WriteLine($"{spec.Generator}/{spec.RandomizeName}, {n} points per pixel");
                int width = results.Max(r => r.Test.Length);
                foreach (SelfTestResult r in results)
                {
                    io.Out.WriteLine($"{(r.Passed ? "pass" : "FAIL")}  {r.Test.PadRight(width)}  {r.Statistic}; {r.Criterion}  [{r.Source}]");
                }

                io.Out.WriteLine($"{results.Count(r => r.Passed)} of {results.Count} tests pass");
            }

            return results.All(r => r.Passed) ? 0 : CheckCommand.FailedExitCode;
        });
        return command;
    }
}
