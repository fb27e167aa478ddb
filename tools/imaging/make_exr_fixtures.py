#!/usr/bin/python3
"""Regenerates the OpenEXR fixtures of tests/PathBench.Imaging.Tests/Fixtures/exr: small files written
by OpenImageIO (Debian python3-openimageio) in the layouts and compressions our reader supports, each
with OpenImageIO's own decode recorded beside it (NAME.json, NAME.bin; see oiio_exr.py decode). The
reader's fixture tests need no reference tool; ExrFixtureTests re-decodes each fixture live, so a
recorded decode that no longer matches the library fails.

  tools/imaging/make_exr_fixtures.py            (from the repository root)
"""
import os
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "..", "tests", "PathBench.Imaging.Tests", "Fixtures", "exr")
SCRIPT = os.path.join(HERE, "oiio_exr.py")

# name, compression, pixel type, channels, extra options of oiio_exr.py write
FIXTURES = [
    ("scanline_none_half", "none", "half", "R,G,B", []),
    ("scanline_zips_float", "zips", "float", "R,G,B", []),
    ("scanline_zip_half", "zip", "half", "R,G,B", ["--seed", "3"]),
    ("tiled_zip_half_8x8", "zip", "half", "R,G,B", ["--tile", "8", "8"]),
    ("two_parts_zip_half", "zip", "half", "R,G,B", ["--parts", "2"]),
    ("layers_zip_half", "zip", "half", "R,G,B,diffuse.R,diffuse.G,diffuse.B", []),
    ("uint_zip", "zip", "uint", "R,G,B", []),
    ("scanline_rle_half", "rle", "half", "R,G,B", []),
    ("tiled_rle_float_8x4", "rle", "float", "R,G,B", ["--tile", "8", "4"]),
    ("scanline_pxr24_float", "pxr24", "float", "R,G,B", []),
    ("scanline_pxr24_half", "pxr24", "half", "R,G,B", ["--seed", "2"]),
    ("scanline_b44_half", "b44", "half", "R,G,B", []),
    ("tiled_b44a_half_8x8", "b44a", "half", "R,G,B", ["--tile", "8", "8"]),
    # Broad steps, so that PIZ chunks compress instead of being stored raw.
    ("scanline_piz_half", "piz", "half", "R,G,B", ["--steps", "--size", "64", "40"]),
    ("tiled_piz_float_32x16", "piz", "float", "R,G,B", ["--tile", "32", "16", "--steps", "--size", "70", "40"]),
    ("window_zip_float", "zip", "float", "R,G,B", ["--origin", "3", "2", "--display", "0", "0", "27", "16"]),
    # DWA: mild noise, so that the lossy chunks are coded (noisier ones are stored raw). R,G,B lossy as
    # Y'CbCr, A in the RLE section, Z in the zlib (UNKNOWN) section; "dwab:5000" quantizes coarsely, so
    # that blocks with few coefficients reach the library's shorter inverse-DCT variants.
    ("scanline_dwaa_half", "dwaa", "half", "R,G,B,A", ["--noise", "0.02", "--size", "37", "21"]),
    ("tiled_dwab_float_16x16", "dwab", "float", "R,G,B,Z", ["--tile", "16", "16", "--noise", "0.02", "--size", "35", "20"]),
    ("scanline_dwab_coarse_half", "dwab:5000", "half", "R,G,B", ["--noise", "0.01", "--size", "48", "40"]),
]


def main():
    os.makedirs(OUT, exist_ok=True)
    for name, compression, pixel, channels, extra in FIXTURES:
        path = os.path.join(OUT, name + ".exr")
        subprocess.run([sys.executable, SCRIPT, "write", path, "--size", "21", "11", "--channels", channels,
                        "--type", pixel, "--compression", compression, *extra], check=True)
        subprocess.run([sys.executable, SCRIPT, "decode", path, os.path.join(OUT, name)], check=True)
        print(name, os.path.getsize(path), "bytes")


if __name__ == "__main__":
    main()
