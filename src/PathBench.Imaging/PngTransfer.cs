using System.Globalization;

namespace PathBench.Imaging;

/// <summary>
/// The transfer from a PNG's normalised samples (integer / (2^depth − 1)) to linear values, chosen
/// from its colour chunks in the precedence of the PNG specification, 3rd edition ("colour chunk
/// priority": cICP, then iCCP, then sRGB, then gAMA with cHRM), with the reason kept as a note.
/// </summary>
internal sealed class PngTransfer
{
    private readonly Func<double, double> toLinear;

    private PngTransfer(Func<double, double> toLinear, List<string> notes)
    {
        this.toLinear = toLinear;
        Notes = notes;
    }

    /// <summary>One line each: the transfer assumed and why, colour chunks overridden or not applied.</summary>
    public IReadOnlyList<string> Notes { get; }

    /// <summary>The linear value of a normalised sample in [0, 1].</summary>
    public double ToLinear(double encoded) => toLinear(encoded);

    /// <summary>Picks the transfer the highest-precedence colour chunk states.</summary>
    /// <exception cref="ImageFileException">A cICP chunk that is malformed or names a transfer not read here.</exception>
    public static PngTransfer Choose(PngColourChunks c, string fileName)
    {
        ArgumentNullException.ThrowIfNull(c);
        var notes = new List<string>();
        Func<double, double> curve;
        string winner;
        if (c.Cicp is { } cicp)
        {
            winner = "cICP";
            curve = FromCicp(cicp, fileName, notes);
        }
        else if (c.IccProfileName is { } profile)
        {
            // Interpreting an ICC profile takes a colour management system; assuming sRGB is right
            // for the common sRGB-profile case and said plainly for the others.
            winner = "iCCP";
            notes.Add($"iCCP profile '{profile}' not interpreted (no colour management here): sRGB assumed, samples decoded through the sRGB curve (IEC 61966-2-1)");
            curve = Srgb.Decode;
        }
        else if (c.SrgbIntent is not null)
        {
            winner = "sRGB";
            notes.Add("sRGB chunk: samples decoded through the sRGB curve (IEC 61966-2-1)");
            curve = Srgb.Decode;
        }
        else if (c.Gamma is { } g)
        {
            // gAMA stores the encoding exponent times 100000 (sample = linear^gamma), so the decoding
            // exponent is 100000 / value (PNG specification, gAMA chunk).
            winner = "gAMA";
            double exponent = 100000.0 / g;
            double gamma = g / 100000.0;
            notes.Add(string.Create(CultureInfo.InvariantCulture, $"gAMA {gamma:0.#####} (no cICP, iCCP or sRGB chunk): linear = sample^(1/{gamma:0.#####}) = sample^{exponent:0.#####}"));
            curve = v => Math.Pow(v, exponent);
        }
        else
        {
            // sRGB for untagged images: the PNG 3rd edition's recommended default (from memory; the
            // wording was not checked against the specification's text).
            winner = "";
            notes.Add("no cICP, iCCP, sRGB or gAMA chunk: sRGB assumed (the PNG specification's recommended default for untagged images), samples decoded through the sRGB curve (IEC 61966-2-1)");
            curve = Srgb.Decode;
        }

        string[] overridden = new[] { ("cICP", c.Cicp is not null), ("iCCP", c.IccProfileName is not null), ("sRGB", c.SrgbIntent is not null), ("gAMA", c.Gamma is not null) }
            .SkipWhile(p => p.Item1 != winner).Skip(1).Where(p => p.Item2).Select(p => p.Item1).ToArray();
        if (overridden.Length > 0)
        {
            notes.Add($"{string.Join(", ", overridden)} ignored: {winner} takes precedence (PNG specification, 3rd edition)");
        }

        if (c.HasChromaticities && winner is "gAMA" or "")
        {
            notes.Add("cHRM chromaticities not applied: primaries kept as stored, compared as if sRGB/BT.709");
        }

        return new PngTransfer(curve, notes);
    }

    private static Func<double, double> FromCicp(byte[] cicp, string fileName, List<string> notes)
    {
        byte primaries = cicp[0], transfer = cicp[1], matrix = cicp[2], fullRange = cicp[3];
        if (matrix != 0)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"cICP matrix coefficients {matrix}: PNG holds RGB, so only 0 is allowed"));
        }

        if (fullRange > 1)
        {
            throw new ImageFileException(fileName, FormattableString.Invariant($"cICP full-range flag {fullRange}: only 0 and 1 exist"));
        }

        if (fullRange == 0)
        {
            throw new ImageNotSupportedException(fileName, "cICP narrow-range (video-range) samples");
        }

        Func<double, double> curve = transfer switch
        {
            13 => Srgb.Decode,
            8 => v => v,
            _ => throw new ImageNotSupportedException(fileName, FormattableString.Invariant($"cICP transfer characteristics {transfer} ({TransferName(transfer)}); only 13 (sRGB) and 8 (linear) are read")),
        };
        notes.Add(transfer == 13
            ? "cICP transfer characteristics 13 (sRGB): samples decoded through the sRGB curve (IEC 61966-2-1)"
            : "cICP transfer characteristics 8 (linear): samples used as linear values");
        if (primaries != 1)
        {
            notes.Add(FormattableString.Invariant($"cICP colour primaries {primaries} ({PrimariesName(primaries)}) not converted: values kept in the file's primaries, compared as if BT.709/sRGB"));
        }

        return curve;
    }

    // ITU-T H.273 code points (from memory).
    private static string TransferName(byte code) => code switch
    {
        1 => "BT.709",
        2 => "unspecified",
        4 => "BT.470 System M, gamma 2.2",
        5 => "BT.470 System B/G, gamma 2.8",
        6 => "BT.601",
        7 => "SMPTE 240M",
        9 => "logarithmic 100:1",
        10 => "logarithmic 316:1",
        11 => "IEC 61966-2-4",
        12 => "BT.1361",
        14 => "BT.2020 10-bit",
        15 => "BT.2020 12-bit",
        16 => "SMPTE ST 2084, PQ",
        17 => "SMPTE ST 428-1",
        18 => "ARIB STD-B67, HLG",
        _ => "reserved",
    };

    private static string PrimariesName(byte code) => code switch
    {
        2 => "unspecified",
        4 => "BT.470 System M",
        5 => "BT.470 System B/G",
        6 => "BT.601",
        7 => "SMPTE 240M",
        8 => "generic film",
        9 => "BT.2020",
        10 => "SMPTE ST 428-1, XYZ",
        11 => "SMPTE RP 431-2, DCI-P3",
        12 => "SMPTE EG 432-1, Display P3",
        22 => "EBU Tech 3213-E",
        _ => "reserved",
    };
}
