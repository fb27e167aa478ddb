using System.Globalization;
using System.Text;
using System.Text.Json;

namespace PathBench.Analysis.Report;

/// <summary>The report's markup, styles and script: our own layout, labels and colours.</summary>
internal static class Template
{
    public static string Head(string scene) => $$"""
        <!DOCTYPE html>
        <html lang="en">
        <head>
        <meta charset="utf-8">
        <meta name="viewport" content="width=device-width, initial-scale=1">
        <title>Sampler study: {{StudyReport.Html(scene)}}</title>
        <style>
        body { font: 14px/1.45 system-ui, "DejaVu Sans", sans-serif; margin: 0 auto; max-width: 1280px; padding: 0 16px 48px; color: #1d1d1f; background: #fbfbfa; }
        h1 { font-size: 22px; margin: 20px 0 8px; } h2 { font-size: 17px; margin: 28px 0 8px; border-bottom: 1px solid #d8d8d4; }
        dl.facts { display: grid; grid-template-columns: max-content 1fr; gap: 2px 14px; margin: 0; }
        dl.facts dt { color: #5a5a58; } dl.facts dd { margin: 0; }
        ul.warnings { background: #fff6e0; border-left: 4px solid #c98a00; padding: 6px 6px 6px 28px; }
        table { border-collapse: collapse; font-variant-numeric: tabular-nums; }
        div.scroll { overflow-x: auto; } caption { text-align: left; color: #5a5a58; padding-bottom: 4px; }
        th, td { padding: 4px 8px; border-bottom: 1px solid #e2e2de; text-align: right; white-space: nowrap; }
        th:first-child, td:first-child, td.text { text-align: left; }
        th button { font: inherit; font-weight: 600; background: none; border: 0; cursor: pointer; padding: 0; color: inherit; }
        th[aria-sort="ascending"] button::after { content: " ▲"; } th[aria-sort="descending"] button::after { content: " ▼"; }
        td.best { background: #e3f1e8; font-weight: 600; } td.best::after { content: " ★"; color: #1e7a46; }
        .swatch { display: inline-block; width: 10px; height: 10px; margin-right: 6px; border: 1px solid #0003; }
        figure.plot { display: inline-block; margin: 8px; } figure.plot svg { max-width: 100%; height: auto; }
        .controls { display: flex; flex-wrap: wrap; gap: 8px 18px; align-items: center; margin-bottom: 8px; }
        .controls fieldset { border: 1px solid #d8d8d4; padding: 2px 8px; }
        #stage { display: flex; gap: 8px; user-select: none; }
        #stage canvas { background: #2b2b2b; image-rendering: pixelated; cursor: crosshair; touch-action: none; }
        #probe { display: block; font-family: "DejaVu Sans Mono", monospace; white-space: pre; min-height: 4.5em; margin-top: 6px; }
        ul.keys { columns: 2; padding-left: 18px; color: #444; } kbd { border: 1px solid #bbb; border-radius: 3px; padding: 0 4px; background: #fff; }
        </style>
        </head>
        <body>

        """;

    public const string Viewer = """
        <section id="viewer" aria-labelledby="viewer-title">
        <h2 id="viewer-title">Images</h2>
        <div class="controls">
          <label for="pick-a">Image A</label><select id="pick-a"></select>
          <label for="pick-b">Image B</label><select id="pick-b"></select>
          <fieldset><legend>Layout</legend>
            <label><input type="radio" name="layout" value="side" checked> side by side</label>
            <label><input type="radio" name="layout" value="split"> split</label>
            <label><input type="radio" name="layout" value="toggle"> toggle</label>
          </fieldset>
          <label for="split">Split position</label><input type="range" id="split" min="0" max="1" step="0.001" value="0.5">
          <label for="exposure">Exposure (stops)</label><input type="range" id="exposure" min="-12" max="12" step="0.5" value="0"><output id="exposure-value" for="exposure">0</output>
          <label for="tone">Tone</label><select id="tone"><option value="clamp">clamp</option><option value="reinhard">Reinhard</option></select>
          <button type="button" id="fit">Fit to view</button>
          <span>Zoom <output id="zoom-value">1</output> screen pixels per image pixel</span>
        </div>
        <div id="stage"><canvas id="view-a" aria-label="Image A"></canvas><canvas id="view-b" aria-label="Image B"></canvas></div>
        <output id="probe" aria-live="polite">Move the pointer over an image to read its values.</output>
        <p id="legend"></p>
        <h3>Keys</h3>
        <ul class="keys">
          <li><kbd>1</kbd> side by side, <kbd>2</kbd> split, <kbd>3</kbd> toggle</li>
          <li><kbd>t</kbd> show the other image (toggle layout)</li>
          <li><kbd>x</kbd> swap A and B</li>
          <li><kbd>+</kbd> / <kbd>-</kbd> zoom in / out, <kbd>0</kbd> fit</li>
          <li><kbd>[</kbd> / <kbd>]</kbd> exposure down / up half a stop</li>
          <li><kbd>r</kbd> clamp / Reinhard</li>
          <li>wheel: zoom at the pointer; drag: pan; drag the split line to move it</li>
        </ul>
        </section>

        """;

