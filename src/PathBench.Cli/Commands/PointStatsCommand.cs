using System.CommandLine;
using System.Globalization;
using System.Numerics;
using PathBench.Io;
using PathBench.Sampling.Analysis;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary><c>pathbench pointstats</c>: L2-star discrepancy and, for powers of two, the t of every 2-D projection.</summary>
internal static class PointStatsCommand
{
    /// <summary>Warnock's formula is O(n²·d): above this count it runs for hours.</summary>
    public const int MaxCount = 1 << 16;

    public static Command Create(CliIo io)
    {
        var sampler = new SamplerOptions();
        var count = new Option<int>("--count") { Description = "Number of points", Required = true };
        var dims = new Option<int>("--dims") { Description = "Dimensions per point", Required = true };
        var pixel = new Option<string>("--pixel") { Description = "Pixel X,Y whose set to measure", DefaultValueFactory = _ => "0,0" };
        var json = new Option<bool>("--json") { Description = "Write JSON instead of a table" };

        var command = new Command("pointstats", "Measure a point set: L2-star discrepancy and (t,m,2)-net quality of each 2-D projection");
        sampler.AddTo(command);
        command.Options.Add(count);
        command.Options.Add(dims);
        command.Options.Add(pixel);
        command.Options.Add(json);
        command.SetAction(parse =>
        {
            int n = parse.GetValue(count);
            int d = parse.GetValue(dims);
            SamplerOptions.RequireAtLeast("--count", n, 1);
            SamplerOptions.RequireAtMost("--count", n, MaxCount, "the exact discrepancy costs n² operations");
            SamplerOptions.RequireAtLeast("--dims", d, 1);
            SamplerOptions.RequireAtMost("--dims", d, 4096, "every pair is measured");
            (int px, int py) = SamplerOptions.ParsePixel(parse.GetValue(pixel)!);
            // The points and the sampler's and the measures' working copies (24 bytes a value: --count
            // 16384 --dims 512 peaked at 21 bytes a value above the idle process, measured with VmHWM)
            // and, for a power-of-two count, the t-value of every pair of dimensions.
            long pairCount = BitOperations.IsPow2(n) ? (long)d * (d - 1) / 2 : 0;
            MemoryBudget.Current.Require(((Int128)n * d * 24) + (pairCount * 24), FormattableString.Invariant($"--count {n} --dims {d}"));
            PointSampler s = sampler.CreateSampler(parse, n, d);
            var points = new double[n * d];
            s.Fill(s.PixelKey(px, py), d, points);

            double l2 = Discrepancy.L2Star(points, d);
            var pairs = new List<(int A, int B, int T)>();
            if (BitOperations.IsPow2(n))
            {
                for (int a = 0; a < d; a++)
                {
                    for (int b = a + 1; b < d; b++)
                    {
                        pairs.Add((a, b, NetQuality.TValue(points, d, a, b)));
                    }
                }
            }

            if (parse.GetValue(json))
            {
                JsonOutput.Write(io.Out, w =>
                {
                    w.WriteStartObject();
                    w.WriteString("generator", s.Spec.Generator);
                    w.WriteString("randomize", s.Spec.RandomizeName);
                    w.WriteNumber("seed", s.Spec.Seed);
                    w.WriteNumber("count", n);
                    w.WriteNumber("dims", d);
                    w.WriteNumber("l2_star", l2);
                    if (BitOperations.IsPow2(n))
                    {
                        w.WriteStartArray("pairs");
                        foreach ((int a, int b, int t) in pairs)
                        {
                            w.WriteStartObject();
                            w.WriteStartArray("dims");
                            w.WriteNumberValue(a);
                            w.WriteNumberValue(b);
                            w.WriteEndArray();
                            w.WriteNumber("t", t);
                            w.WriteEndObject();
                        }

                        w.WriteEndArray();
                    }

                    w.WriteEndObject();
                });
                return 0;
            }

            io.Out.WriteLine($"{s.Spec.Generator} / {s.Spec.RandomizeName}, {n} points in {d} dims, seed {s.Spec.Seed}");
            io.Out.WriteLine(string.Create(CultureInfo.InvariantCulture, $"L2-star discrepancy  {l2:G6}"));
            if (pairs.Count > 0)
            {
                int m = BitOperations.Log2((uint)n);
                io.Out.WriteLine($"(t,{m},2)-net quality of each 2-D projection (t = 0 is best):");
                foreach ((int a, int b, int t) in pairs)
                {
                    io.Out.WriteLine($"  dims {a,3},{b,3}  t = {t}");
                }
            }
            else
            {
                io.Out.WriteLine("net quality: not measured (count is not a power of two)");
            }

            return 0;
        });
        return command;
    }
}
