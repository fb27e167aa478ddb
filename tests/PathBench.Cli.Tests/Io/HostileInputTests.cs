using System.Buffers.Binary;
using System.Diagnostics;
using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;
using PathBench.Imaging;
using PathBench.Io;
using Xunit.Abstractions;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests.Io;

/// <summary>
/// Issue 14, the input/output half: FIFOs never hang a reader, sizes are checked against the
/// memory budget before anything is allocated (and the child process's own peak resident set
/// shows it), outputs are atomic and never replace an input, exposure is bounded, errors quote
/// no secret. Every refusal is one line with exit 2. The expected behaviour is our own rule set
/// (README, DEVELOPERS.md): common practice.
/// </summary>
public sealed class HostileInputTests(ITestOutputHelper output)
{
    // Far above the time any refusal takes on a loaded two-core machine (they take milliseconds);
    // only a hang reaches it, so the outcome does not depend on scheduling.
    private static readonly TimeSpan HangBound = TimeSpan.FromSeconds(60);

    // A refused input must not make the process grow: the runtime alone peaks near 40 MiB here;
    // 256 MiB is far below every refused size (gigabytes) and far above the idle process.
    private const long PeakBound = 256L << 20;

    private static string Executable => Path.Combine(AppContext.BaseDirectory, "pathbench");

    private const string Scene = TestScenes.LampAndBall;

    private const string Secret = "root:$6$saltsaltsalt$0123456789abcdefSECRETHASH:19000:0:99999:7:::";

    /// <summary>Each reader and command given a FIFO where it expects a file: {fifo} is the pipe, {dir} the folder.</summary>
    public static TheoryData<string, string[]> FifoCases => new()
    {
        { "scene", ["render", "{fifo}"] },
        { "reference scene", ["reference", "{fifo}", "--out", "{dir}/r.exr"] },
        { "mesh", ["render", "{dir}/mesh-scene.yaml", "--out", "{dir}/m.exr"] },
        { "compare reference", ["compare", "{fifo}", "{dir}/a.pfm"] },
        { "compare test", ["compare", "{dir}/a.pfm", "{fifo}"] },
        { "convert input", ["convert", "{fifo}", "{dir}/o.png"] },
        { "convert output", ["convert", "{dir}/a.pfm", "{fifo}.png"] },
        { "render output", ["render", "{dir}/s.yaml", "--out", "{fifo}.exr"] },
        { "merge part", ["merge", "{fifo}", "--out", "{dir}/m.exr"] },
        { "resume checkpoint", ["render", "{dir}/s.yaml", "--checkpoint", "{fifo}", "--resume", "--out", "{dir}/c.exr"] },
        { "batch", ["batch", "{fifo}"] },
        { "study", ["study", "{fifo}", "--out", "{dir}/st"] },
        { "check suite", ["check", "{fifo}", "--work", "{dir}/w"] },
        { "report summary", ["report", "{dir}/fifo-report"] },
        { "point file", ["points", "--generator", "file:{fifo}", "--count", "4"] },
        { "plug-in", ["--plugin", "{fifo}", "samplers"] },
    };

