#!/usr/bin/python3
"""Writes and decodes OpenEXR files through OpenImageIO (Debian python3-openimageio, which calls
the OpenEXR library) for PathBench's live cross-checks of its own EXR reader and writer.

  oiio_exr.py write OUT.exr --size W H --channels R,G,B --type half|float|uint[,…] \
      --compression NAME [--tile W H] [--seed S] [--noise SIGMA] [--origin X Y] [--display X Y W H] [--parts N]
  oiio_exr.py decode IN.exr OUT_PREFIX [--subimage N]

`write` fills every channel with a deterministic test pattern (noise over a gradient, flat
blocks, sharp edges, values near zero, HDR values, negatives) and writes it with the named
OpenEXR compression. `decode` writes OUT_PREFIX.json (what OpenImageIO reports of the file) and
OUT_PREFIX.bin: the data window, pixel-interleaved, every channel, little-endian float32 for
HALF and FLOAT channels (HALF widens to float exactly) and uint32 for UINT channels.
Exit status is 0 only when everything was written; any failure raises.
"""
import argparse
import json
import sys

import numpy as np
import OpenImageIO as oiio


def pattern(width, height, channels, seed, noise_scale=0.25):
    rng = np.random.default_rng(seed)
    y, x = np.mgrid[0:height, 0:width].astype(np.float64)
    planes = []
    for c in range(channels):
        base = (x / max(width - 1, 1)) * (1.5 + c) + (y / max(height - 1, 1)) * 0.5
        noise = rng.normal(0.0, noise_scale, size=(height, width))
        v = base + noise * (1 + c)
        v[(x // 8 + y // 8) % 5 == 0] = 0.375 + 0.125 * c          # flat 8x8-ish blocks
        v[(x // 4) % 7 == 3] *= 40.0                               # HDR stripes
        v[(y % 11) == 5] = -v[(y % 11) == 5]                       # negative lines
        v[(x + y) % 13 == 0] *= 1e-5                               # tiny values
        planes.append(v)
    return np.stack(planes, axis=-1)


def steps(width, height, channels):
    """A compressible pattern: broad steps of a few distinct values, for codecs that store noise raw."""
    y, x = np.mgrid[0:height, 0:width].astype(np.float64)
    return np.stack([(x // 6 + y // 5) * 0.125 + c for c in range(channels)], axis=-1)


def write(args):
    width, height = args.size
    names = args.channels.split(",")
    types = args.type.split(",")
    if len(types) == 1:
        types = types * len(names)
    if len(types) != len(names):
        raise SystemExit("--type needs one type or one per channel")
    data = steps(width, height, len(names)) if args.steps else pattern(width, height, len(names), args.seed, args.noise)
    parts = []
    for p in range(args.parts):
        spec = oiio.ImageSpec(width, height, len(names), oiio.FLOAT)
        spec.channelnames = tuple(names)
        spec.channelformats = tuple(oiio.TypeDesc(t) for t in types)
        spec.x, spec.y = args.origin
        if args.display:
            spec.full_x, spec.full_y, spec.full_width, spec.full_height = args.display
        else:
            spec.full_x, spec.full_y, spec.full_width, spec.full_height = args.origin[0], args.origin[1], width, height
        spec.attribute("compression", args.compression)
        if args.tile:
            spec.tile_width, spec.tile_height = args.tile
        if args.parts > 1:
            spec.attribute("oiio:subimagename", f"part{p}")
        parts.append(spec)
    pixels = data.astype(np.float32)
    for i, t in enumerate(types):
        if t == "uint":
            pixels[..., i] = np.abs(np.round(data[..., i] * 1000.0)).astype(np.float32)
    out = oiio.ImageOutput.create(args.out)
    if out is None:
        raise SystemExit("cannot create an OpenEXR writer: " + oiio.geterror())
    if args.parts > 1:
        if not out.open(args.out, tuple(parts)):
            raise SystemExit(out.geterror())
    elif not out.open(args.out, parts[0]):
        raise SystemExit(out.geterror())
    for p in range(args.parts):
        if p > 0 and not out.open(args.out, parts[p], "AppendSubimage"):
            raise SystemExit(out.geterror())
        # Each part gets its own values so a mix-up of parts cannot pass.
        if not out.write_image(pixels + np.float32(p)):
            raise SystemExit(out.geterror())
    if not out.close():
        raise SystemExit(out.geterror())


def decode(args):
    inp = oiio.ImageInput.open(args.file)
    if inp is None:
        raise SystemExit("OpenImageIO cannot open " + args.file + ": " + oiio.geterror())
    if not inp.seek_subimage(args.subimage, 0):
        raise SystemExit(f"no subimage {args.subimage}: " + inp.geterror())
    spec = inp.spec()
    formats = [str(f) for f in spec.channelformats] or [str(spec.format)] * spec.nchannels
    uint = all(f == "uint" for f in formats)
    if any(f == "uint" for f in formats) and not uint:
        raise SystemExit("mixed UINT and float channels are not decoded by this script")
    pixels = inp.read_image(args.subimage, 0, 0, spec.nchannels, "uint" if uint else "float")
    if pixels is None:
        raise SystemExit("read_image failed: " + inp.geterror())
    inp.close()
    pixels = np.ascontiguousarray(pixels, dtype="<u4" if uint else "<f4")
    pixels.tofile(args.out + ".bin")
    info = {
        "width": spec.width, "height": spec.height, "x": spec.x, "y": spec.y,
        "full": [spec.full_x, spec.full_y, spec.full_width, spec.full_height],
        "channels": list(spec.channelnames), "formats": formats,
        "compression": spec.get_string_attribute("compression"),
        "tile": [spec.tile_width, spec.tile_height],
        "oiio": oiio.VERSION_STRING,
    }
    with open(args.out + ".json", "w") as f:
        json.dump(info, f)


def main():
    parser = argparse.ArgumentParser()
    sub = parser.add_subparsers(dest="command", required=True)
    w = sub.add_parser("write")
    w.add_argument("out")
    w.add_argument("--size", nargs=2, type=int, required=True)
    w.add_argument("--channels", default="R,G,B")
    w.add_argument("--type", default="half")
    w.add_argument("--compression", required=True)
    w.add_argument("--tile", nargs=2, type=int)
    w.add_argument("--seed", type=int, default=1)
    w.add_argument("--steps", action="store_true", help="write broad steps instead of the noisy pattern")
    w.add_argument("--noise", type=float, default=0.25, help="standard deviation of the noise over the gradient")
    w.add_argument("--origin", nargs=2, type=int, default=[0, 0])
    w.add_argument("--display", nargs=4, type=int)
    w.add_argument("--parts", type=int, default=1)
    d = sub.add_parser("decode")
    d.add_argument("file")
    d.add_argument("out")
    d.add_argument("--subimage", type=int, default=0)
    args = parser.parse_args()
    write(args) if args.command == "write" else decode(args)


if __name__ == "__main__":
    sys.exit(main())
