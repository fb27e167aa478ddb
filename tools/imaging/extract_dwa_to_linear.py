#!/usr/bin/python3
"""Regenerates src/PathBench.Imaging/Data/dwa_to_linear.txt: the table DWAA/DWAB decoders use to
turn a decoded nonlinear HALF value back into linear light (OpenEXR's dwaCompressorToLinear).

The OpenEXR library ships that table pregenerated (dwaLookups.h, built into libOpenEXR), so the
values a decoder must reproduce are the library's stored ones, not a fresh evaluation of the
formula sign * |h|^2.2 (|h| <= 1), sign * (e^2.2)^(|h| - 1) (|h| > 1), 0 for infinities and NaNs.
This script reads them out of the installed library itself (Debian libopenexr-3-1-30, the library
under python3-openimageio): the table is the one 65536-entry little-endian uint16 array in the
shared object that maps 0 -> 0, 1.0 (0x3c00) -> 1.0, -1.0 (0xbc00) -> -1.0, every infinity and NaN
(0x7c00..0x7fff, 0xfc00..0xffff) -> 0, and 0.5 (0x3800) to a smaller value (0.5^2.2; the
neighbouring toNonlinear table maps 0.5 upwards). Exactly one array must qualify.

  /usr/bin/python3 tools/imaging/extract_dwa_to_linear.py [OUT]      (default: the data file)
"""
import hashlib
import os
import subprocess
import sys

import numpy as np

LIBRARY = "/usr/lib/x86_64-linux-gnu/libOpenEXR-3_1.so.30"
HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT_OUT = os.path.join(HERE, "..", "..", "src", "PathBench.Imaging", "Data", "dwa_to_linear.txt")


def find_table(blob):
    found = []
    for start in (0, 1):
        words = np.frombuffer(blob[start:start + (len(blob) - start) // 2 * 2], dtype="<u2")
        n = len(words) - 65536
        if n <= 0:
            continue
        hits = np.nonzero((words[:n] == 0) & (words[0x3c00:0x3c00 + n] == 0x3c00) & (words[0xbc00:0xbc00 + n] == 0xbc00))[0]
        for i in hits:
            t = words[i:i + 65536]
            if not t[0x7c00:0x8000].any() and not t[0xfc00:].any() and t[0x3800] < 0x3800:
                found.append((start + 2 * int(i), t.copy()))
    return found


def main():
    out = sys.argv[1] if len(sys.argv) > 1 else DEFAULT_OUT
    real = os.path.realpath(LIBRARY)
    blob = open(real, "rb").read()
    found = find_table(blob)
    if len(found) != 1:
        sys.exit(f"expected one toLinear table in {real}, found {len(found)}")
    offset, table = found[0]
    version = subprocess.run(["dpkg-query", "-W", "-f", "${Version}", "libopenexr-3-1-30"],
                             capture_output=True, text=True).stdout.strip() or "unknown"
    lines = [
        "# OpenEXR's DWA to-linear table (dwaCompressorToLinear): entry i is the HALF bits a decoded",
        "# nonlinear HALF value with bits i becomes. 65536 entries, 16 per line, hexadecimal.",
        f"# Extracted by tools/imaging/extract_dwa_to_linear.py from {real}",
        f"# (Debian libopenexr-3-1-30 {version}, sha256 {hashlib.sha256(blob).hexdigest()}, byte offset {offset}).",
    ]
    for row in range(0, 65536, 16):
        lines.append(" ".join(f"{int(v):04x}" for v in table[row:row + 16]))
    os.makedirs(os.path.dirname(os.path.abspath(out)), exist_ok=True)
    with open(out, "w", newline="\n") as f:
        f.write("\n".join(lines) + "\n")
    print(f"wrote the table at byte {offset} of {real} to {os.path.normpath(out)}")


if __name__ == "__main__":
    main()