    [Theory]
    [MemberData(nameof(FifoCases))]
    public void A_fifo_is_refused_with_one_line_and_never_waited_on(string name, string[] template)
    {
        using var dir = new TempFolder();
        string fifo = dir.File("pipe");
        MakeFifo(fifo);
        MakeFifo(fifo + ".png");
        MakeFifo(fifo + ".exr");
        Directory.CreateDirectory(dir.File("fifo-report"));
        MakeFifo(dir.File("fifo-report/summary.json"));
        dir.Write("s.yaml", Scene);
        dir.Write("mesh-scene.yaml", Scene + "\n  - { type: mesh, file: pipe, material: white }\n");
        WritePfm(dir.File("a.pfm"), 4, 4);

        string[] args = template.Select(a => a.Replace("{fifo}", fifo, StringComparison.Ordinal).Replace("{dir}", dir.Path, StringComparison.Ordinal)).ToArray();
        (int code, string err, _) = RunChild(args, peakFile: null);
        output.WriteLine($"{name}: exit {code}: {err.Trim()}");
        Assert.True(code == 2, $"{name}: exit {code}: {err}");
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.Contains("named pipe", err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("{dir}", "a folder")]
    [InlineData("/dev/null", "a device")]
    public void Folders_and_devices_are_refused_as_inputs(string input, string kind)
    {
        using var dir = new TempFolder();
        string path = input.Replace("{dir}", dir.Path, StringComparison.Ordinal);
        foreach (string[] args in new[] { new[] { "render", path }, ["convert", path, dir.File("o.png")], ["compare", path, path], ["batch", path], ["check", path] })
        {
            var r = Run(args);
            Assert.True(r.Code == 2, $"{string.Join(' ', args)}: exit {r.Code}: {r.Err}");
            Assert.Single(r.Err.TrimEnd('\n').Split('\n'));
            Assert.Contains($"not a regular file but {kind}", r.Err, StringComparison.Ordinal);
        }
    }

    /// <summary>The issue's oversized inputs, name, arguments (files made by <see cref="MakeOversized"/>), and a fragment of the refusal.</summary>
    public static TheoryData<string, string[], string> OversizedCases => new()
    {
        { "pfm 9459² compare", ["compare", "{dir}/big.pfm", "{dir}/big.pfm"], "decoding the 9459x9459 pixels" },
        { "png 9459² compare", ["compare", "{dir}/big.png", "{dir}/big.png"], "decoding the 9459x9459 pixels" },
        { "exr 9459² compare", ["compare", "{dir}/big.exr", "{dir}/big.exr"], "decoding the 9459x9459 pixels" },
        { "exr 9459² convert", ["convert", "{dir}/big.exr", "{dir}/o.exr"], "decoding the 9459x9459 pixels" },
        { "render 8192² at 1 spp", ["render", "{dir}/big.yaml", "--spp", "1", "--out", "{dir}/r.exr"], "a render of 8192x8192 pixels" },
        { "pointstats 65536 x 4096", ["pointstats", "--generator", "sobol", "--count", "65536", "--dims", "4096"], "--count 65536 --dims 4096" },
        { "side-by-side strip", ["compare", "{dir}/wide.pfm", "{dir}/wide.pfm", "--side-by-side", "{dir}/s.png"], "beyond the encoder's limit" },
        { "budget lowered", ["--max-memory", "100K", "compare", "{dir}/a.pfm", "{dir}/a.pfm"], "above the memory budget of 100 KiB" },
        { "study of 8192²", ["study", "{dir}/big.study.yaml", "--out", "{dir}/st", "--quiet"], "a study of 8192x8192 pixels, 2 configurations, 2 sample counts and 4 replicates needs about" },
        { "check render case of 8192²", ["check", "{dir}/big-render.suite.yaml", "--work", "{dir}/w"], "case 'big' of 8192x8192 pixels, 1 configurations, 1 sample counts and 2 replicates needs about" },
        // 64² decodes in 48 KiB; measuring the case holds 4096 × 132 bytes more, above 100 KiB.
        { "check files case", ["--max-memory", "100K", "check", "{dir}/files.suite.yaml", "--work", "{dir}/w"], "and measuring case 'files' (1 sample counts, 2 replicates) needs about" },
        { "integrands 100000 replicates", ["--max-memory", "1M", "integrands", "--generator", "sobol", "--replicates", "100000"], "--min-count 4 --max-count 4096 (11 counts) --replicates 100000" },
        { "points 10^6", ["--max-memory", "1M", "points", "--generator", "lattice", "--count", "1000000"], "the generator's tables for --count 1000000 needs about 15.3 MiB" },
    };

    [Theory]
    [MemberData(nameof(OversizedCases))]
    public void Oversized_inputs_are_refused_before_allocation_and_the_peak_stays_small(string name, string[] template, string expect)
    {
        using var dir = new TempFolder();
        MakeOversized(dir);
        string[] args = template.Select(a => a.Replace("{dir}", dir.Path, StringComparison.Ordinal)).ToArray();
        string peakFile = dir.File("peak.txt");
        (int code, string err, long peak) = RunChild(args, peakFile);
        output.WriteLine($"{name}: exit {code}, peak resident {peak / 1048576.0:F1} MiB: {err.Trim()}");
        Assert.True(code == 2, $"{name}: exit {code}: {err}");
        // check's progress names each case it starts ("pathbench: case NAME"); the refusal is the one error line.
        Assert.Single(err.TrimEnd('\n').Split('\n'), line => !line.StartsWith("pathbench: case ", StringComparison.Ordinal));
        Assert.Contains(expect, err, StringComparison.Ordinal);
        Assert.True(peak > 0 && peak < PeakBound, $"{name}: peak resident set {peak} bytes");
    }

    [Fact]
    public void The_budget_message_says_what_was_asked_the_budget_and_how_to_raise_it()
    {
        using var dir = new TempFolder();
        MakeOversized(dir);
        var r = Run("compare", dir.File("big.pfm"), dir.File("big.pfm"));
        Assert.Equal(2, r.Code);
        Assert.Contains("needs about", r.Err, StringComparison.Ordinal);
        Assert.Contains("above the memory budget of 2 GiB", r.Err, StringComparison.Ordinal);
        Assert.Contains("(--max-memory 4G would do)", r.Err, StringComparison.Ordinal);
        Assert.Contains("(--max-memory 1M would do)", Run("--max-memory", "100K", "compare", dir.File("a.pfm"), dir.File("a.pfm")).Err, StringComparison.Ordinal);
        // Raised, the same header passes the budget and the file's own length refuses it.
        var raised = Run("--max-memory", "64G", "compare", dir.File("big.pfm"), dir.File("big.pfm"));
        Assert.Equal(2, raised.Code);
        Assert.Contains("truncated", raised.Err, StringComparison.Ordinal);
        Assert.Contains("--max-memory", Run("--max-memory", "lots", "samplers").Err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("512M", 512L << 20)]
    [InlineData("4G", 4L << 30)]
    [InlineData("1.5GiB", 3L << 29)]
    [InlineData("2048K", 2L << 20)]
    [InlineData("1000", 1000L)]
    public void Budget_sizes_parse_in_powers_of_1024(string text, long bytes) => Assert.Equal(bytes, MemoryBudget.Parse(text).Bytes);

    [Theory]
    [InlineData("convert", "200")]
    [InlineData("convert", "-200")]
    [InlineData("compare", "1e308")]
    [InlineData("compare", "-32.5")]
    public void Exposure_outside_plus_minus_32_stops_is_refused(string command, string stops)
    {
        using var dir = new TempFolder();
        WritePfm(dir.File("a.pfm"), 4, 4);
        string[] args = command == "convert"
            ? ["convert", dir.File("a.pfm"), dir.File("o.pfm"), "--exposure", stops]
            : ["compare", dir.File("a.pfm"), dir.File("a.pfm"), "--side-by-side", dir.File("s.png"), "--exposure", stops];
        var r = Run(args);
        Assert.Equal(2, r.Code);
        Assert.Contains("--exposure must be between -32 and 32 stops", r.Err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("o.pfm")) || File.Exists(dir.File("s.png")));
    }

    [Fact]
    public void Exposure_of_32_stops_keeps_a_finite_image()
    {
        using var dir = new TempFolder();
        WritePfm(dir.File("a.pfm"), 4, 4);
        Assert.Equal(0, Run("convert", dir.File("a.pfm"), dir.File("o.pfm"), "--exposure", "32").Code);
        RgbImage image = ImageFile.Read(dir.File("o.pfm")).Image;
        // 0.5 · 2^32 exactly: a power-of-two scale is exact in float32 (IEEE 754).
        Assert.All(image.Data, v => Assert.Equal(0.5f * 4294967296f, v));
    }

    [Fact]
    public void An_output_naming_an_input_is_refused_through_links_and_the_input_is_kept()
    {
        using var dir = new TempFolder();
        string a = dir.File("a.png");
        ImageFile.Write(a, new RgbImage(4, 4));
        ImageFile.Write(dir.File("b.png"), new RgbImage(4, 4));
        byte[] before = File.ReadAllBytes(a);
        File.CreateSymbolicLink(dir.File("link.png"), a);
        File.CreateSymbolicLink(dir.File("linkdir"), dir.Path);

        foreach (string heat in new[] { a, dir.File("link.png"), Path.Combine(dir.File("linkdir"), "a.png") })
        {
            var r = Run("compare", a, dir.File("b.png"), "--heatmap", heat);
            Assert.Equal(2, r.Code);
            Assert.Contains("would overwrite the input", r.Err, StringComparison.Ordinal);
        }

        Assert.Contains("would overwrite the input", Run("convert", a, dir.File("link.png")).Err, StringComparison.Ordinal);
        Assert.Equal(before, File.ReadAllBytes(a));
    }

    [Fact]
    public void The_issue_case_compare_a_a_heatmap_a_is_refused()
    {
        using var dir = new TempFolder();
        string a = dir.File("a.pfm");
        WritePfm(a, 4, 4);
        byte[] before = File.ReadAllBytes(a);
        var r = Run("compare", a, a, "--heatmap", a);
        Assert.Equal(2, r.Code);
        Assert.Equal(before, File.ReadAllBytes(a));
    }

    [Fact]
    public void A_heat_map_named_pfm_is_refused_as_png_bytes_in_a_pfm()
    {
        using var dir = new TempFolder();
        WritePfm(dir.File("a.pfm"), 4, 4);
        var r = Run("compare", dir.File("a.pfm"), dir.File("a.pfm"), "--heatmap", dir.File("h.pfm"));
        Assert.Equal(2, r.Code);
        Assert.Contains("the heat map (PNG) is written here, but the name ends in '.pfm'", r.Err, StringComparison.Ordinal);
        Assert.False(File.Exists(dir.File("h.pfm")));
        Assert.Contains("name ends in '.pfm'", Run("compare", dir.File("a.pfm"), dir.File("a.pfm"), "--side-by-side", dir.File("s.pfm")).Err, StringComparison.Ordinal);
    }

    [Fact]
    public void A_render_whose_sidecar_would_replace_the_scene_is_refused()
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.json", Scene);
        var r = Run("render", scene, "--out", dir.File("s.pfm"));
        Assert.Equal(2, r.Code);
        Assert.Contains("the sidecar (JSON) would overwrite the input", r.Err, StringComparison.Ordinal);
        Assert.Equal(Scene, File.ReadAllText(scene));
        Assert.False(File.Exists(dir.File("s.pfm")));
        // A scene named like an image, rendered onto itself.
        Assert.Contains("the image would overwrite the input", Run("render", dir.Write("t.exr", Scene), "--out", dir.File("t.exr")).Err, StringComparison.Ordinal);
        Assert.Equal(Scene, File.ReadAllText(dir.File("t.exr")));
    }

