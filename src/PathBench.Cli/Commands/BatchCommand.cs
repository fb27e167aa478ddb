using System.CommandLine;
using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using PathBench.Io;
using YamlDotNet.Core;
using YamlDotNet.RepresentationModel;

namespace PathBench.Cli.Commands;

/// <summary>
/// <c>pathbench batch JOBS.yaml</c>: renders a list of jobs one after another, each checkpointed
/// to <c>IMAGE.accum</c>; a job whose sidecar says it completed is skipped, one with an
/// accumulation file is resumed. Appends what it does to <c>JOBS.log</c> beside the file and ends
/// with a summary. A SIGINT or SIGTERM stops the batch after the job in flight has written its
/// checkpoint (exit 3, as <c>render</c>); a job that fails is logged and the batch goes on (exit 1
/// at the end).
/// </summary>
internal static class BatchCommand
{
    private static readonly string[] JobKeys = ["scene", "out", "reference", "options"];

    public static Command Create(CliIo io)
    {
        var jobsPath = new Argument<string>("jobs") { Description = "Jobs file (YAML; see scenes/batch.md)" };
        var command = new Command("batch", "Render a list of jobs one after another, skipping finished ones and resuming interrupted ones");
        command.Arguments.Add(jobsPath);
        command.SetAction(parse =>
        {
            string path = parse.GetValue(jobsPath)!;
            List<BatchJob> jobs = Read(path);
            string logPath = Path.ChangeExtension(path, ".log");
            using var log = new StreamWriter(logPath, append: true);
            void Log(string line)
            {
                log.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{DateTime.UtcNow:yyyy-MM-ddTHH:mm:ssZ} {line}"));
                log.Flush();
            }

            Log($"batch {path}: {jobs.Count} jobs");
            var results = new List<(BatchJob Job, string Status, string Detail)>();
            int exit = 0;
            foreach (BatchJob job in jobs)
            {
                if (Completed(job))
                {
                    Log($"{job.Out}: skipped, completed earlier");
                    results.Add((job, "skipped", "completed earlier"));
                    continue;
                }

                bool resume = File.Exists(job.Accumulation);
                // Each job runs as its own command line, which sets its own budget: the batch's goes with it.
                string budget = MemoryBudget.Current.Bytes.ToString(CultureInfo.InvariantCulture);
                string[] args = ["--max-memory", budget, job.Reference ? "reference" : "render", job.Scene, "--out", job.Out, "--checkpoint", job.Accumulation, .. job.Options, .. resume ? new[] { "--resume" } : []];
                Log($"{job.Out}: {(resume ? "resuming" : "starting")}: pathbench {string.Join(' ', args)}");
                var clock = Stopwatch.StartNew();
                using var jobErr = new StringWriter(CultureInfo.InvariantCulture);
                int code = CliApp.Run(args, io.Out, new TeeWriter(io.Error, jobErr));
                string seconds = clock.Elapsed.TotalSeconds.ToString("F1", CultureInfo.InvariantCulture);
                string lastError = jobErr.ToString().Trim().Split('\n').LastOrDefault(l => l.StartsWith("pathbench: error", StringComparison.Ordinal)) ?? "";
                (string status, string detail) = code switch
                {
                    0 => (resume ? "resumed" : "rendered", $"{Spp(job)} spp in {seconds} s"),
                    RenderSession.InterruptedExitCode => ("interrupted", $"{Spp(job)} spp, checkpoint {job.Accumulation}"),
                    _ => ("failed", $"exit {code}: {lastError}"),
                };
                Log($"{job.Out}: {status}, {detail}");
                results.Add((job, status, detail));
                if (code == RenderSession.InterruptedExitCode)
                {
                    exit = RenderSession.InterruptedExitCode;
                    break;
                }

                if (code != 0)
                {
                    exit = CliApp.InternalErrorExitCode;
                }
            }

            io.Out.WriteLine($"batch {path}: {results.Count(r => r.Status is "rendered" or "resumed")} rendered, {results.Count(r => r.Status == "skipped")} skipped, {results.Count(r => r.Status == "failed")} failed, {jobs.Count - results.Count} not started (log: {logPath})");
            foreach ((BatchJob job, string status, string detail) in results)
            {
                io.Out.WriteLine($"  {status,-11} {job.Out}: {detail}");
            }

            Log($"batch {path}: finished with exit code {exit}");
            return exit;
        });
        return command;
    }

    /// <summary>Whether the job's image and sidecar exist and the sidecar says the render completed.</summary>
    private static bool Completed(BatchJob job)
    {
        string sidecar = Path.ChangeExtension(job.Out, ".json");
        if (!File.Exists(job.Out) || !File.Exists(sidecar))
        {
            return false;
        }

        try
        {
            using JsonDocument doc = JsonDocument.Parse(InputFile.ReadAllBytes(sidecar, reason => new IOException(reason)));
            return doc.RootElement.TryGetProperty("stopped_by", out JsonElement s) && s.GetString() == "complete";
        }
        catch (JsonException)
        {
            return false; // a sidecar cut short by a crash: render (resume) the job again
        }
    }

    private static string Spp(BatchJob job)
    {
        try
        {
            using JsonDocument doc = JsonDocument.Parse(InputFile.ReadAllBytes(Path.ChangeExtension(job.Out, ".json"), reason => new IOException(reason)));
            return doc.RootElement.GetProperty("spp").GetInt32().ToString(CultureInfo.InvariantCulture);
        }
        catch (Exception e) when (e is IOException or JsonException or KeyNotFoundException or InvalidOperationException)
        {
            return "?";
        }
    }

