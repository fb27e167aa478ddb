#!/usr/bin/python3
"""Writes PNG files of every colour type and legal bit depth, with the samples Pillow decodes from
them and the linear values the transfer formulas give, for PathBench's PNG reader tests.

    png_reference.py OUTDIR              the live cross-check set (tests/PathBench.Imaging.Tests/PngReferenceTests.cs)
    png_reference.py --fixtures OUTDIR   the small checked-in set (tests/PathBench.Imaging.Tests/Fixtures/png)

For each case NAME it writes NAME.png and NAME.txt:
    size W H CHANNELS DEPTH COLOURTYPE INTERLACE
    transfer KIND           srgb-default | srgb-chunk | gamma:G | iccp | cicp-srgb | cicp-linear
    source S                pillow (samples as Pillow decodes them) or numpy (see below)
    samples ...             the stored integer samples, row by row, channels in file order (palette: indices)
    palette ...             palette images: the PLTE entries, R G B each
    linear ...              the expected linear R G B of each pixel (Python float repr)
and prints "case NAME" per case, then "done N".

Writers: Pillow (python3-pil) writes what it can (8-bit L, LA, RGB, RGBA, P with tRNS and 1/2/4
bits, mode 1, I;16; colour chunks through PngInfo.add); everything else (2- and 4-bit grey,
16-bit grey+alpha, RGB and RGBA, every Adam7 file, all five filter types) is written below from
the PNG specification (W3C PNG 3rd edition: chunk layout with zlib.crc32, filters, Adam7) with
Python's zlib and struct.

Expected samples: Pillow's decode, checked to equal the integers written. Pillow 9.4 reads 2- and
4-bit grey as 8-bit L (value times 255/(2^depth - 1)), which is divided back exactly; it reads
16-bit grey exactly (mode I) but 16-bit grey+alpha, RGB and RGBA truncated to their high byte.
For those three the expected samples are the numpy integers written (source numpy), and the
script checks that Pillow's 8-bit decode equals their high byte. (A Pillow that reads them
exactly, or leaves low-depth grey unscaled, has its decode used as it is.)
"""

import io
import os
import struct
import sys
import zlib

import numpy as np
from PIL import Image, PngImagePlugin

CHANNELS = {0: 1, 2: 3, 3: 1, 4: 2, 6: 4}

# Adam7 passes: first column, first row, column step, row step (PNG specification, "Interlacing").
ADAM7 = [(0, 0, 8, 8), (4, 0, 8, 8), (0, 4, 4, 8), (2, 0, 4, 4), (0, 2, 2, 4), (1, 0, 2, 2), (0, 1, 1, 2)]


def chunk(kind, data):
    return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)


