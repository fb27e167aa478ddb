using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using PathBench.Imaging;
using PathBench.Io;
using PathBench.Rendering;
using PathBench.Rendering.Accumulation;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench merge PARTS… --out IMAGE</c>: adds the exact sums of accumulation files of
/// disjoint sample ranges of one render (shards, checkpoints), so the image is bit-identical to
/// one render of the whole range. Refuses parts of another scene, configuration or version, and
/// overlapping ranges; gaps in [0, planned spp) are refused unless <c>--allow-gaps</c>.
/// </summary>
internal static class MergeCommand
{
    public static Command Create(CliIo io)
    {
        var parts = new Argument<string[]>("parts") { Description = "Accumulation files (from render --shard or --checkpoint)", Arity = ArgumentArity.OneOrMore };
        var output = new Option<string>("--out") { Description = "Merged image: .exr, .pfm or .png; a .json sidecar is written beside it", Required = true };
        var allowGaps = new Option<bool>("--allow-gaps") { Description = "Merge even when ranges of the planned spp are missing (the sidecar lists the ranges held)" };
        var reference = new Option<bool>("--reference") { Description = "Write as 'reference' does: FLOAT EXR and NAME.variance.exr" };
        var accumulation = new Option<string?>("--accumulation") { Description = "Also write the merged accumulation file here" };
        var command = new Command("merge", "Add the exact sums of accumulation files (shards, checkpoints) into one image, bit-identical to a single render");
        command.Arguments.Add(parts);
        foreach (Option o in new Option[] { output, allowGaps, reference, accumulation })
        {
            command.Options.Add(o);
        }

        command.SetAction(parse =>
        {
            string[] files = parse.GetValue(parts)!;
            string outPath = parse.GetValue(output)!;
            ImageFormat format = ImageFile.FormatFromExtension(outPath);
            bool asReference = parse.GetValue(reference);
            if (asReference && format != ImageFormat.Exr)
            {
                throw new CliUsageException($"--out {outPath}: a reference is written as OpenEXR; use a .exr name");
            }

            var clock = Stopwatch.StartNew();
            // Headers first: every part is checked (fields, checksum) before any film is allocated.
            AccumulationHeader[] headers = files.Select(AccumulationFile.ReadHeader).ToArray();
            for (int i = 1; i < files.Length; i++)
            {
                if (headers[0].Identity.FirstDifference(headers[i].Identity) is { } difference)
                {
                    throw new CliUsageException($"{files[i]}: is of another render than {files[0]} ({difference.Replace(" vs ", " there, ")} here)");
                }
            }

            List<SampleRange> ranges = CheckRanges(files, headers, parse.GetValue(allowGaps), out List<SampleRange> gaps);
            // The merged film and the part being read into it.
            FilmOutput.RequireMemory(headers[0].Identity.Width, headers[0].Identity.Height, Math.Min(files.Length, 2), asReference, "merging films");
            var outputs = new OutputPaths();
            foreach (string file in files)
            {
                outputs.Input(file);
            }

            outputs.Output(outPath, "the merged image").Output(Path.ChangeExtension(outPath, ".json"), "the sidecar (JSON)", ".json")
                .Output(asReference ? Analysis.ReferenceImage.VariancePath(outPath) : null, "the variance image", ".exr")
                .Output(parse.GetValue(accumulation), "the merged accumulation file");
            Film? merged = null;
            foreach (string file in files)
            {
                Film film = AccumulationFile.Read(file).Film;
                if (merged is null)
                {
                    merged = film;
                    merged.WideBytesLimit = FilmOutput.WideRoom(film.Width, film.Height, 2, asReference);
                }
                else
                {
                    merged.Merge(film);
                }
            }

            RenderIdentity identity = headers[0].Identity;
            string sidecar = Path.ChangeExtension(outPath, ".json");
            int spp = ranges.Sum(r => r.Count);
            if (parse.GetValue(accumulation) is { } accPath)
            {
                ImageIo.Guard(accPath, () => AccumulationFile.Write(accPath, new Accumulation(identity, Coalesce(ranges), merged!)));
            }

            double meanVariance = FilmOutput.WriteImage(outPath, merged!, spp, asReference);
            double seconds = clock.Elapsed.TotalSeconds;
            FilmOutput.WriteSidecar(sidecar, identity, null, outPath, ranges, merged!, w =>
            {
                w.WriteStartArray("parts");
                foreach (string f in files)
                {
                    w.WriteStringValue(f);
                }

                w.WriteEndArray();
                w.WriteStartArray("missing_ranges");
                foreach (SampleRange g in gaps)
                {
                    w.WriteStartObject();
                    w.WriteNumber("first", g.First);
                    w.WriteNumber("end", g.End);
                    w.WriteEndObject();
                }

                w.WriteEndArray();
                w.Number("merge_seconds", seconds);
                if (asReference)
                {
                    w.WriteString("variance_file", Analysis.ReferenceImage.VariancePath(outPath));
                    w.Number("mean_variance", meanVariance);
                }
            });
            io.Out.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{outPath}: {files.Length} parts, {identity.Width}x{identity.Height}, {spp} spp, {seconds:F2} s{(gaps.Count > 0 ? ", missing " + string.Join(" ", gaps) : "")}"));
            FilmOutput.WarnDropped(io.Out, outPath, merged!);
            return 0;
        });
        return command;
    }

    /// <summary>The parts' ranges, sorted; overlaps are refused, gaps in [0, planned spp) listed and refused unless allowed.</summary>
    private static List<SampleRange> CheckRanges(string[] files, AccumulationHeader[] headers, bool allowGaps, out List<SampleRange> gaps)
    {
        var owned = headers.SelectMany((h, i) => h.Ranges.Select(r => (Range: r, File: files[i]))).OrderBy(p => p.Range.First).ToList();
        for (int i = 1; i < owned.Count; i++)
        {
            if (owned[i].Range.First < owned[i - 1].Range.End)
            {
                throw new CliUsageException($"{owned[i].File}: its samples {owned[i].Range} overlap {owned[i - 1].Range} of {owned[i - 1].File}; a sample counted twice would bias the image");
            }
        }

        int planned = headers[0].Identity.Configuration.FirstOrDefault(p => p.Key == "planned_spp").Value is { } text
            && int.TryParse(text, NumberStyles.None, CultureInfo.InvariantCulture, out int p) ? p : owned[^1].Range.End;
        gaps = [];
        int at = 0;
        foreach ((SampleRange r, _) in owned)
        {
            if (r.First > at)
            {
                gaps.Add(new SampleRange(at, r.First));
            }

            at = r.End;
        }

        if (at < planned)
        {
            gaps.Add(new SampleRange(at, planned));
        }

        if (gaps.Count > 0 && !allowGaps)
        {
            throw new CliUsageException($"the parts miss the sample ranges {string.Join(" ", gaps)} of the planned {planned} spp; render them, or pass --allow-gaps to merge what is there");
        }

        return owned.Select(o => o.Range).ToList();
    }

    /// <summary>Joins ranges that touch, as the accumulation file stores them.</summary>
    private static List<SampleRange> Coalesce(List<SampleRange> sorted)
    {
        var result = new List<SampleRange>();
        foreach (SampleRange r in sorted)
        {
            if (result.Count > 0 && result[^1].End == r.First)
            {
                result[^1] = new SampleRange(result[^1].First, r.End);
            }
            else
            {
                result.Add(r);
            }
        }

        return result;
    }
}
