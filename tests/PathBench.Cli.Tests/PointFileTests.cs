using System.Buffers.Binary;
using System.Globalization;
using System.Text;
using System.Text.Json;
using PathBench.Rendering.Integrators;
using PathBench.Sampling.Generators;
using static PathBench.Cli.Tests.CliRunner;

namespace PathBench.Cli.Tests;

/// <summary>
/// <c>--generator file:POINTS</c>: a point file written from a published formula reproduces the
/// built-in generator of that formula bit for bit, in CSV and in the binary layout of
/// tools/point-files.md; malformed files give one line with the position.
/// </summary>
public sealed class PointFileTests
{
    private const int Count = 16;

    /// <summary>
    /// The Hammersley set (Hammersley &amp; Handscomb 1964, Monte Carlo Methods): point i of n is
    /// (i/n, φ₂(i), φ₃(i), φ₅(i), …) with φ_b the radical inverse in the b-th prime (Halton 1960),
    /// computed here as the exact rational (digits reversed)/b^k divided once, so correctly rounded.
    /// </summary>
    private static double[][] Hammersley(int n, int dims)
    {
        int[] primes = [.. Enumerable.Range(2, 1000).Where(p => Enumerable.Range(2, Math.Max(0, (int)Math.Sqrt(p) - 1)).All(q => p % q != 0)).Take(dims - 1)];
        var points = new double[n][];
        for (int i = 0; i < n; i++)
        {
            points[i] = new double[dims];
            points[i][0] = (double)i / n;
            for (int d = 1; d < dims; d++)
            {
                ulong reversed = 0, scale = 1;
                for (int k = i; k > 0; k /= primes[d - 1])
                {
                    reversed = reversed * (ulong)primes[d - 1] + (ulong)(k % primes[d - 1]);
                    scale *= (ulong)primes[d - 1];
                }

                points[i][d] = (double)reversed / scale;
            }
        }

        return points;
    }

    private static string Csv(double[][] points) =>
        string.Concat(points.Select(p => string.Join(",", p.Select(v => v.ToString("R", CultureInfo.InvariantCulture))) + "\n"));

    /// <summary>The binary layout of tools/point-files.md, version 1: "PBPOINTS", u32 version, u32 dims, u64 count, then f64 values, little-endian.</summary>
    private static byte[] Binary(double[][] points, uint version = 1, ulong? count = null, uint? dims = null)
    {
        int d = points.Length == 0 ? 0 : points[0].Length;
        var bytes = new byte[24 + 8 * points.Length * d];
        "PBPOINTS"u8.CopyTo(bytes);
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(8), version);
        BinaryPrimitives.WriteUInt32LittleEndian(bytes.AsSpan(12), dims ?? (uint)d);
        BinaryPrimitives.WriteUInt64LittleEndian(bytes.AsSpan(16), count ?? (ulong)points.Length);
        int at = 24;
        foreach (double v in points.SelectMany(p => p))
        {
            BinaryPrimitives.WriteDoubleLittleEndian(bytes.AsSpan(at), v);
            at += 8;
        }

