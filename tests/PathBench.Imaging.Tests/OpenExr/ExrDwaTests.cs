using System.Buffers.Binary;
using System.Globalization;
using System.IO.Compression;
using System.Runtime.InteropServices;
using System.Text;

namespace PathBench.Imaging.Tests.OpenExr;

/// <summary>
/// What DWAA/DWAB decoding needs beyond the layouts of <see cref="ExrLayoutTests"/>: the to-linear
/// table, and channels flagged perceptually linear (pLinear), which the library codes without it.
/// </summary>
public sealed class ExrDwaTests
{
    [Fact]
    public void To_linear_table_is_the_one_the_installed_library_uses_in_all_65536_entries()
    {
        // Source: the table compiled into Debian's libOpenEXR (the library under OpenImageIO), read out
        // again now by the script that generated our data file; its exit status is not trusted alone.
        using var dir = new TempFolder();
        string output = dir.File("dwa_to_linear.txt");
        string script = Path.Combine(AppContext.BaseDirectory, "tools", "extract_dwa_to_linear.py");
        ReferenceTools.Result r = ExternalTool.Run(ExternalTool.Python, "libopenexr-3-1-30 python3-numpy", [script, output]);
        Assert.True(r.ExitCode == 0 && File.Exists(output), $"extract_dwa_to_linear.py failed (exit {r.ExitCode}): {r.Stderr}");
        ushort[] library =
        [
            .. File.ReadLines(output).Where(l => !l.StartsWith('#'))
                .SelectMany(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries))
                .Select(v => ushort.Parse(v, NumberStyles.AllowHexSpecifier, CultureInfo.InvariantCulture)),
        ];
        Assert.Equal(65536, library.Length);
        ReadOnlySpan<ushort> ours = ExrDwaToLinear.Table;
        for (int i = 0; i < library.Length; i++)
        {
            Assert.True(ours[i] == library[i], FormattableString.Invariant($"entry 0x{i:x4}: ours 0x{ours[i]:x4}, the library's 0x{library[i]:x4}"));
        }
    }

    [Fact]
    public void To_linear_table_follows_the_formula_it_was_generated_from()
    {
        // Source: the generator in OpenEXR's dwaLookups.cpp: sign·|h|^2.2 for |h| ≤ 1, sign·(e^2.2)^(|h| − 1)
        // above (with e as 2.7182818), 0 for infinities and NaNs. The shipped entries come from single-
        // precision pow, so each is allowed one HALF step from the double-precision value (common practice).
        ReadOnlySpan<ushort> table = ExrDwaToLinear.Table;
        double logBase = Math.Pow(2.7182818, 2.2);
        for (int i = 0; i < 65536; i++)
        {
            float h = (float)BitConverter.UInt16BitsToHalf((ushort)i);
            if (!float.IsFinite(h))
            {
                Assert.True(table[i] == 0, FormattableString.Invariant($"entry 0x{i:x4} (not finite) is 0x{table[i]:x4}, not 0"));
                continue;
            }

            double magnitude = Math.Abs(h);
            double linear = Math.Sign(h) * (magnitude <= 1 ? Math.Pow(magnitude, 2.2) : Math.Pow(logBase, magnitude - 1));
            int expected = OrderedHalf(BitConverter.HalfToUInt16Bits((Half)linear));
            int actual = OrderedHalf(table[i]);
            Assert.True(Math.Abs(expected - actual) <= 1, FormattableString.Invariant($"entry 0x{i:x4} ({h:R}) is 0x{table[i]:x4}; the formula gives {linear:R}"));
        }
    }

    /// <summary>
    /// A lossy channel alone, flagged pLinear, is coded without the to-linear table (and its −0 results,
    /// which the table would turn into +0, reach the output), while R, G, B coded together as Y'CbCr use
    /// the table whatever their flags. The files are OpenImageIO's with the flags set afterwards, so the
    /// chunks are unchanged and both decoders read them under the new flags.
    /// </summary>
    [Theory]
    [InlineData("dwab_y_plinear", "dwab:5000", "Y,A", "0.01")]
    [InlineData("dwaa_rgby_plinear", "dwaa:300", "R,G,B,Y,A", "0.05")]
    public void Channels_flagged_perceptually_linear_read_as_OpenImageIO_decodes_them(string name, string compression, string channels, string noise)
    {
        // Source: OpenImageIO's decode (through the OpenEXR library) of the same file.
        using var dir = new TempFolder();
        string path = dir.File(name + ".exr");
        OiioReference.Write(path, 64, 48, compression, "half", channels, "--noise", noise);
        byte[] bytes = File.ReadAllBytes(path);
        foreach (string channel in channels.Split(','))
        {
            bytes[ChannelEntry(bytes, channel) + channel.Length + 1 + 4] = 1;
        }

        File.WriteAllBytes(path, bytes);
        OiioReference.Decoded reference = OiioReference.Decode(path);
        foreach (string channel in channels.Split(','))
        {
            OiioReference.AssertSame(reference, ExrCodec.Read(path, options: new ExrReadOptions(Channels: [channel])), $"{name} channel {channel}", [channel]);
        }
    }

    /// <summary>
    /// Hand-made blocks whose coefficients are signed zeros (the library's encoder writes a quantized
    /// −0 as a literal, not as part of a zero run), with the last coefficient placed so that each
    /// inverse-DCT variant runs. A variant that added the zero rows' terms instead of leaving them out
    /// would turn some −0 results into +0 (found by comparing the variants on such blocks); in a pLinear
    /// channel they reach the output. Then blocks of small values with zero runs, and a DC-only block.
    /// Source: OpenImageIO's decode (OpenEXR library) of the same chunk, put into a file it wrote.
    /// </summary>
    [Fact]
    public void Hand_made_blocks_of_signed_zeros_decode_as_the_library_decodes_them()
    {
        const ushort N = 0x8000, Z = 0; // −0 and +0 as HALF bits
        ushort[][] designed =
        [
            [N, N, N, Z, Z, N, N, N, Z, Z],
            [N, N, Z, Z, Z, N, Z, N, Z],
            [N, N, N, N, N, N, Z, Z, Z],
            [N, Z, Z, Z, Z, N, N, N, N, N],
            [N, Z, N, Z, Z, Z, N, Z, N, N, N, N, Z, N, N, Z, N, N, Z, Z],
            [N, N, N, Z, N, Z, Z, Z, Z, Z, Z, N, N, N, N, Z, N, N, N, N],
            [N, N],
            [N, N, N],
        ];
        var random = new Random(3);
        ushort[] values = [Z, N, 0x3c00, 0xbc00, 0x3800, 0xc000, 0x3400, 0x2e66];
        int[] lasts = [0, 1, 2, 8, 9, 19, 20, 34, 35, 63]; // one zig-zag index per variant boundary
        var blocks = new List<(ushort Dc, List<ushort> Ac)>();
        foreach (ushort[] zig in designed)
        {
            blocks.Add((zig[0], [.. zig.Skip(1), .. zig.Length < 64 ? new ushort[] { 0xff00 } : []]));
        }

        while (blocks.Count < 16)
        {
            int last = lasts[blocks.Count % lasts.Length];
            var ac = new List<ushort>();
            for (int k = 1; k <= last; k++)
            {
                // Now and then a run of +0 coefficients (0xffnn) where the next ones are +0 anyway.
                if (k + 2 < last && random.Next(5) == 0)
                {
                    ac.Add(0xff02);
                    k += 1;
                    continue;
                }

                ac.Add(values[random.Next(values.Length)]);
            }

            if (last < 63)
            {
                ac.Add(0xff00);
            }

            blocks.Add((values[random.Next(2, values.Length)], ac));
        }

        using var dir = new TempFolder();
        string path = dir.File("signed_zeros.exr");
        OiioReference.Write(path, 32, 32, "dwaa", "half", "Y,A", "--steps");
        byte[] file = File.ReadAllBytes(path);
        file[ChannelEntry(file, "Y") + 2 + 4] = 1; // Y is pLinear: no to-linear table hides the zeros' signs
        File.WriteAllBytes(path, ReplaceOnlyChunk(file, blocks));

        OiioReference.Decoded reference = OiioReference.Decode(path);
        foreach (string channel in new[] { "Y", "A" })
        {
            OiioReference.AssertSame(reference, ExrCodec.Read(path, options: new ExrReadOptions(Channels: [channel])), $"hand-made chunk channel {channel}", [channel]);
        }
    }

    /// <summary>
    /// The file's one DWAA chunk (Y lossy, A in the RLE section) with the lossy blocks replaced by
    /// <paramref name="blocks"/> (DC, then the AC values with their run codes), the RLE section kept.
    /// </summary>
    private static byte[] ReplaceOnlyChunk(byte[] file, List<(ushort Dc, List<ushort> Ac)> blocks) => RewriteOnlyChunk(file, chunk =>
    {
        Assert.True(chunk.Header[1] == 0 && chunk.Header[9] == (ulong)blocks.Count, "the file OpenImageIO wrote is not laid out as this test expects");
        ushort[] ac = [.. blocks.SelectMany(b => b.Ac)];
        chunk.Sections[1] = ExrHuffman.Encode(ac);
        byte[] dcRaw = MemoryMarshal.AsBytes(blocks.Select(b => b.Dc).ToArray().AsSpan()).ToArray();
        var coded = new byte[dcRaw.Length];
        ExrZip.Encode(dcRaw, coded);
        chunk.Sections[2] = Zlib(coded);
        chunk.Header[8] = (ulong)ac.Length;
        chunk.Header[10] = 0;
    });

    /// <summary>A DWA chunk taken apart: the eleven header values, the rule table (with its length), the four sections.</summary>
    private sealed record DwaChunk(ulong[] Header, byte[] Rules, byte[][] Sections)
    {
        public byte[] Rules { get; set; } = Rules;
    }

    /// <summary>
    /// Takes the one (scanline) chunk of <paramref name="file"/> apart, lets <paramref name="change"/>
    /// change it, and puts it back with its section sizes and the chunk's size updated.
    /// </summary>
    private static byte[] RewriteOnlyChunk(byte[] file, Action<DwaChunk> change)
    {
        var stream = new MemoryStream(file);
        new ExrHeaderReader(stream, "rewritten.exr", file.Length).ReadHeaders();
        int c = (int)BinaryPrimitives.ReadUInt64LittleEndian(file.AsSpan((int)stream.Position));
        int d = c + 8;
        Assert.Equal(file.Length, d + BinaryPrimitives.ReadInt32LittleEndian(file.AsSpan(c + 4)));
        var h = new ulong[11];
        for (int i = 0; i < 11; i++)
        {
            h[i] = BinaryPrimitives.ReadUInt64LittleEndian(file.AsSpan(d + (8 * i)));
        }

        int data = d + 88 + BinaryPrimitives.ReadUInt16LittleEndian(file.AsSpan(d + 88));
        var sections = new byte[4][];
        for (int s = 0, p = data; s < 4; s++)
        {
            int size = (int)h[s == 0 ? 2 : 2 + s];
            sections[s] = file[p..(p + size)];
            p += size;
        }

        var chunk = new DwaChunk(h, file[(d + 88)..data], sections);
        change(chunk);
        for (int s = 0; s < 4; s++)
        {
            h[s == 0 ? 2 : 2 + s] = (ulong)chunk.Sections[s].Length;
        }

        var header = new byte[88];
        for (int i = 0; i < 11; i++)
        {
            BinaryPrimitives.WriteUInt64LittleEndian(header.AsSpan(8 * i), h[i]);
        }

        byte[] payload = [.. header, .. chunk.Rules, .. chunk.Sections.SelectMany(x => x)];
        byte[] result = [.. file[..(c + 4)], .. new byte[4], .. payload];
        BinaryPrimitives.WriteInt32LittleEndian(result.AsSpan(c + 4), payload.Length);
        return result;
    }

    /// <summary>
    /// Two chunk forms the library reads but its writer (3.1.5) never produces, made from one it wrote:
    /// version 1, which stores no rule table and is read with the library's legacy rules (which sort
    /// R, G, B, A as the stored rules do), and AC values stored with zlib instead of Huffman.
    /// Source: OpenImageIO's decode (OpenEXR library) of the rewritten file.
    /// </summary>
    [Theory]
    [InlineData("legacy_version_1")]
    [InlineData("ac_zlib")]
    [InlineData("legacy_version_1_ac_zlib")]
    public void Chunk_forms_the_library_reads_but_does_not_write_read_as_OpenImageIO_decodes_them(string form)
    {
        using var dir = new TempFolder();
        string path = dir.File(form + ".exr");
        OiioReference.Write(path, 37, 21, "dwaa", "half", "R,G,B,A", "--noise", "0.02");
        byte[] file = RewriteOnlyChunk(File.ReadAllBytes(path), chunk =>
        {
            if (form.StartsWith("legacy", StringComparison.Ordinal))
            {
                chunk.Header[0] = 1;
                chunk.Rules = [];
            }

            if (form.EndsWith("ac_zlib", StringComparison.Ordinal))
            {
                var ac = new ushort[chunk.Header[8]];
                ExrHuffman.Decode(chunk.Sections[1], ac);
                chunk.Sections[1] = Zlib(MemoryMarshal.AsBytes(ac.AsSpan()).ToArray());
                chunk.Header[10] = 1;
            }
        });
        File.WriteAllBytes(path, file);
        OiioReference.Decoded reference = OiioReference.Decode(path);
        OiioReference.AssertSame(reference, ExrCodec.Read(path), form, ["R", "G", "B"]);
        OiioReference.AssertSame(reference, ExrCodec.Read(path, options: new ExrReadOptions(Channels: ["A"])), form + " channel A", ["A"]);
    }

    private static byte[] Zlib(byte[] data)
    {
        var s = new MemoryStream();
        using (var z = new ZLibStream(s, CompressionLevel.Optimal, leaveOpen: true))
        {
            z.Write(data);
        }

        return s.ToArray();
    }

    /// <summary>Where channel <paramref name="name"/>'s entry starts in the file's chlist (name, zero byte, type, pLinear, …).</summary>
    private static int ChannelEntry(byte[] exr, string name)
    {
        int value = ExrTests.IndexOf(exr, "channels\0chlist\0"u8) + "channels\0chlist\0".Length;
        int size = BinaryPrimitives.ReadInt32LittleEndian(exr.AsSpan(value));
        int p = value + 4;
        byte[] wanted = Encoding.UTF8.GetBytes(name);
        while (p < value + 4 + size && exr[p] != 0)
        {
            int end = Array.IndexOf(exr, (byte)0, p);
            if (exr.AsSpan(p, end - p).SequenceEqual(wanted))
            {
                return p;
            }

            p = end + 1 + 16;
        }

        throw new InvalidOperationException($"no channel '{name}' in the file's chlist");
    }

    /// <summary>HALF bits as an integer that grows with the value (−0 and +0 adjacent), so neighbours differ by 1.</summary>
    private static int OrderedHalf(ushort bits) => (bits & 0x8000) != 0 ? -(bits & 0x7fff) - 1 : bits;
}