    /// <summary>Reads and checks the jobs file; errors are <c>FILE:LINE:COLUMN: message</c>.</summary>
    internal static List<BatchJob> Read(string path)
    {
        string text = InputFile.ReadAllText(path, reason => new CliUsageException($"{path}: cannot read: {reason}"));

        string folder = Path.GetDirectoryName(Path.GetFullPath(path)) ?? ".";
        var stream = new YamlStream();
        try
        {
            stream.Load(new StringReader(text));
        }
        catch (YamlException e)
        {
            throw new CliUsageException($"{path}:{e.Start.Line}:{e.Start.Column}: not valid YAML: {e.Message}", e);
        }

        if (stream.Documents.Count != 1 || stream.Documents[0].RootNode is not YamlMappingNode root)
        {
            throw new CliUsageException($"{path}:1:1: a jobs file is a mapping with the key 'jobs'");
        }

        foreach (var key in root.Children.Keys)
        {
            if (key.ToString() != "jobs")
            {
                throw Error(path, key, $"unknown key '{key}'; expected 'jobs'");
            }
        }

        if (!root.Children.TryGetValue(new YamlScalarNode("jobs"), out YamlNode? list) || list is not YamlSequenceNode jobs || jobs.Children.Count == 0)
        {
            throw Error(path, root, "'jobs' must be a non-empty list of jobs");
        }

        var result = new List<BatchJob>();
        var outputs = new HashSet<string>(StringComparer.Ordinal);
        foreach (YamlNode node in jobs.Children)
        {
            if (node is not YamlMappingNode job)
            {
                throw Error(path, node, "a job is a mapping with keys scene, out, reference, options");
            }

            foreach (var key in job.Children.Keys)
            {
                if (!JobKeys.Contains(key.ToString()))
                {
                    throw Error(path, key, $"unknown key '{key}' in a job; expected one of: {string.Join(", ", JobKeys)}");
                }
            }

            string scene = Path.GetFullPath(Path.Combine(folder, Scalar(path, job, "scene", required: true)!));
            string output = Path.GetFullPath(Path.Combine(folder, Scalar(path, job, "out", required: true)!));
            if (!outputs.Add(output))
            {
                throw Error(path, job, $"two jobs write {output}");
            }

            bool reference = Scalar(path, job, "reference", required: false) switch
            {
                null or "false" => false,
                "true" => true,
                string other => throw Error(path, job.Children[new YamlScalarNode("reference")], $"'reference' must be true or false, got '{other}'"),
            };
            var options = new List<string>();
            if (job.Children.TryGetValue(new YamlScalarNode("options"), out YamlNode? optionsNode))
            {
                if (optionsNode is not YamlMappingNode map)
                {
                    throw Error(path, optionsNode, "'options' must be a mapping of render options, e.g. { spp: 4096, seed: 1 }");
                }

                foreach ((YamlNode k, YamlNode v) in map.Children)
                {
                    string name = k.ToString();
                    if (name is "out" or "checkpoint" or "resume" or "shard")
                    {
                        throw Error(path, k, $"option '{name}' is set by the batch itself");
                    }

                    if (v is not YamlScalarNode value)
                    {
                        throw Error(path, v, $"option '{name}' must have a single value");
                    }

                    if (value.Value == "true")
                    {
                        options.Add("--" + name);
                    }
                    else if (value.Value != "false")
                    {
                        options.Add("--" + name);
                        options.Add(value.Value ?? "");
                    }
                }
            }

            result.Add(new BatchJob(scene, output, Path.ChangeExtension(output, ".accum"), reference, options));
        }

        return result;
    }

    private static string? Scalar(string path, YamlMappingNode job, string key, bool required)
    {
        if (!job.Children.TryGetValue(new YamlScalarNode(key), out YamlNode? node))
        {
            return required ? throw Error(path, job, $"a job needs '{key}'") : null;
        }

        return node is YamlScalarNode { Value: { Length: > 0 } v } ? v : throw Error(path, node, $"'{key}' must be a non-empty text");
    }

    private static CliUsageException Error(string path, YamlNode node, string message) =>
        new($"{path}:{node.Start.Line}:{node.Start.Column}: {message}");

    /// <summary>Writes to the console and keeps a copy, so the batch can log a job's error line.</summary>
    internal sealed class TeeWriter(TextWriter first, TextWriter second) : TextWriter
    {
        /// <summary>The writer shown to the user (the console when run from a shell).</summary>
        public TextWriter First => first;

        public override System.Text.Encoding Encoding => first.Encoding;

        public override void Write(char value)
        {
            first.Write(value);
            second.Write(value);
        }

        public override void Write(string? value)
        {
            first.Write(value);
            second.Write(value);
        }

        public override void WriteLine(string? value)
        {
            first.WriteLine(value);
            second.WriteLine(value);
        }
    }
}

/// <summary>One render of a batch.</summary>
/// <param name="Scene">Scene file, absolute.</param>
/// <param name="Out">Image file, absolute.</param>
/// <param name="Accumulation">Its checkpoint, <c>IMAGE.accum</c>.</param>
/// <param name="Reference">Render with <c>reference</c> rather than <c>render</c>.</param>
/// <param name="Options">Further render options, as command-line words.</param>
internal sealed record BatchJob(string Scene, string Out, string Accumulation, bool Reference, IReadOnlyList<string> Options);