        return bytes;
    }

    [Fact]
    public void A_Hammersley_file_renders_the_built_in_Hammersley_image_bit_for_bit()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", TestScenes.LampAndBall);
        const int depth = 3;
        string file = dir.Write("hammersley.csv", Csv(Hammersley(Count, DimensionLayout.Total(depth))));
        string[] common = ["render", dir.File("s.yaml"), "--spp", "16", "--max-depth", "3", "--seed", "7", "--randomize", "cranley-patterson", "--threads", "2"];
        (int code, _, string err) = Run([.. common, "--generator", "hammersley", "--out", dir.File("builtin.pfm")]);
        Assert.True(code == 0, err);
        (code, _, err) = Run([.. common, "--generator", "file:" + file, "--out", dir.File("file.pfm")]);
        Assert.True(code == 0, err);
        // The same points under the same per-pixel rotation (one offset per pixel key and dimension).
        Assert.Equal(File.ReadAllBytes(dir.File("builtin.pfm")), File.ReadAllBytes(dir.File("file.pfm")));

        using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(dir.File("file.json")));
        Assert.Equal("file:" + file, doc.RootElement.GetProperty("generator").GetString());
    }

    [Theory]
    [InlineData("csv")]
    [InlineData("binary")]
    public void Points_and_pointstats_of_a_Hammersley_file_are_the_built_in_ones(string layout)
    {
        using var dir = new TempFolder();
        double[][] points = Hammersley(Count, 3);
        string file = dir.File("h." + layout);
        if (layout == "csv")
        {
            File.WriteAllText(file, Csv(points));
        }
        else
        {
            File.WriteAllBytes(file, Binary(points));
        }

        foreach (string randomize in new[] { "none", "cranley-patterson" })
        {
            string[] args = ["--randomize", randomize, "--count", "16", "--dims", "3", "--seed", "11", "--pixel", "4,9"];
            (int code, string builtin, string err) = Run(["points", "--generator", "hammersley", .. args]);
            Assert.True(code == 0, err);
            (code, string fromFile, err) = Run(["points", "--generator", "file:" + file, .. args]);
            Assert.True(code == 0, err);
            Assert.Equal(builtin, fromFile);
            Assert.Equal(Csv(points), randomize == "none" ? fromFile.ReplaceLineEndings("\n") : Csv(points));
        }

        (int c1, string s1, string e1) = Run("pointstats", "--generator", "hammersley", "--randomize", "none", "--count", "16", "--dims", "3", "--json");
        (int c2, string s2, string e2) = Run("pointstats", "--generator", "file:" + file, "--randomize", "none", "--count", "16", "--dims", "3", "--json");
        Assert.True(c1 == 0 && c2 == 0, e1 + e2);
        using JsonDocument a = JsonDocument.Parse(s1), b = JsonDocument.Parse(s2);
        Assert.Equal(a.RootElement.GetProperty("l2_star").GetDouble(), b.RootElement.GetProperty("l2_star").GetDouble());
        Assert.Equal(a.RootElement.GetProperty("pairs").GetRawText(), b.RootElement.GetProperty("pairs").GetRawText());
    }

    /// <summary>A digital shift of the unrandomized Sobol points in a file is the built-in Sobol digital shift.</summary>
    [Fact]
    public void A_digital_shift_of_a_Sobol_file_is_the_built_in_one()
    {
        using var dir = new TempFolder();
        (int code, string plain, string err) = Run("points", "--generator", "sobol", "--randomize", "none", "--count", "32", "--dims", "4");
        Assert.True(code == 0, err);
        string file = dir.Write("sobol.csv", plain);
        string[] args = ["--randomize", "digital-shift", "--count", "32", "--dims", "4", "--seed", "3", "--pixel", "2,5"];
        (code, string builtin, err) = Run(["points", "--generator", "sobol", .. args]);
        Assert.True(code == 0, err);
        (code, string fromFile, err) = Run(["points", "--generator", "file:" + file, .. args]);
        Assert.True(code == 0, err);
        Assert.Equal(builtin, fromFile);
    }

    /// <summary>Each malformed file: exit 2, one line, the file and the position of what is wrong.</summary>
    public static TheoryData<string, string, int, int, string> Malformed => new()
    {
        // name, content ('~' marks bytes written as given), count, dims, expected message after "FILE"
        { "not-a-number", "0.1,0.2\n0.3,abc\n", 2, 2, ":2:5: field 2: 'abc' is not a number" },
        { "nan", "0.1,0.2\nNaN,0.5\n", 2, 2, ":2:1: field 1: 'NaN': NaN is not a coordinate" },
        { "one", "0.1,1.0\n", 1, 2, ":1:5: field 2: '1.0': 1 is outside [0, 1)" },
        { "negative", "0.5, -0.25\n", 1, 2, ":1:6: field 2: '-0.25': -0.25 is outside [0, 1)" },
        { "infinity", "0.5,0.5\n0.5,0.5\n# a comment\n1e400,0.5\n", 3, 2, ":4:1: field 1: '1e400': not a finite number" },
        { "empty-field", "0.1,,0.3\n", 1, 3, ":1:5: field 2: empty value" },
        { "ragged", "0.1,0.2\n0.3,0.4,0.5\n", 2, 2, ":2:1: 3 values on this line, 2 on line 1: every point has the same number of dimensions" },
        { "hex", "0x1,0.5\n", 1, 2, ":1:1: field 1: '0x1' is not a number" },
        { "no-points", "# only a comment\n\n", 1, 1, ": no points" },
        { "too-few-points", "0.1,0.2\n0.3,0.4\n", 3, 2, "' defines at most 2 points per pixel, asked for 3" },
        { "too-few-dims", "0.1,0.2\n0.3,0.4\n", 2, 3, "' defines at most 2 dimensions, asked for 3" },
        { "bin-version", "~version", 1, 1, ": byte 8: binary point file version 2; this PathBench reads version 1" },
        { "bin-huge", "~huge", 1, 1, ": byte 12: the header declares 1000000000000 points of 2 dimensions; at most 134217728 values (2147483647 points) are read" },
        { "bin-short", "~short", 1, 1, ": the header declares 4 points of 2 dimensions, 88 bytes in all; the file has 80" },
        { "bin-header", "~header", 1, 1, ": binary point file cut short in its header (12 of 24 bytes)" },
        { "bin-nan", "~nan", 1, 1, ": byte 56 (point 3, dimension 1): NaN is not a coordinate" },
        { "bin-zero-dims", "~zero-dims", 1, 1, ": byte 12: the header declares 0 dimensions" },
        { "not-utf8", "~not-utf8", 1, 1, ":1: not UTF-8 text" },
    };

    [Theory]
    [MemberData(nameof(Malformed))]
    public void A_malformed_point_file_is_one_line_with_its_position(string name, string content, int count, int dims, string expected)
    {
        using var dir = new TempFolder();
        string file = dir.File(name + ".pts");
        double[][] four = [[0.1, 0.2], [0.3, 0.4], [0.5, 0.6], [0.7, 0.8]];
        byte[] bytes = content switch
        {
            "~version" => Binary(four, version: 2),
            "~huge" => Binary(four, count: 1_000_000_000_000),
            "~short" => Binary(four)[..^8],
            "~header" => Binary(four)[..12],
            "~nan" => Patched(Binary(four), 24 + 8 * 4, double.NaN),
            "~zero-dims" => Binary(four, dims: 0),
            "~not-utf8" => [0x30, 0x2E, 0x35, 0xFF, 0xFE, 0x0A],
            _ => Encoding.UTF8.GetBytes(content),
        };
        File.WriteAllBytes(file, bytes);
        (int code, string output, string err) = Run("points", "--generator", "file:" + file, "--randomize", "none",
            "--count", count.ToString(CultureInfo.InvariantCulture), "--dims", dims.ToString(CultureInfo.InvariantCulture));
        Assert.Equal(2, code);
        Assert.Equal("", output);
        Assert.Single(err.TrimEnd('\n').Split('\n'));
        Assert.StartsWith("pathbench: error: ", err, StringComparison.Ordinal);
        Assert.Contains(file + expected, err, StringComparison.Ordinal);
    }

    private static byte[] Patched(byte[] bytes, int offset, double value)
    {
        BinaryPrimitives.WriteDoubleLittleEndian(bytes.AsSpan(offset), value);
        return bytes;
    }

    /// <summary>
    /// A header that declares 2^26 points of 2 dimensions (1 GiB of values, within the limit) on a
    /// file of a few bytes is refused from the header and the file's length, before the values are
    /// allocated: the reading thread allocates far less than the declared size.
    /// </summary>
    [Fact]
    public void A_header_larger_than_its_file_is_refused_before_allocating()
    {
        using var dir = new TempFolder();
        string file = dir.File("big.pts");
        File.WriteAllBytes(file, Binary([[0.5, 0.5]], count: 1UL << 26));
        long before = GC.GetAllocatedBytesForCurrentThread();
        var e = Assert.Throws<SamplerSpecException>(() => PointFile.Read(file));
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Contains("the header declares 67108864 points of 2 dimensions", e.Message, StringComparison.Ordinal);
        Assert.True(allocated < 1 << 20, $"{allocated} bytes allocated");
    }

    /// <summary>The file's SHA-256 is part of the render's configuration: a checkpoint made from other points is refused.</summary>
    [Fact]
    public void Resume_refuses_a_checkpoint_made_from_other_points()
    {
        using var dir = new TempFolder();
        dir.Write("s.yaml", TestScenes.LampAndBall);
        string file = dir.Write("h.csv", Csv(Hammersley(Count, 4)));
        string[] args = ["render", dir.File("s.yaml"), "--generator", "file:" + file, "--spp", "16", "--checkpoint", dir.File("c.accum"), "--out", dir.File("r.pfm")];
        (int code, _, string err) = Run([.. args, "--shard", "0/2"]);
        Assert.True(code == 0, err);
        File.WriteAllText(file, Csv(Hammersley(Count, 5)));
        (code, _, err) = Run([.. args, "--resume"]);
        Assert.Equal(2, code);
        Assert.Contains("cannot resume", err, StringComparison.Ordinal);
        Assert.Contains("generator_provenance: sha256:", err, StringComparison.Ordinal);
    }

    [Fact]
    public void A_missing_point_file_is_named()
    {
        (int code, _, string err) = Run("points", "--generator", "file:/nonexistent/points.csv");
        Assert.Equal(2, code);
        Assert.Equal("pathbench: error: /nonexistent/points.csv: no such point file", err.TrimEnd('\n'));
    }
}