    /// <summary>The summary table: a real table, one row per configuration, sortable, the best value of each column marked.</summary>
    public static string SummaryTable(JsonElement root)
    {
        JsonElement[] configs = [.. root.GetProperty("configurations").EnumerateArray()];
        int[] ladder = [.. root.GetProperty("spp_ladder").EnumerateArray().Select(e => e.GetInt32())];
        int largest = ladder[^1];
        var columns = new List<Column>
        {
            new("configuration", null, c => (null, c.GetProperty("name").GetString() ?? "")),
            new("sampler", null, c => (null, $"{c.GetProperty("generator").GetString()}/{c.GetProperty("randomize").GetString()}, {c.GetProperty("hemisphere").GetString()}, {c.GetProperty("lights").GetString()}")),
            new("slope [95 % CI]", Best.Lowest, c => (Num(c, "slope"), Interval(Num(c, "slope"), c.GetProperty("slope_ci")))),
            new("theory (smooth / edges)", null, c => (null, TheoryText(c.GetProperty("theory")))),
        };
        for (int i = 0; i < ladder.Length; i++)
        {
            int k = i;
            columns.Add(new(FormattableString.Invariant($"MSE @{ladder[k]} spp [95 % CI]"), Best.Lowest, c => Point(c, k, p => (Num(p, "mse"), Interval(Num(p, "mse"), p.GetProperty("mse_ci"))))));
        }

        columns.Add(new(FormattableString.Invariant($"efficiency @{largest}"), Best.Highest, c => Point(c, ladder.Length - 1, p => (Num(p, "efficiency"), Format(Num(p, "efficiency"))))));
        columns.Add(new(FormattableString.Invariant($"bias z @{largest}"), Best.NearestZero, c => Point(c, ladder.Length - 1, p => (Num(p, "bias_z"), Format(Num(p, "bias_z"))))));
        columns.Add(new("structure", Best.Lowest, c => (Num(c, "structure_score"), Format(Num(c, "structure_score")))));
        columns.Add(new("MSE at equal time", Best.Lowest, c => (Num(c, "mse_at_equal_time"), Format(Num(c, "mse_at_equal_time")))));
        columns.Add(new("win fraction", Best.Highest, c => (Num(c, "win_fraction"), Num(c, "win_fraction") is { } w ? (100 * w).ToString("F1", CultureInfo.InvariantCulture) + " %" : "–")));

        var cells = configs.Select(c => columns.Select(col => col.Cell(c)).ToArray()).ToArray();
        var sb = new StringBuilder();
        sb.Append("<section id=\"summary-section\"><h2>Summary</h2>\n<div class=\"scroll\"><table id=\"summary\">\n<caption>One row per configuration; click a heading to sort; ★ marks the best value of a column. MSE is corrected for the reference's own noise; intervals are 95 % over replicates.</caption>\n<thead><tr>");
        foreach (Column col in columns)
        {
            sb.Append("<th scope=\"col\"><button type=\"button\">").Append(StudyReport.Html(col.Title)).Append("</button></th>");
        }

        sb.Append("</tr></thead>\n<tbody>\n");
        for (int r = 0; r < configs.Length; r++)
        {
            sb.Append("<tr>");
            for (int k = 0; k < columns.Count; k++)
            {
                (double? value, string text) = cells[r][k];
                bool best = columns[k].Rule is { } rule && value is { } v && IsBest(rule, v, cells.Select(row => row[k].Value));
                string cls = (value is null && columns[k].Rule is null ? "text" : "") + (best ? " best" : "");
                string data = value is { } d ? d.ToString("R", CultureInfo.InvariantCulture) : "";
                if (k == 0)
                {
                    string colour = Palette(r);
                    sb.Append(CultureInfo.InvariantCulture, $"<th scope=\"row\" data-value=\"{StudyReport.Html(text)}\"><span class=\"swatch\" style=\"background:{colour}\"></span>{StudyReport.Html(text)}</th>");
                    continue;
                }

                sb.Append(CultureInfo.InvariantCulture, $"<td class=\"{cls.Trim()}\" data-value=\"{(value is null ? StudyReport.Html(text) : data)}\"{(best ? " title=\"best in this column\"" : "")}>{StudyReport.Html(text)}</td>");
            }

            sb.Append("</tr>\n");
        }

