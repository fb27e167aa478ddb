#!/usr/bin/python3
"""Prints the viridis colour map table as C# source for src/PathBench.Imaging/Viridis.cs.

Viridis was designed by S. van der Walt and N. Smith for matplotlib 2.0 and released under
CC0; its 256 sRGB entries are read from Debian's python3-matplotlib (_cm_listed._viridis_data).
"""
from matplotlib import _cm_listed

rows = _cm_listed._viridis_data
assert len(rows) == 256
for r, g, b in rows:
    print(f"        {r!r}, {g!r}, {b!r},")