    [Fact]
    public void A_render_whose_checkpoint_would_replace_a_mesh_of_the_scene_is_refused()
    {
        using var dir = new TempFolder();
        const string obj = "v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n";
        string mesh = dir.Write("tri.obj", obj);
        string scene = dir.Write("m.yaml", Scene + "\n  - { type: mesh, file: tri.obj, material: white }\n");
        var r = Run("render", scene, "--checkpoint", mesh, "--out", dir.File("m.pfm"));
        Assert.Equal(2, r.Code);
        Assert.Contains("the accumulation file would overwrite the input", r.Err, StringComparison.Ordinal);
        Assert.Equal(obj, File.ReadAllText(mesh));
        Assert.False(File.Exists(dir.File("m.pfm")));
    }

    [Fact]
    public void A_failed_write_keeps_the_previous_file_and_leaves_no_temp_file()
    {
        using var dir = new TempFolder();
        WritePfm(dir.File("a.pfm"), 4, 4);
        string name = "kept-" + Guid.NewGuid().ToString("N") + ".png";
        string target = dir.File(name);
        File.WriteAllText(target, "previous content");
        Environment.SetEnvironmentVariable(AtomicFile.FailVariable, name);
        try
        {
            var r = Run("convert", dir.File("a.pfm"), target);
            Assert.Equal(2, r.Code);
            Assert.Contains("injected write failure", r.Err, StringComparison.Ordinal);
        }
        finally
        {
            Environment.SetEnvironmentVariable(AtomicFile.FailVariable, null);
        }

        Assert.Equal("previous content", File.ReadAllText(target));
        Assert.DoesNotContain(Directory.GetFiles(dir.Path), f => AtomicFile.IsTempName(Path.GetFileName(f)));
        Assert.Equal(0, Run("convert", dir.File("a.pfm"), target).Code);
        Assert.Equal(ImageFormat.Png, ImageFile.Sniff(File.ReadAllBytes(target)));
    }

