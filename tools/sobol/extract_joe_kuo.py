#!/usr/bin/python3
"""Regenerates src/PathBench.Sampling/Data/sobol_joe_kuo.txt from the Sobol direction
numbers that Debian's python3-scipy ships (scipy/stats/_sobol_direction_numbers.npz).

Those numbers are Joe & Kuo (2008), "Constructing Sobol sequences with better
two-dimensional projections", SIAM J. Sci. Comput. 30(5), file new-joe-kuo-6.21201.
The npz holds `poly` (the primitive polynomial with its leading and trailing 1 bits)
and `vinit` (the initial m_k values). We write them in Joe and Kuo's own column form:
dimension (1-based), degree s, the inner coefficients a, then m_1..m_s.

Run with Debian's own interpreter: /usr/bin/python3 tools/sobol/extract_joe_kuo.py
"""
import hashlib
import os
import sys

import numpy as np
import scipy

DIMS = int(sys.argv[1]) if len(sys.argv) > 1 else 21201

here = os.path.dirname(os.path.abspath(__file__))
out_path = os.path.join(here, "..", "..", "src", "PathBench.Sampling", "Data", "sobol_joe_kuo.txt")
npz_path = os.path.join(os.path.dirname(scipy.stats.__file__), "_sobol_direction_numbers.npz")
with open(npz_path, "rb") as f:
    digest = hashlib.sha256(f.read()).hexdigest()
data = np.load(npz_path)
poly, vinit = data["poly"], data["vinit"]
if DIMS > len(poly):
    sys.exit(f"only {len(poly)} dimensions in {npz_path}")

lines = [
    "# Sobol direction numbers of Joe & Kuo (2008), new-joe-kuo-6.21201.",
    f"# Extracted by tools/sobol/extract_joe_kuo.py from {npz_path}",
    f"# (Debian python3-scipy {scipy.__version__}, sha256 {digest}).",
    "# Columns: d s a m_1 .. m_s   (d is 1-based; dimension 1 is the van der Corput",
    "# sequence and has no line; a is the polynomial without its leading and trailing 1).",
]
for d in range(1, DIMS):
    p = int(poly[d])
    s = p.bit_length() - 1
    a = (p >> 1) & ((1 << (s - 1)) - 1)
    m = [int(x) for x in vinit[d, :s]]
    lines.append(" ".join(str(x) for x in [d + 1, s, a] + m))
with open(out_path, "w", newline="\n") as f:
    f.write("\n".join(lines) + "\n")
print(f"wrote {DIMS} dimensions to {os.path.normpath(out_path)}")