        sb.Append("</tbody></table></div></section>\n");
        return sb.ToString();
    }

    private enum Best
    {
        Lowest,
        Highest,
        NearestZero,
    }

    private sealed record Column(string Title, Best? Rule, Func<JsonElement, (double? Value, string Text)> Cell);

    private static bool IsBest(Best rule, double v, IEnumerable<double?> column)
    {
        double[] values = [.. column.Where(x => x is not null).Select(x => x!.Value)];
        return values.Length > 1 && rule switch
        {
            Best.Lowest => v == values.Min(),
            Best.Highest => v == values.Max(),
            _ => Math.Abs(v) == values.Min(Math.Abs),
        };
    }

    private static string Palette(int i)
    {
        (byte r, byte g, byte b) = WinMapImage.Palette[i % WinMapImage.Palette.Count];
        return FormattableString.Invariant($"#{r:x2}{g:x2}{b:x2}");
    }

    private static (double? Value, string Text) Point(JsonElement c, int index, Func<JsonElement, (double?, string)> cell)
    {
        JsonElement[] points = [.. c.GetProperty("points").EnumerateArray()];
        return index < points.Length ? cell(points[index]) : (null, "–");
    }

    private static double? Num(JsonElement e, string name) =>
        e.TryGetProperty(name, out JsonElement v) && v.ValueKind == JsonValueKind.Number ? v.GetDouble() : null;

    private static string Format(double? v) => v is { } d ? d.ToString("G3", CultureInfo.InvariantCulture) : "–";

    private static string Interval(double? v, JsonElement ci)
    {
        if (v is null)
        {
            return "–";
        }

        if (ci.ValueKind != JsonValueKind.Array)
        {
            return Format(v);
        }

        double[] bounds = [.. ci.EnumerateArray().Select(x => x.GetDouble())];
        return FormattableString.Invariant($"{Format(v)} [{Format(bounds[0])}, {Format(bounds[1])}]");
    }

    private static string TheoryText(JsonElement t)
    {
        string smooth = Format(Num(t, "smooth")), edges = Format(Num(t, "discontinuous"));
        return smooth == "–" && edges == "–" ? "–" : $"{smooth} / {edges}";
    }

    /// <summary>The viewer's script: decoding, tone mapping, layouts, zoom, pan, probe, keys, table sorting.</summary>
    public const string Script = """
        <script>
        "use strict";
        (async function () {
          const meta = JSON.parse(document.getElementById("meta").textContent);
          const W = meta.width, H = meta.height;

          // ---- table sorting
          const table = document.getElementById("summary");
          table.querySelectorAll("thead th").forEach((th, col) => {
            th.querySelector("button").addEventListener("click", () => {
              const dir = th.getAttribute("aria-sort") === "ascending" ? "descending" : "ascending";
              table.querySelectorAll("thead th").forEach(o => o.removeAttribute("aria-sort"));
              th.setAttribute("aria-sort", dir);
              const rows = [...table.tBodies[0].rows];
              const key = r => r.cells[col].dataset.value;
              rows.sort((a, b) => {
                const x = key(a), y = key(b), nx = parseFloat(x), ny = parseFloat(y);
                const c = (isNaN(nx) || isNaN(ny)) ? x.localeCompare(y) : nx - ny;
                return dir === "ascending" ? c : -c;
              });
              rows.forEach(r => table.tBodies[0].appendChild(r));
            });
          });

          // ---- image data: four byte planes, zlib, base64
          async function unpack(id) {
            const text = document.getElementById(id).textContent;
            const bin = Uint8Array.from(atob(text), ch => ch.charCodeAt(0));
            const stream = new Blob([bin]).stream().pipeThrough(new DecompressionStream("deflate"));
            const planes = new Uint8Array(await new Response(stream).arrayBuffer());
            const n = planes.length / 4, bytes = new Uint8Array(planes.length);
            for (let i = 0; i < n; i++) {
              bytes[4 * i] = planes[i]; bytes[4 * i + 1] = planes[n + i];
              bytes[4 * i + 2] = planes[2 * n + i]; bytes[4 * i + 3] = planes[3 * n + i];
            }
            return new Float32Array(bytes.buffer);
          }

          const sources = [];
          let reference = null;
          for (const img of meta.images) {
            const data = await unpack(img.id);
            if (img.kind === "reference") { reference = data; sources.push({ label: "reference (" + img.spp + " spp)", data }); }
            else if (img.kind === "reference-variance") sources.push({ label: "reference: variance of the mean", data });
            else if (img.kind === "render") sources.push({ label: img.configuration + " @ " + img.spp + " spp", data, render: true, name: img.configuration, spp: img.spp });
            else if (img.kind === "variance") sources.push({ label: img.configuration + ": variance across replicates @ " + img.spp + " spp", data });
          }
          for (const s of sources.filter(s => s.render)) {
            const e = new Float32Array(s.data.length);
            for (let i = 0; i < e.length; i++) e[i] = Math.abs(s.data[i] - reference[i]);
            sources.push({ label: s.name + " @ " + s.spp + " spp: error |x − reference|", data: e });
          }
          // The win map: tile winners in the palette of the plots; hatched grey where no difference is significant.
          const win = new Uint8ClampedArray(4 * W * H);
          for (let y = 0; y < H; y++) for (let x = 0; x < W; x++) {
            const t = Math.floor(y / meta.tile) * meta.tilesX + Math.floor(x / meta.tile);
            const name = meta.winners[t], i = 4 * (y * W + x);
            let rgb = [200, 200, 200];
            if (name !== null) { const hex = meta.palette[meta.names.indexOf(name) % meta.palette.length]; rgb = [1, 3, 5].map(k => parseInt(hex.substr(k, 2), 16)); }
            else if ((x + y) % 6 === 0) rgb = [120, 120, 120];
            win.set([rgb[0], rgb[1], rgb[2], 255], i);
          }
          sources.push({ label: "win map at equal time", colour: win });
          document.getElementById("legend").innerHTML = "Win map: " + meta.names.map((n, i) =>
            '<span class="swatch" style="background:' + meta.palette[i % meta.palette.length] + '"></span>' + n.replace(/[&<>]/g, "")).join(", ") +
            ', <span class="swatch" style="background:#c8c8c8"></span>no significant difference. Colours: Okabe &amp; Ito (2008), chosen to stay distinct for colour-blind readers.';

          // ---- controls
          const pickA = document.getElementById("pick-a"), pickB = document.getElementById("pick-b");
          sources.forEach((s, i) => { pickA.add(new Option(s.label, i)); pickB.add(new Option(s.label, i)); });
          pickA.value = String(sources.findIndex(s => s.render) >= 0 ? sources.findIndex(s => s.render) : 0);
          pickB.value = "0";
          const canvasA = document.getElementById("view-a"), canvasB = document.getElementById("view-b");
          const exposure = document.getElementById("exposure"), tone = document.getElementById("tone"), split = document.getElementById("split");
          const state = { layout: "side", showB: false, zoom: 1, x: 0, y: 0 };

          function layout() { return document.querySelector('input[name="layout"]:checked').value; }
          function size() {
            const full = Math.min(1200, document.getElementById("stage").clientWidth || 960);
            const wide = layout() === "side" ? Math.floor((full - 8) / 2) : full;
            const high = Math.max(120, Math.min(720, Math.round(wide * H / W)));
            for (const c of [canvasA, canvasB]) { c.width = wide; c.height = high; }
            canvasB.style.display = layout() === "side" ? "" : "none";
          }
          function fit() {
            state.zoom = Math.min(canvasA.width / W, canvasA.height / H);
            state.x = (W - canvasA.width / state.zoom) / 2; state.y = (H - canvasA.height / state.zoom) / 2;
          }
          function encode(v) {
            v = v <= 0.0031308 ? 12.92 * v : 1.055 * Math.pow(v, 1 / 2.4) - 0.055;
            return Math.round(Math.min(1, Math.max(0, v)) * 255);
          }
          function paint(ctx, src, x0, x1, w, h, out) {
            const gain = Math.pow(2, parseFloat(exposure.value)), reinhard = tone.value === "reinhard";
            for (let cy = 0; cy < h; cy++) {
              const iy = Math.floor(state.y + cy / state.zoom);
              for (let cx = x0; cx < x1; cx++) {
                const ix = Math.floor(state.x + cx / state.zoom), o = 4 * (cy * w + cx);
                if (ix < 0 || iy < 0 || ix >= W || iy >= H) { out[o] = out[o + 1] = out[o + 2] = 43; out[o + 3] = 255; continue; }
                const p = iy * W + ix;
                if (src.colour) { out[o] = src.colour[4 * p]; out[o + 1] = src.colour[4 * p + 1]; out[o + 2] = src.colour[4 * p + 2]; out[o + 3] = 255; continue; }
                for (let c = 0; c < 3; c++) {
                  let v = src.data[3 * p + c] * gain;
                  if (!(v > 0)) v = 0; else if (reinhard) v = v / (1 + v);
                  out[o + c] = encode(v);
                }
                out[o + 3] = 255;
              }
            }
          }
          function draw() {
            const a = sources[+pickA.value], b = sources[+pickB.value], mode = layout();
            const w = canvasA.width, h = canvasA.height, ctx = canvasA.getContext("2d"), img = ctx.createImageData(w, h);
            if (mode === "side") {
              paint(ctx, a, 0, w, w, h, img.data); ctx.putImageData(img, 0, 0);
              const ctxB = canvasB.getContext("2d"), imgB = ctxB.createImageData(w, h);
              paint(ctxB, b, 0, w, w, h, imgB.data); ctxB.putImageData(imgB, 0, 0);
            } else if (mode === "split") {
              const at = Math.round(parseFloat(split.value) * w);
              paint(ctx, a, 0, at, w, h, img.data); paint(ctx, b, at, w, w, h, img.data); ctx.putImageData(img, 0, 0);
              ctx.fillStyle = "#fff"; ctx.fillRect(at - 1, 0, 2, h);
            } else {
              paint(ctx, state.showB ? b : a, 0, w, w, h, img.data); ctx.putImageData(img, 0, 0);
            }
            document.getElementById("zoom-value").textContent = state.zoom >= 1 ? state.zoom.toFixed(state.zoom < 10 ? 2 : 1) : state.zoom.toPrecision(3);
            document.getElementById("exposure-value").textContent = exposure.value;
          }
          function zoomAt(cx, cy, factor) {
            const ix = state.x + cx / state.zoom, iy = state.y + cy / state.zoom;
            const min = Math.min(canvasA.width / W, canvasA.height / H) / 4;
            state.zoom = Math.min(Math.max(state.zoom * factor, min), 4096);
            state.x = ix - cx / state.zoom; state.y = iy - cy / state.zoom;
            draw();
          }
          function values(src, p) {
            if (!src.data) return "(colour)";
            return [0, 1, 2].map(c => src.data[3 * p + c].toPrecision(7)).join(" ");
          }
          function probe(canvas, ev) {
            const r = canvas.getBoundingClientRect();
            const cx = (ev.clientX - r.left) * canvas.width / r.width, cy = (ev.clientY - r.top) * canvas.height / r.height;
            const ix = Math.floor(state.x + cx / state.zoom), iy = Math.floor(state.y + cy / state.zoom);
            const out = document.getElementById("probe");
            if (ix < 0 || iy < 0 || ix >= W || iy >= H) { out.textContent = "outside the image"; return; }
            const p = iy * W + ix, a = sources[+pickA.value], b = sources[+pickB.value];
            const lines = ["pixel " + ix + ", " + iy, "A  " + a.label + ": " + values(a, p), "B  " + b.label + ": " + values(b, p), "reference: " + values({ data: reference }, p)];
            out.textContent = lines.join("\n");
            out.dataset.x = ix; out.dataset.y = iy;
            out.dataset.a = a.data ? JSON.stringify([0, 1, 2].map(c => a.data[3 * p + c])) : "";
            out.dataset.b = b.data ? JSON.stringify([0, 1, 2].map(c => b.data[3 * p + c])) : "";
          }
          let drag = null;
          for (const canvas of [canvasA, canvasB]) {
            canvas.addEventListener("wheel", ev => {
              ev.preventDefault();
              const r = canvas.getBoundingClientRect();
              zoomAt((ev.clientX - r.left) * canvas.width / r.width, (ev.clientY - r.top) * canvas.height / r.height, ev.deltaY < 0 ? 1.25 : 0.8);
              probe(canvas, ev);
            }, { passive: false });
            canvas.addEventListener("pointerdown", ev => {
              const r = canvas.getBoundingClientRect(), cx = (ev.clientX - r.left) * canvas.width / r.width;
              const onSplit = layout() === "split" && Math.abs(cx - parseFloat(split.value) * canvas.width) < 8;
              drag = { split: onSplit, x: ev.clientX, y: ev.clientY, canvas };
              canvas.setPointerCapture(ev.pointerId);
            });
            canvas.addEventListener("pointermove", ev => {
              if (drag) {
                const r = canvas.getBoundingClientRect();
                if (drag.split) split.value = String(Math.min(1, Math.max(0, (ev.clientX - r.left) / r.width)));
                else { state.x -= (ev.clientX - drag.x) * canvas.width / r.width / state.zoom; state.y -= (ev.clientY - drag.y) * canvas.height / r.height / state.zoom; }
                drag.x = ev.clientX; drag.y = ev.clientY;
                draw();
              }
              probe(canvas, ev);
            });
            canvas.addEventListener("pointerup", () => { drag = null; });
          }
          for (const el of [pickA, pickB, exposure, tone, split]) el.addEventListener("input", draw);
          document.querySelectorAll('input[name="layout"]').forEach(r => r.addEventListener("change", () => { size(); fit(); draw(); }));
          document.getElementById("fit").addEventListener("click", () => { fit(); draw(); });
          document.addEventListener("keydown", ev => {
            if (ev.target instanceof HTMLSelectElement || ev.ctrlKey || ev.metaKey || ev.altKey) return;
            const setLayout = v => { document.querySelector('input[name="layout"][value="' + v + '"]').checked = true; size(); fit(); };
            const k = ev.key;
            if (k === "1") setLayout("side"); else if (k === "2") setLayout("split"); else if (k === "3") setLayout("toggle");
            else if (k === "t") { if (layout() !== "toggle") setLayout("toggle"); state.showB = !state.showB; }
            else if (k === "x") { const t = pickA.value; pickA.value = pickB.value; pickB.value = t; }
            else if (k === "+" || k === "=") { zoomAt(canvasA.width / 2, canvasA.height / 2, 1.25); return; }
            else if (k === "-") { zoomAt(canvasA.width / 2, canvasA.height / 2, 0.8); return; }
            else if (k === "0") fit();
            else if (k === "[") exposure.value = String(parseFloat(exposure.value) - 0.5);
            else if (k === "]") exposure.value = String(parseFloat(exposure.value) + 0.5);
            else if (k === "r") tone.value = tone.value === "clamp" ? "reinhard" : "clamp";
            else return;
            draw();
          });
          size(); fit(); draw();
          document.body.dataset.ready = "true";
        })().catch(e => { document.body.dataset.ready = "error"; console.error(e); });
        </script>

        """;
}