    [Fact]
    public void An_exception_inside_a_write_keeps_the_previous_file()
    {
        using var dir = new TempFolder();
        string target = dir.File("t.json");
        File.WriteAllText(target, "old");
        Assert.Throws<InvalidOperationException>(() => AtomicFile.Write(target, s =>
        {
            s.Write("half of the new content"u8);
            throw new InvalidOperationException("fails halfway");
        }));
        Assert.Equal("old", File.ReadAllText(target));
        Assert.Single(Directory.GetFiles(dir.Path));
    }

    /// <summary>
    /// Every output goes through <see cref="AtomicFile"/> and every input through <see cref="InputFile"/>:
    /// no other source file writes, renames or reads whole files by itself.
    /// </summary>
    [Fact]
    public void No_source_file_writes_or_reads_files_around_the_io_layer()
    {
        string[] forbidden = ["File.Move(", "FileMode.Create", "File.WriteAll", "File.ReadAll", ".SavePng(", ".SaveSvg(", "new FileStream("];
        var offenders = new List<string>();
        foreach (string file in Directory.EnumerateFiles(Path.Combine(RepositoryPaths.Root, "src"), "*.cs", SearchOption.AllDirectories))
        {
            string rel = Path.GetRelativePath(RepositoryPaths.Root, file).Replace('\\', '/');
            if (rel.Contains("/obj/", StringComparison.Ordinal) || rel.StartsWith("src/PathBench.Io/", StringComparison.Ordinal))
            {
                continue;
            }

            string text = File.ReadAllText(file);
            // "InputFile.ReadAllBytes" is the layer itself: only a bare File.* call counts.
            offenders.AddRange(forbidden.Where(f => Regex.IsMatch(text, @"(?<![A-Za-z])" + Regex.Escape(f))).Select(f => $"{rel}: {f}"));
        }

        // The render's writability probe opens for append and creates nothing it keeps (RequireWritable).
        offenders.Remove("src/PathBench.Cli/Commands/RenderCommand.cs: new FileStream(");
        Assert.Empty(offenders);
    }

