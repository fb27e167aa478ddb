using System.Globalization;
using System.Text.Json;
using Microsoft.Playwright;
using PathBench.Analysis;
using PathBench.Analysis.Report;
using PathBench.Imaging;

namespace PathBench.Analysis.Tests;

/// <summary>
/// The study report in a real browser: Debian's chromium (package <c>chromium</c>, installed by
/// tools/test.sh), driven by Microsoft.Playwright pointed at it with its executable-path option,
/// since no browser can be downloaded here. The study is demo-sized (the demo's scene, image size
/// and four configurations; a shorter ladder and fewer replicates, to keep the suite quick).
/// </summary>
public sealed class ReportBrowserTests
{
    private const string Chromium = "/usr/bin/chromium";

    private const string StudyYaml = """
        scene: fence-yard.yaml
        resolution: [160, 100]
        reference: { spp: 128 }
        spp: [4, 16]
        replicates: 3
        configurations:
          - { name: random-uniform-bsdf, generator: random, hemisphere: uniform, lights: bsdf }
          - { name: jittered-nee, generator: jittered, lights: nee }
          - { name: halton-mis, generator: halton }
          - { name: sobol-owen-mis, generator: sobol, randomize: owen }
        """;

    [Fact]
    public async Task Report_opens_offline_and_its_viewer_probes_the_values_the_exr_holds()
    {
        Assert.True(File.Exists(Chromium), $"{Chromium} is missing: install Debian's chromium (tools/test.sh does)");
        using var temp = new TempFolder();
        File.Copy(Path.Combine(RepositoryPaths.Scenes, "fence-yard.yaml"), temp.File("fence-yard.yaml"));
        temp.Write("study.yaml", StudyYaml);
        string dir = temp.File("out");
        StudyPipeline.Run(StudyFile.Load(temp.File("study.yaml")), new StudyRunOptions(dir, 2, "test"));
        string report = Path.Combine(dir, "report.html");
        Assert.True(File.Exists(report));

        using IPlaywright playwright = await Playwright.CreateAsync();
        await using IBrowser browser = await playwright.Chromium.LaunchAsync(new BrowserTypeLaunchOptions
        {
            ExecutablePath = Chromium,
            Headless = true,
            // Without these, chromium reaches for the network on its own (updates, sync), which this test forbids.
            Args = ["--disable-gpu", "--disable-background-networking", "--disable-component-update", "--disable-sync", "--no-first-run", "--disable-quic"],
        });
        IPage page = await browser.NewPageAsync(new BrowserNewPageOptions { ViewportSize = new ViewportSize { Width = 1280, Height = 1000 } });
        var errors = new List<string>();
        var requests = new List<string>();
        page.Console += (_, m) =>
        {
            if (m.Type == "error")
            {
                errors.Add(m.Text);
            }
        };
        page.PageError += (_, e) => errors.Add(e);
        page.Request += (_, r) => requests.Add(r.Url);

        string url = new Uri(report).AbsoluteUri;
        await page.GotoAsync(url);
        await page.WaitForSelectorAsync("body[data-ready]", new PageWaitForSelectorOptions { State = WaitForSelectorState.Attached });
        Assert.Equal("true", await page.GetAttributeAsync("body", "data-ready"));
        Assert.Empty(errors);
        Assert.Equal([url], requests); // the page itself, nothing else: no fonts, scripts or images fetched

        // The table: one row per configuration, holding summary.json's numbers.
        using JsonDocument summary = JsonDocument.Parse(File.ReadAllText(Path.Combine(dir, "summary.json")));
        JsonElement[] configs = [.. summary.RootElement.GetProperty("configurations").EnumerateArray()];
        ILocator rows = page.Locator("#summary tbody tr");
        Assert.Equal(configs.Length, await rows.CountAsync());
        int mseColumn = 4 + 1; // configuration, sampler, slope, theory, MSE @4, MSE @16
        for (int r = 0; r < configs.Length; r++)
        {
            ILocator cells = rows.Nth(r).Locator("th, td");
            Assert.Equal(configs[r].GetProperty("name").GetString(), await cells.Nth(0).GetAttributeAsync("data-value"));
            double shown = double.Parse((await cells.Nth(mseColumn).GetAttributeAsync("data-value"))!, CultureInfo.InvariantCulture);
            Assert.Equal(configs[r].GetProperty("points")[1].GetProperty("mse").GetDouble(), shown);
        }

        // Sorting: a click on the MSE heading orders the rows by it, a second click reverses them.
        await page.Locator("#summary thead th").Nth(mseColumn).Locator("button").ClickAsync();
        double[] ascending = [.. (await rows.EvaluateAllAsync<string[]>($"rs => rs.map(r => r.cells[{mseColumn}].dataset.value)")).Select(v => double.Parse(v, CultureInfo.InvariantCulture))];
        Assert.Equal(ascending.Order(), ascending);
        await page.Locator("#summary thead th").Nth(mseColumn).Locator("button").ClickAsync();
        Assert.Equal("descending", await page.Locator("#summary thead th").Nth(mseColumn).GetAttributeAsync("aria-sort"));

        // Two images, split layout, the split moved by dragging its line.
        await page.SelectOptionAsync("#pick-a", new SelectOptionValue { Label = "sobol-owen-mis @ 16 spp" });
        await page.SelectOptionAsync("#pick-b", new SelectOptionValue { Label = "reference (128 spp)" });
        await page.CheckAsync("input[name=layout][value=split]");
        LocatorBoundingBoxResult box = (await page.Locator("#view-a").BoundingBoxAsync())!;
        float midY = box.Y + (box.Height / 2);
        await page.Mouse.MoveAsync(box.X + (box.Width * 0.5f), midY);
        await page.Mouse.DownAsync();
        await page.Mouse.MoveAsync(box.X + (box.Width * 0.7f), midY, new MouseMoveOptions { Steps = 5 });
        await page.Mouse.UpAsync();
        double splitAt = double.Parse(await page.InputValueAsync("#split"), CultureInfo.InvariantCulture);
        Assert.InRange(splitAt, 0.68, 0.72);

        // Zoom at a point left of the split (image A) until one image pixel covers more than the canvas is wide.
        float px = box.X + (box.Width * 0.3f);
        await page.Mouse.MoveAsync(px, midY);
        for (int i = 0; i < 40; i++)
        {
            await page.Mouse.WheelAsync(0, -100);
        }

        double zoom = double.Parse((await page.TextContentAsync("#zoom-value"))!, CultureInfo.InvariantCulture);
        Assert.True(zoom > box.Width, $"zoom {zoom} screen pixels per image pixel");

        // Probe: the value shown is the float the EXR file holds at that pixel (read with our reader,
        // which is checked bit for bit against OpenImageIO in the Imaging tests).
        await page.Mouse.MoveAsync(px + 1, midY + 1);
        int x = int.Parse((await page.GetAttributeAsync("#probe", "data-x"))!, CultureInfo.InvariantCulture);
        int y = int.Parse((await page.GetAttributeAsync("#probe", "data-y"))!, CultureInfo.InvariantCulture);
        double[] shownA = JsonSerializer.Deserialize<double[]>((await page.GetAttributeAsync("#probe", "data-a"))!)!;
        double[] shownB = JsonSerializer.Deserialize<double[]>((await page.GetAttributeAsync("#probe", "data-b"))!)!;
        RgbImage exrA = ImageFile.Read(Path.Combine(dir, "images", "sobol-owen-mis-16spp.exr")).Image;
        RgbImage exrB = ImageFile.Read(Path.Combine(dir, "images", "reference.exr")).Image;
        for (int c = 0; c < 3; c++)
        {
            Assert.Equal(exrA.At(x, y, c), (float)shownA[c]);
            Assert.Equal(exrB.At(x, y, c), (float)shownB[c]);
        }

        // A screenshot as the test's artefact, and it is not blank.
        string artefacts = Path.Combine(AppContext.BaseDirectory, "artefacts");
        Directory.CreateDirectory(artefacts);
        string shot = Path.Combine(artefacts, "report-viewer.png");
        await page.Locator("#viewer").ScrollIntoViewIfNeededAsync();
        await page.ScreenshotAsync(new PageScreenshotOptions { Path = shot, FullPage = true });
        RgbImage screenshot = PngCodec.Read(shot).Image;
        Assert.True(screenshot.Data.Distinct().Count() > 50, "the screenshot is (nearly) one colour");
    }

    [Fact]
    public void Packed_floats_round_trip_through_the_byte_planes()
    {
        float[] values = [0f, -0f, 1.5f, float.Epsilon, float.MaxValue, -3.25e-20f, float.NaN, float.PositiveInfinity];
        string packed = StudyReport.Pack(values);
        byte[] planes;
        using (var input = new MemoryStream(Convert.FromBase64String(packed)))
        using (var z = new System.IO.Compression.ZLibStream(input, System.IO.Compression.CompressionMode.Decompress))
        using (var output = new MemoryStream())
        {
            z.CopyTo(output);
            planes = output.ToArray();
        }

        int n = values.Length;
        for (int i = 0; i < n; i++)
        {
            uint bits = planes[i] | ((uint)planes[n + i] << 8) | ((uint)planes[(2 * n) + i] << 16) | ((uint)planes[(3 * n) + i] << 24);
            Assert.Equal(BitConverter.SingleToUInt32Bits(values[i]), bits);
        }
    }
}
