using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using PathBench.Io;
using PathBench.Sampling.Generators;

namespace PathBench.Cli.Commands;

/// <summary><c>pathbench points</c>: the points of one pixel's set, as CSV or JSON, streamed.</summary>
internal static class PointsCommand
{
    public static Command Create(CliIo io)
    {
        var sampler = new SamplerOptions();
        var count = new Option<int>("--count") { Description = "Number of points", DefaultValueFactory = _ => 16 };
        var dims = new Option<int>("--dims") { Description = "Dimensions per point", DefaultValueFactory = _ => 2 };
        var pixel = new Option<string>("--pixel") { Description = "Pixel X,Y whose set to print", DefaultValueFactory = _ => "0,0" };
        var format = new Option<string>("--format") { Description = "csv (one point per line) or json", DefaultValueFactory = _ => "csv" };
        format.AcceptOnlyFromAmong("csv", "json");

        var command = new Command("points", "Print the points a generator gives one pixel");
        sampler.AddTo(command);
        command.Options.Add(count);
        command.Options.Add(dims);
        command.Options.Add(pixel);
        command.Options.Add(format);
        command.SetAction(parse =>
        {
            int n = parse.GetValue(count);
            int d = parse.GetValue(dims);
            SamplerOptions.RequireAtLeast("--count", n, 1);
            SamplerOptions.RequireAtLeast("--dims", d, 1);
            (int px, int py) = SamplerOptions.ParsePixel(parse.GetValue(pixel)!);
            // The points are streamed (CSV line by line, JSON flushed as it grows), so only the
            // generator's tables grow with --count.
            MemoryBudget.Current.Require((Int128)n * SamplerOptions.GeneratorBytesPerPoint, FormattableString.Invariant($"the generator's tables for --count {n}"));
            PointSampler s = sampler.CreateSampler(parse, n, d);
            ulong key = s.PixelKey(px, py);
            if (parse.GetValue(format) == "json")
            {
                JsonOutput.Write(io.Out, json =>
                {
                    json.WriteStartObject();
                    json.WriteString("generator", s.Spec.Generator);
                    json.WriteString("randomize", s.Spec.RandomizeName);
                    json.WriteNumber("seed", s.Spec.Seed);
                    json.WriteNumber("count", n);
                    json.WriteNumber("dims", d);
                    json.WriteStartArray("pixel");
                    json.WriteNumberValue(px);
                    json.WriteNumberValue(py);
                    json.WriteEndArray();
                    json.WriteStartArray("points");
                    for (int i = 0; i < n; i++)
                    {
                        json.WriteStartArray();
                        for (int k = 0; k < d; k++)
                        {
                            json.WriteNumberValue(s.Sample(key, (uint)i, k));
                        }

                        json.WriteEndArray();
                        if (json.BytesPending >= JsonOutput.FlushBytes)
                        {
                            json.Flush();
                        }
                    }

                    json.WriteEndArray();
                    json.WriteEndObject();
                });
                return 0;
            }

            var line = new System.Text.StringBuilder();
            for (int i = 0; i < n; i++)
            {
                line.Clear();
                for (int k = 0; k < d; k++)
                {
                    if (k > 0)
                    {
                        line.Append(',');
                    }

                    // Shortest round-trip form, invariant culture: parsing the text gives the same double.
                    line.Append(s.Sample(key, (uint)i, k).ToString("R", CultureInfo.InvariantCulture));
                }

                io.Out.WriteLine(line);
            }

            return 0;
        });
        return command;
    }
}