    [Fact]
    public void A_mesh_that_is_a_password_file_is_not_quoted()
    {
        using var dir = new TempFolder();
        dir.Write("shadow", Secret + "\n");
        string scene = dir.Write("s.yaml", Scene + "\n  - { type: mesh, file: shadow, material: white }\n");
        var r = Run("render", scene, "--out", dir.File("o.exr"));
        Assert.Equal(2, r.Code);
        Assert.Contains("is this an OBJ file?", r.Err, StringComparison.Ordinal);
        Assert.DoesNotContain("salt", r.Err, StringComparison.Ordinal);
        Assert.DoesNotContain("root", r.Err, StringComparison.Ordinal);

        // The same file given as the scene itself.
        var s = Run("render", dir.File("shadow"), "--out", dir.File("p.exr"));
        Assert.Equal(2, s.Code);
        Assert.DoesNotContain("SECRETHASH", s.Err, StringComparison.Ordinal);
        Assert.DoesNotContain("saltsaltsalt", s.Err, StringComparison.Ordinal);
    }

    [Fact]
    public void A_binary_mesh_is_refused_without_any_excerpt()
    {
        using var dir = new TempFolder();
        File.WriteAllBytes(dir.File("bin.obj"), [(byte)'v', (byte)' ', 0xC3, 0x28, 0xFF, 0xFE, (byte)'S', (byte)'E', (byte)'C', (byte)'\n']);
        string scene = dir.Write("s.yaml", Scene + "\n  - { type: mesh, file: bin.obj, material: white }\n");
        var r = Run("render", scene, "--out", dir.File("o.exr"));
        Assert.Equal(2, r.Code);
        Assert.Contains("not UTF-8 text", r.Err, StringComparison.Ordinal);
        Assert.DoesNotContain("SEC", r.Err, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("plain words", "plain words")]
    [InlineData("tab\there", "tab?here")]
    [InlineData("0123456789012345678901234567890123456789", "01234567890123456789012345678...")]
    [InlineData("\u0001\u0002\u0003x", TextExcerpt.NotShown)]
    public void Excerpts_are_short_printable_ascii(string text, string shown) => Assert.Equal(shown, TextExcerpt.Of(text));

    /// <summary>
    /// A plain render (no checkpoint) signalled while it certainly runs (it waits for the signal after
    /// its first pass, <see cref="Commands.RenderSession.SignalWaitVariable"/>) says in one line what
    /// it wrote and what it did not, and what it wrote is whole.
    /// </summary>
    [Theory]
    [InlineData("INT", "SIGINT")]
    [InlineData("TERM", "SIGTERM")]
    public async Task A_signalled_plain_render_says_what_was_and_was_not_written(string signal, string name)
    {
        using var dir = new TempFolder();
        string scene = dir.Write("s.yaml", Scene);
        var info = new ProcessStartInfo(Executable) { RedirectStandardError = true, RedirectStandardOutput = true, UseShellExecute = false };
        foreach (string a in new[] { "render", scene, "--spp", "64", "--threads", "1", "--quiet", "--out", dir.File("o.exr") })
        {
            info.ArgumentList.Add(a);
        }

        info.Environment[Commands.RenderSession.SignalWaitVariable] = "1";
        using Process child = Process.Start(info)!;
        Task<string> stdout = child.StandardOutput.ReadToEndAsync();
        string? line;
        while ((line = child.StandardError.ReadLine()) is not null && line != Commands.RenderSession.SignalWaitMarker)
        {
        }

        Assert.Equal(Commands.RenderSession.SignalWaitMarker, line);
        using (Process kill = Process.Start(new ProcessStartInfo("kill", ["-" + signal, child.Id.ToString(CultureInfo.InvariantCulture)]))!)
        {
            kill.WaitForExit();
            Assert.Equal(0, kill.ExitCode);
        }

        string rest = await child.StandardError.ReadToEndAsync();
        Assert.True(child.WaitForExit(HangBound), "the render did not end after the signal");
        Assert.Equal(Commands.RenderSession.InterruptedExitCode, child.ExitCode);
        string[] lines = rest.TrimEnd('\n').Split('\n');
        string said = Assert.Single(lines);
        output.WriteLine(said);
        Assert.StartsWith($"pathbench: stopped by {name} after 1 of 64 spp: wrote {dir.File("o.exr")}, {dir.File("o.json")} with the 1 spp done; the other 63 spp were not rendered and no checkpoint was written", said, StringComparison.Ordinal);
        Assert.Contains("stopped by signal", await stdout, StringComparison.Ordinal);
        Assert.Equal(24, ImageFile.Read(dir.File("o.exr")).Image.Width);
        Assert.DoesNotContain(Directory.GetFiles(dir.Path), f => AtomicFile.IsTempName(Path.GetFileName(f)));
    }

    // ---- helpers ----------------------------------------------------------------------------------

    /// <summary>The issue's inputs: small files declaring 9459² pixels (PFM, PNG, EXR), an 8192² scene, a wide PFM for the strip.</summary>
    private static void MakeOversized(TempFolder dir)
    {
        File.WriteAllBytes(dir.File("big.pfm"), Encoding.ASCII.GetBytes("PF\n9459 9459\n-1.0\n").Concat(new byte[64]).ToArray());
        File.WriteAllBytes(dir.File("wide.pfm"), Encoding.ASCII.GetBytes("PF\n400000 1\n-1.0\n").Concat(new byte[64]).ToArray());
        WritePfm(dir.File("a.pfm"), 64, 64);
        File.WriteAllBytes(dir.File("big.png"), PngDeclaring(9459, 9459));
        File.WriteAllBytes(dir.File("big.exr"), ExrDeclaring(dir.File("small.exr"), 9459, 9459));
        dir.Write("big.yaml", Scene.Replace("resolution: [24, 16]", "resolution: [8192, 8192]", StringComparison.Ordinal));
        dir.Write("big.study.yaml", "scene: big.yaml\nreference: { spp: 4 }\nspp: [1, 2]\nreplicates: 4\nconfigurations:\n  - { name: a, generator: random }\n  - { name: b, generator: sobol }\n");
        dir.Write("big-render.suite.yaml", "reference: { spp: 4 }\ncases:\n  - { name: big, render: { scene: big.yaml, generator: random }, spp: 4, replicates: 2, assert: { nonfinite_at_most: 0 } }\n");
        WritePfm(dir.File("r1.pfm"), 64, 64);
        WritePfm(dir.File("r2.pfm"), 64, 64);
        dir.Write("files.suite.yaml", "reference: { path: a.pfm }\ncases:\n  - { name: files, images: [ \"r*.pfm\" ], spp: 16, assert: { nonfinite_at_most: 0 } }\n");
    }

    /// <summary>A valid 4x4 grey PNG whose IHDR then claims another size (its CRC recomputed: PNG specification, "CRC algorithm").</summary>
    private static byte[] PngDeclaring(int width, int height)
    {
        using var ms = new MemoryStream();
        PngCodec.Write(ms, new RgbImage(4, 4));
        byte[] png = ms.ToArray();
        BinaryPrimitives.WriteInt32BigEndian(png.AsSpan(16), width);
        BinaryPrimitives.WriteInt32BigEndian(png.AsSpan(20), height);
        uint crc = Crc32(png.AsSpan(12, 17));
        BinaryPrimitives.WriteUInt32BigEndian(png.AsSpan(29), crc);
        return png;
    }

    /// <summary>A small OpenEXR file whose data and display windows (box2i: xMin, yMin, xMax, yMax) claim width×height.</summary>
    private static byte[] ExrDeclaring(string scratch, int width, int height)
    {
        ImageFile.Write(scratch, new RgbImage(4, 4));
        byte[] exr = File.ReadAllBytes(scratch);
        foreach (string attribute in new[] { "dataWindow", "displayWindow" })
        {
            byte[] key = Encoding.ASCII.GetBytes(attribute + "\0box2i\0");
            int at = exr.AsSpan().IndexOf(key) + key.Length + 4;
            BinaryPrimitives.WriteInt32LittleEndian(exr.AsSpan(at + 8), width - 1);
            BinaryPrimitives.WriteInt32LittleEndian(exr.AsSpan(at + 12), height - 1);
        }

        return exr;
    }

    /// <summary>CRC-32 as the PNG specification's "CRC algorithm" annex computes it (polynomial 0xEDB88320, reflected, inverted).</summary>
    private static uint Crc32(ReadOnlySpan<byte> bytes)
    {
        uint c = 0xFFFFFFFFu;
        foreach (byte b in bytes)
        {
            c ^= b;
            for (int k = 0; k < 8; k++)
            {
                c = (c & 1) != 0 ? 0xEDB88320u ^ (c >> 1) : c >> 1;
            }
        }

        return c ^ 0xFFFFFFFFu;
    }

    private static void WritePfm(string path, int width, int height)
    {
        var image = new RgbImage(width, height);
        Array.Fill(image.Data, 0.5f);
        ImageFile.Write(path, image);
    }

    private static void MakeFifo(string path)
    {
        using Process p = Process.Start(new ProcessStartInfo("mkfifo", [path]) { UseShellExecute = false })!;
        p.WaitForExit();
        Assert.Equal(0, p.ExitCode);
    }

    /// <summary>Runs the built program; its stderr, exit code and (with <paramref name="peakFile"/>) its own peak resident set.</summary>
    private static (int Code, string Err, long Peak) RunChild(string[] args, string? peakFile)
    {
        var info = new ProcessStartInfo(Executable) { RedirectStandardError = true, RedirectStandardOutput = true, UseShellExecute = false };
        foreach (string a in args)
        {
            info.ArgumentList.Add(a);
        }

        info.Environment.Remove(AtomicFile.FailVariable);
        if (peakFile is not null)
        {
            info.Environment[Program.PeakMemoryVariable] = peakFile;
        }

        using Process child = Process.Start(info)!;
        Task<string> err = child.StandardError.ReadToEndAsync();
        Task<string> stdout = child.StandardOutput.ReadToEndAsync();
        if (!child.WaitForExit(HangBound))
        {
            child.Kill(entireProcessTree: true);
            child.WaitForExit();
            Assert.Fail($"still running after {HangBound.TotalSeconds} s (a hang): {string.Join(' ', args)}");
        }

        child.WaitForExit();
        _ = stdout.Result;
        long peak = peakFile is not null && File.Exists(peakFile) ? long.Parse(File.ReadAllText(peakFile), CultureInfo.InvariantCulture) : 0;
        return (child.ExitCode, err.Result, peak);
    }
}
