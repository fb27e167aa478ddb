using System.Buffers.Binary;
using System.Security.Cryptography;
using PathBench.Rendering.Accumulation;
using PathBench.Rendering.Integrators;
using PathBench.Rendering.Tests.Integrators;
using PathBench.Sampling.Generators;

namespace PathBench.Rendering.Tests.Accumulation;

/// <summary>
/// The accumulation file (tools/accumulation-format.md): exact round trip, pass-by-pass and
/// split renders that add up bit for bit (integer addition is associative), and every malformed
/// file refused with one line naming the file and what was wrong.
/// </summary>
public sealed class AccumulationFileTests
{
    private static readonly RenderIdentity Identity = new("test-version", new string('a', 64), [new("generator", "sobol"), new("seed", "7")], 24, 20);

    private static RenderJob Job(int first, int end, int threads = 2)
    {
        PointSampler sampler = SamplerCatalog.Create(new SamplerSpec("sobol", Randomization.Owen, false, 8, 7), DimensionLayout.Total(DeterminismTests.Options.MaxDepth));
        return new RenderJob(DeterminismTests.Box(), sampler, DeterminismTests.Options, first, end, threads);
    }

    private static Film Rendered(int first, int end, int threads = 2) => Renderer.Render(Job(first, end, threads)).Film;

    [Fact]
    public void Write_then_read_gives_the_same_sums_and_fields()
    {
        using var dir = new TempFolder();
        Film film = Rendered(0, 8);
        AccumulationFile.Write(dir.File("a.accum"), new Rendering.Accumulation.Accumulation(Identity, [new SampleRange(0, 8)], film));
        Rendering.Accumulation.Accumulation back = AccumulationFile.Read(dir.File("a.accum"));
        Assert.True(back.Film.SameSums(film));
        Assert.Equal(Identity.Version, back.Identity.Version);
        Assert.Equal(Identity.SceneSha256, back.Identity.SceneSha256);
        Assert.Equal(Identity.Configuration, back.Identity.Configuration);
        Assert.Equal([new SampleRange(0, 8)], back.Ranges);
        Assert.Null(Identity.FirstDifference(back.Identity));
        Assert.DoesNotContain(Directory.GetFiles(dir.Path), f => PathBench.Io.AtomicFile.IsTempName(Path.GetFileName(f)));
    }

    [Fact]
    public void Passes_and_splits_add_up_to_one_render_bit_for_bit()
    {
        Film whole = Rendered(0, 8, threads: 1);
        var passes = new Film(whole.Width, whole.Height);
        foreach ((int a, int b) in new[] { (0, 1), (1, 2), (2, 5), (5, 8) })
        {
            Renderer.RenderInto(Job(a, b), passes);
        }

        Film split = Rendered(0, 3);
        split.Merge(Rendered(3, 8, threads: 1));
        Assert.True(passes.SameSums(whole));
        Assert.True(split.SameSums(whole));
        Assert.False(Rendered(0, 7).SameSums(whole), "a film of fewer samples must differ, or the comparison tests nothing");
    }

    [Theory]
    [InlineData(10, 3)]
    [InlineData(7, 7)]
    [InlineData(4096, 16)]
    [InlineData(1, 1)]
    public void Shards_partition_the_range(int spp, int shards)
    {
        int at = 0;
        for (int i = 0; i < shards; i++)
        {
            SampleRange r = SampleRange.Shard(i, shards, spp);
            Assert.Equal(at, r.First);
            Assert.InRange(r.Count, spp / shards, (spp / shards) + 1);
            at = r.End;
        }

        Assert.Equal(spp, at);
    }

    [Fact]
    public void First_difference_names_the_field()
    {
        Assert.Equal("seed: 7 vs 8", Identity.FirstDifference(Identity with { Configuration = [new("generator", "sobol"), new("seed", "8")] }));
        Assert.StartsWith("version:", Identity.FirstDifference(Identity with { Version = "other" }));
        Assert.StartsWith("scene_sha256:", Identity.FirstDifference(Identity with { SceneSha256 = new string('b', 64) }));
        Assert.StartsWith("size: 24x20 vs 24x21", Identity.FirstDifference(Identity with { Height = 21 }));
    }