def pack_row(samples, depth):
    """One row of integer samples (already flattened per pixel) to bytes (PNG specification, "Scanline")."""
    if depth == 16:
        return b"".join(struct.pack(">H", int(v)) for v in samples)
    if depth == 8:
        return bytes(int(v) for v in samples)
    bits = "".join(format(int(v), "0%db" % depth) for v in samples)
    bits += "0" * ((-len(bits)) % 8)
    return int(bits, 2).to_bytes(len(bits) // 8, "big") if bits else b""


def paeth(a, b, c):
    # PNG specification, "Filter type 4: Paeth".
    p = a + b - c
    pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
    if pa <= pb and pa <= pc:
        return a
    return b if pb <= pc else c


def filter_row(kind, raw, prior, bpp):
    out = bytearray([kind])
    for i, x in enumerate(raw):
        a = raw[i - bpp] if i >= bpp else 0
        b = prior[i]
        c = prior[i - bpp] if i >= bpp else 0
        predictor = [0, a, b, (a + b) // 2, paeth(a, b, c)][kind]
        out.append((x - predictor) % 256)
    return bytes(out)


def filtered_data(arr, depth, interlace):
    """The filtered byte stream; row r of a pass uses filter type (r + pass) mod 5, so all five occur."""
    h, w, ch = arr.shape
    bpp = max(1, ch * depth // 8)
    passes = ADAM7 if interlace else [(0, 0, 1, 1)]
    out = bytearray()
    for p, (x0, y0, dx, dy) in enumerate(passes):
        sub = arr[y0::dy, x0::dx, :]
        if sub.shape[0] == 0 or sub.shape[1] == 0:
            continue  # an empty pass has no rows at all
        prior = bytes(len(pack_row(sub[0].reshape(-1), depth)))
        for r in range(sub.shape[0]):
            raw = pack_row(sub[r].reshape(-1), depth)
            out += filter_row((r + p) % 5, raw, prior, bpp)
            prior = raw
    return bytes(out)


def spec_png(arr, depth, colour_type, interlace, before=(), palette=None, trns=None):
    h, w, _ = arr.shape
    data = b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, depth, colour_type, 0, 0, interlace))
    for kind, payload in before:
        data += chunk(kind, payload)
    if palette is not None:
        data += chunk(b"PLTE", bytes(int(v) for v in palette.reshape(-1)))
    if trns is not None:
        data += chunk(b"tRNS", trns)
    compressed = zlib.compress(filtered_data(arr, depth, interlace), 9)
    # Two IDAT chunks (a split the specification allows anywhere in the stream).
    half = len(compressed) // 2
    data += chunk(b"IDAT", compressed[:half]) + chunk(b"IDAT", compressed[half:])
    return data + chunk(b"IEND", b"")


def pillow_png(arr, depth, colour_type, before=(), palette=None, trns=None):
    h, w, ch = arr.shape
    info = PngImagePlugin.PngInfo()
    for kind, payload in before:
        info.add(kind, payload)
    options = {"pnginfo": info}
    if colour_type == 3:
        im = Image.new("P", (w, h))
        im.putdata([int(v) for v in arr.reshape(-1)])
        im.putpalette([int(v) for v in palette.reshape(-1)])
        if depth < 8:
            options["bits"] = depth
        if trns is not None:
            options["transparency"] = trns
    elif colour_type == 0 and depth == 1:
        im = Image.new("1", (w, h))
        im.putdata([255 * int(v) for v in arr.reshape(-1)])
    elif colour_type == 0 and depth == 16:
        im = Image.fromarray(arr[:, :, 0].astype(np.uint16))  # mode I;16
    else:
        mode = {0: "L", 2: "RGB", 4: "LA", 6: "RGBA"}[colour_type]
        im = Image.fromarray(arr.astype(np.uint8) if ch > 1 else arr[:, :, 0].astype(np.uint8), mode)
    buffer = io.BytesIO()
    im.save(buffer, "PNG", **options)
    data = buffer.getvalue()
    if data[24] != depth or data[25] != colour_type:
        raise SystemExit("Pillow wrote depth %d colour type %d, expected %d %d" % (data[24], data[25], depth, colour_type))
    return data


def pillow_samples(path, depth, colour_type, expected):
    """Pillow's decode as stored integers, or the numpy integers where Pillow truncates (checked on the high byte)."""
    im = Image.open(path)
    im.load()
    a = np.array(im)
    h, w, ch = expected.shape
    if colour_type == 3:
        got = a.astype(np.int64).reshape(h, w, 1)
        pal = np.array(im.getpalette()[: 3 * (int(expected.max()) + 1)], dtype=np.int64)
        return got, "pillow", pal
    if depth == 16 and colour_type != 0 and a.dtype.itemsize == 1:
        high = a.astype(np.int64).reshape(h, w, -1)
        if colour_type == 4:  # Pillow 9.4 opens 16-bit grey+alpha as RGBA
            high = high[:, :, [0, 3]]
        if not np.array_equal(high, expected >> 8):
            raise SystemExit("%s: Pillow's 8-bit decode is not the high byte of the samples written" % path)
        return expected, "numpy", None
    got = a.astype(np.int64).reshape(h, w, ch)
    if colour_type == 0 and depth in (2, 4) and got.max() > (1 << depth) - 1:  # scaled to 8 bits, as Pillow 9.4 does
        scale = 255 // ((1 << depth) - 1)
        if np.any(got % scale):
            raise SystemExit("%s: Pillow's L values are not multiples of %d" % (path, scale))
        got = got // scale
    return got, "pillow", None


def srgb_decode(v):
    # IEC 61966-2-1:1999, the sRGB electro-optical transfer: V/12.92 up to 0.04045, else ((V+0.055)/1.055)^2.4.
    return v / 12.92 if v <= 0.04045 else ((v + 0.055) / 1.055) ** 2.4


def to_linear(transfer, v):
    if transfer in ("srgb-default", "srgb-chunk", "iccp", "cicp-srgb"):
        return srgb_decode(v)
    if transfer == "cicp-linear":
        return v
    # gAMA holds gamma times 100000, sample = linear^gamma (PNG specification, gAMA chunk).
    g = int(transfer.split(":")[1])
    return v ** (100000 / g)


def colour_chunks(transfer_chunks):
    out = []
    for name in transfer_chunks:
        if name.startswith("gAMA:"):
            out.append((b"gAMA", struct.pack(">I", int(name[5:]))))
        elif name == "sRGB":
            out.append((b"sRGB", b"\x00"))
        elif name == "iCCP":
            # The profile is not interpreted by the reader; any compressed bytes do.
            out.append((b"iCCP", b"test profile\x00\x00" + zlib.compress(b"not a real ICC profile")))
        elif name.startswith("cICP:"):
            out.append((b"cICP", bytes(int(v) for v in name[5:].split(","))))
    return out


def transfer_of(chunks):
    # Precedence of the PNG specification, 3rd edition: cICP, iCCP, sRGB, gAMA.
    for c in chunks:
        if c.startswith("cICP:"):
            return "cicp-linear" if c.split(",")[1] == "8" else "cicp-srgb"
    if "iCCP" in chunks:
        return "iccp"
    if "sRGB" in chunks:
        return "srgb-chunk"
    for c in chunks:
        if c.startswith("gAMA:"):
            return "gamma:" + c[5:]
    return "srgb-default"


def make_case(out, name, writer, colour_type, depth, interlace, w, h, seed, chunks=(), trns=False):
    rng = np.random.default_rng(seed)
    ch = CHANNELS[colour_type]
    palette = None
    if colour_type == 3:
        entries = min(1 << depth, 200)
        palette = rng.integers(0, 256, size=(entries, 3), dtype=np.int64)
        arr = rng.integers(0, entries, size=(h, w, 1), dtype=np.int64)
    else:
        arr = rng.integers(0, 1 << depth, size=(h, w, ch), dtype=np.int64)
        if depth == 16:
            arr[0, 0, :] = 0x12AB  # high and low bytes differ, so an 8-bit truncation shows
    trns_bytes = None
    if trns:
        trns_bytes = bytes([0, 128, 255])[: len(palette)] if palette is not None else {0: b"\x00\x01", 2: b"\x00\x01\x00\x02\x00\x03"}[colour_type]
    extra = colour_chunks(chunks)
    if writer == "pillow":
        data = pillow_png(arr, depth, colour_type, extra, palette, trns_bytes)
    else:
        data = spec_png(arr, depth, colour_type, interlace, extra, palette, trns_bytes)
    path = os.path.join(out, name + ".png")
    with open(path, "wb") as f:
        f.write(data)

    got, source, pal = pillow_samples(path, depth, colour_type, arr)
    if not np.array_equal(got, arr):
        raise SystemExit("%s: Pillow decodes other samples than were written" % name)
    if pal is not None and not np.array_equal(pal, palette.reshape(-1)[: len(pal)]):
        raise SystemExit("%s: Pillow reads another palette than was written" % name)

    transfer = transfer_of(chunks)
    if colour_type == 3:
        rgb = palette[got[:, :, 0]] / 255.0
    else:
        norm = got / float((1 << depth) - 1)
        rgb = norm[:, :, [0, 0, 0]] if ch <= 2 else norm[:, :, :3]
    linear = [repr(to_linear(transfer, float(v))) for v in rgb.reshape(-1)]
    with open(os.path.join(out, name + ".txt"), "w") as f:
        f.write("size %d %d %d %d %d %d\n" % (w, h, ch, depth, colour_type, interlace))
        f.write("transfer %s\n" % transfer)
        f.write("source %s\n" % source)
        f.write("samples %s\n" % " ".join(str(int(v)) for v in got.reshape(-1)))
        if colour_type == 3:
            f.write("palette %s\n" % " ".join(str(int(v)) for v in palette.reshape(-1)))
        f.write("linear %s\n" % " ".join(linear))
    print("case " + name)


LEGAL = [(0, 1), (0, 2), (0, 4), (0, 8), (0, 16), (2, 8), (2, 16), (3, 1), (3, 2), (3, 4), (3, 8), (4, 8), (4, 16), (6, 8), (6, 16)]
SHORT = {0: "grey", 2: "rgb", 3: "palette", 4: "greyalpha", 6: "rgba"}


def live_cases():
    cases = []
    seed = 100
    for colour_type, depth in LEGAL:
        for interlace in (0, 1):
            seed += 1
            name = "spec_%s%d_%s" % (SHORT[colour_type], depth, "adam7" if interlace else "plain")
            cases.append((name, "spec", colour_type, depth, interlace, 13, 11, seed, (), colour_type == 3))
    pillow = [(0, 1), (0, 8), (0, 16), (2, 8), (4, 8), (6, 8), (3, 1), (3, 2), (3, 4), (3, 8)]
    for colour_type, depth in pillow:
        seed += 1
        cases.append(("pillow_%s%d" % (SHORT[colour_type], depth), "pillow", colour_type, depth, 0, 17, 9, seed, (), colour_type == 3))
    # Tiny Adam7 images: most passes are empty and have no rows.
    for w, h in ((1, 1), (2, 3), (3, 2), (5, 1)):
        for colour_type, depth in ((0, 8), (2, 16), (3, 1), (0, 2)):
            seed += 1
            cases.append(("spec_adam7_%dx%d_%s%d" % (w, h, SHORT[colour_type], depth), "spec", colour_type, depth, 1, w, h, seed, (), False))
    # Transparency in grey and RGB (tRNS is ignored, the colour must not change).
    cases.append(("spec_grey8_trns", "spec", 0, 8, 0, 6, 5, 300, (), True))
    cases.append(("spec_rgb16_trns", "spec", 2, 16, 0, 6, 5, 301, (), True))
    # Colour chunks and their precedence.
    cases.append(("pillow_rgb8_gama45455", "pillow", 2, 8, 0, 9, 7, 310, ("gAMA:45455",), False))
    cases.append(("pillow_rgb8_srgb", "pillow", 2, 8, 0, 9, 7, 311, ("sRGB",), False))
    cases.append(("pillow_rgb8_srgb_over_gama", "pillow", 2, 8, 0, 9, 7, 312, ("gAMA:100000", "sRGB"), False))
    cases.append(("pillow_palette4_gama55000", "pillow", 3, 4, 0, 9, 7, 313, ("gAMA:55000",), True))
    cases.append(("spec_grey16_gama100000", "spec", 0, 16, 0, 9, 7, 314, ("gAMA:100000",), False))
    cases.append(("spec_rgba16_adam7_gama220000", "spec", 6, 16, 1, 9, 7, 315, ("gAMA:220000",), False))
    cases.append(("spec_rgb8_iccp_over_gama", "spec", 2, 8, 0, 9, 7, 316, ("gAMA:100000", "iCCP"), False))
    cases.append(("spec_rgb16_cicp_linear", "spec", 2, 16, 0, 9, 7, 317, ("cICP:1,8,0,1", "iCCP", "gAMA:45455"), False))
    cases.append(("spec_grey8_cicp_srgb", "spec", 0, 8, 0, 9, 7, 318, ("cICP:1,13,0,1", "gAMA:100000"), False))
    return cases


def fixture_cases():
    return [
        ("grey1_plain", "spec", 0, 1, 0, 7, 3, 1, (), False),
        ("grey4_adam7", "spec", 0, 4, 1, 5, 3, 2, (), False),
        ("grey16_plain_gama45455", "spec", 0, 16, 0, 5, 3, 3, ("gAMA:45455",), False),
        ("rgb16_adam7", "spec", 2, 16, 1, 5, 3, 4, (), False),
        ("rgba8_plain_srgb", "spec", 6, 8, 0, 5, 3, 5, ("sRGB",), False),
        ("greyalpha16_plain", "spec", 4, 16, 0, 4, 3, 6, (), False),
        ("palette2_adam7_trns", "spec", 3, 2, 1, 5, 3, 7, (), True),
        ("palette8_plain", "spec", 3, 8, 0, 5, 3, 8, (), False),
        ("rgb8_adam7_2x3", "spec", 2, 8, 1, 2, 3, 9, (), False),
        ("rgb16_plain_cicp_linear", "spec", 2, 16, 0, 4, 2, 10, ("cICP:1,8,0,1",), False),
    ]


def main(argv):
    fixtures = argv[:1] == ["--fixtures"]
    args = argv[1:] if fixtures else argv
    if len(args) != 1:
        raise SystemExit(__doc__)
    out = args[0]
    os.makedirs(out, exist_ok=True)
    cases = fixture_cases() if fixtures else live_cases()
    for case in cases:
        make_case(out, *case)
    print("done %d" % len(cases))


if __name__ == "__main__":
    main(sys.argv[1:])
