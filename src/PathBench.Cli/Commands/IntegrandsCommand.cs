using System.CommandLine;
using System.Globalization;
using System.Numerics;
using PathBench.Io;
using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary><c>pathbench integrands</c>: RMSE on the analytic test integrands over replicates, and the fitted convergence slopes.</summary>
internal static class IntegrandsCommand
{
    public static Command Create(CliIo io)
    {
        var sampler = new SamplerOptions();
        var minCount = new Option<int>("--min-count") { Description = "Smallest count (a power of two)", DefaultValueFactory = _ => 4 };
        var maxCount = new Option<int>("--max-count") { Description = "Largest count (a power of two)", DefaultValueFactory = _ => 4096 };
        var replicates = new Option<int>("--replicates") { Description = "Independent replicates (seeds seed, seed+1, ...) per count", DefaultValueFactory = _ => 32 };
        var threads = new Option<int>("--threads") { Description = "Worker threads (results do not depend on it)", DefaultValueFactory = _ => Environment.ProcessorCount };
        var json = new Option<bool>("--json") { Description = "Write JSON instead of a table" };

        var command = new Command("integrands", "RMSE of a generator on analytic test integrands over [0,1)^2 and the log-log convergence slope");
        sampler.AddTo(command);
        command.Options.Add(minCount);
        command.Options.Add(maxCount);
        command.Options.Add(replicates);
        command.Options.Add(threads);
        command.Options.Add(json);
        command.SetAction(parse =>
        {
            int lo = parse.GetValue(minCount), hi = parse.GetValue(maxCount), k = parse.GetValue(replicates), t = parse.GetValue(threads);
            SamplerOptions.RequireAtLeast("--min-count", lo, 1);
            SamplerOptions.RequireAtLeast("--max-count", hi, lo);
            SamplerOptions.RequireAtMost("--max-count", hi, 1 << 24, "points per replicate");
            SamplerOptions.RequireAtLeast("--replicates", k, 2);
            SamplerOptions.RequireAtMost("--replicates", k, 100_000, "replicates per count");
            SamplerOptions.RequireAtLeast("--threads", t, 1);
            if (!BitOperations.IsPow2(lo) || !BitOperations.IsPow2(hi))
            {
                throw new CliUsageException($"--min-count and --max-count must be powers of two, got {lo} and {hi}");
            }

            // Before any point is drawn: one estimate (a double) per count, replicate and integrand, and
            // each worker's generator tables for the largest count.
            int ladder = BitOperations.Log2((uint)hi) - BitOperations.Log2((uint)lo) + 1;
            Int128 bytes = ((Int128)ladder * k * TestIntegrands.All.Count * sizeof(double)) + ((Int128)hi * SamplerOptions.GeneratorBytesPerPoint * t);
            MemoryBudget.Current.Require(bytes, FormattableString.Invariant($"--min-count {lo} --max-count {hi} ({ladder} counts) --replicates {k} --threads {t}"));
            SamplerSpec spec = sampler.Spec(parse, lo);
            IReadOnlyList<IntegrandConvergence> results = ConvergenceStudy.Run(spec.Generator, spec.Randomize, spec.Antithetic, lo, hi, k, spec.Seed, t);

            if (parse.GetValue(json))
            {
                JsonOutput.Write(io.Out, w =>
                {
                    w.WriteStartObject();
                    w.WriteString("generator", spec.Generator);
                    w.WriteString("randomize", spec.RandomizeName);
                    w.WriteNumber("seed", spec.Seed);
                    w.WriteNumber("replicates", k);
                    w.WriteStartArray("integrands");
                    foreach (IntegrandConvergence r in results)
                    {
                        w.WriteStartObject();
                        w.WriteString("name", r.Integrand);
                        w.Number("exact", r.Exact);
                        w.WriteStartArray("counts");
                        foreach (int c in r.Counts)
                        {
                            w.WriteNumberValue(c);
                        }

                        w.WriteEndArray();
                        w.WriteStartArray("rmse");
                        foreach (double e in r.Rmse)
                        {
                            w.NumberValue(e);
                        }

                        w.WriteEndArray();
                        w.Number("slope", r.Fit.Slope);
                        w.Number("slope_low", r.Fit.SlopeLow);
                        w.Number("slope_high", r.Fit.SlopeHigh);
                        w.WriteEndObject();
                    }

                    w.WriteEndArray();
                    w.WriteEndObject();
                });
                return 0;
            }

            var inv = CultureInfo.InvariantCulture;
            io.Out.WriteLine($"{spec.Generator} / {spec.RandomizeName}, {k} replicates, seed {spec.Seed}; RMSE against the exact integral");
            io.Out.Write("integrand ");
            foreach (int c in results[0].Counts)
            {
                io.Out.Write(string.Create(inv, $"{c,10}"));
            }

            io.Out.WriteLine("     slope  (95% interval)");
            foreach (IntegrandConvergence r in results)
            {
                io.Out.Write($"{r.Integrand,-10}");
                foreach (double e in r.Rmse)
                {
                    io.Out.Write(string.Create(inv, $"{e,10:0.000e+0}"));
                }

                io.Out.WriteLine(string.Create(inv, $"  {r.Fit.Slope,8:F3}  ({r.Fit.SlopeLow:F3}, {r.Fit.SlopeHigh:F3})"));
            }

            return 0;
        });
        return command;
    }
}