    /// <summary>Names the byte offsets of the header fields, for the cases below (layout: tools/accumulation-format.md).</summary>
    private static byte[] ValidFile(TempFolder dir)
    {
        AccumulationFile.Write(dir.File("good.accum"), new Rendering.Accumulation.Accumulation(Identity, [new SampleRange(0, 2)], Rendered(0, 2)));
        return File.ReadAllBytes(dir.File("good.accum"));
    }

    // Offsets in ValidFile's header: magic 0, format 8, version length 12 ("test-version", 12 bytes) → sha 26,
    // field count 58, "generator"/"sobol" 60…77, "seed"/"7" 78…86, width 87, height 91, range count 95, range 99.
    private const int WidthOffset = 87;
    private const int RangeCountOffset = 95;

    public static TheoryData<string, Func<byte[], byte[]>, string> Malformed => new()
    {
        { "empty", _ => [], "truncated: the file ends at byte 0, inside the magic" },
        { "foreign (a PNG signature)", b => [0x89, (byte)'P', (byte)'N', (byte)'G', 13, 10, 26, 10, .. b[8..]], "not a PathBench accumulation file" },
        { "future format version", b => Patch32(b, 8, 3), "format version 3; this PathBench reads version 2" },
        { "version 1, which dropped bright samples", b => Patch32(b, 8, 1), "format version 1 (written by a PathBench that dropped sample values of 2^32 or more); this PathBench reads version 2: render it again" },
        { "truncated in the header", b => b[..70], "truncated: the file ends at byte 70, inside the configuration field name" },
        { "truncated in the sums", b => b[..(b.Length - 100)], "truncated or padded" },
        { "one sum byte flipped", b => Flip(b, b.Length - 60), "checksum mismatch" },
        { "checksum byte flipped", b => Flip(b, b.Length - 1), "checksum mismatch" },
        { "width of 2^30 (refused before allocating)", b => Patch32(b, WidthOffset, 1 << 30), "is not a film size" },
        { "negative width", b => Patch32(b, WidthOffset, -3), "is not a film size" },
        { "a million ranges", b => Patch32(b, RangeCountOffset, 1 << 20), "range count 1048576 is outside [1, 65536]" },
        { "empty range", b => Patch32(b, RangeCountOffset + 8, 0), "range 0 [0, 0) is empty" },
        { "range longer than the sums (checksum made valid)", b => Rehash(Patch32(b, RangeCountOffset + 8, 3)), "the pixel counts and dropped samples add to" },
    };

    [Theory]
    [MemberData(nameof(Malformed))]
    public void Malformed_files_give_one_line_naming_the_file(string what, Func<byte[], byte[]> damage, string expected)
    {
        using var dir = new TempFolder();
        byte[] bytes = damage(ValidFile(dir));
        string path = dir.File("bad.accum");
        File.WriteAllBytes(path, bytes);
        var e = Assert.Throws<AccumulationFileException>(() => AccumulationFile.Read(path));
        Assert.StartsWith(path + ": ", e.Message);
        Assert.Contains(expected, e.Message, StringComparison.Ordinal);
        Assert.DoesNotContain('\n', e.Message);
        Assert.False(string.IsNullOrEmpty(what));
    }

    private static byte[] Patch32(byte[] b, int offset, int value)
    {
        byte[] c = (byte[])b.Clone();
        BinaryPrimitives.WriteInt32LittleEndian(c.AsSpan(offset), value);
        return c;
    }

    private static byte[] Flip(byte[] b, int offset)
    {
        byte[] c = (byte[])b.Clone();
        c[offset] ^= 0x40;
        return c;
    }

    /// <summary>Recomputes the trailing SHA-256 (FIPS 180-4) so a case tests the check behind the checksum.</summary>
    private static byte[] Rehash(byte[] b)
    {
        byte[] c = (byte[])b.Clone();
        SHA256.HashData(c.AsSpan(0, c.Length - 32)).CopyTo(c.AsSpan(c.Length - 32));
        return c;
    }
}
