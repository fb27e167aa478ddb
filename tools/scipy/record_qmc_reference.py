#!/usr/bin/python3
"""Records reference values from Debian's scipy.stats.qmc for the sampling tests:
unscrambled Sobol and Halton points, the Fibonacci lattice (k/n, {k F/n}) built from its
definition (Niederreiter 1992, section 5.2), and their L2-star discrepancies, with the scipy version.

The tests also run scipy live (ScipyQmcTests); this file keeps a fixed copy so that a
change of scipy's behaviour shows up as a difference between the two, with the version that
produced each. Run with Debian's interpreter:

    /usr/bin/python3 tools/scipy/record_qmc_reference.py
"""
import json
import os

import numpy as np
import scipy
from scipy.stats import qmc

here = os.path.dirname(os.path.abspath(__file__))
out = os.path.join(here, "..", "..", "tests", "PathBench.Sampling.Tests", "Reference", "scipy_qmc_reference.json")

cases = []
for name, dims, n in [("sobol", 4, 32), ("halton", 5, 30)]:
    engine = qmc.Sobol(dims, scramble=False) if name == "sobol" else qmc.Halton(dims, scramble=False)
    x = engine.random(n)
    cases.append({
        "generator": name,
        "dims": dims,
        "count": n,
        "order": "gray-code" if name == "sobol" else "natural",
        "points": [[float(v) for v in row] for row in x],
        "l2_star": float(qmc.discrepancy(x, method="L2-star")),
    })

# The Fibonacci lattice of n = F(12) = 144 points, generating vector (1, F(11)) = (1, 89).
n, fib = 144, 89
k = np.arange(n)
x = np.column_stack([k / n, (k * fib % n) / n])
cases.append({
    "generator": "lattice",
    "dims": 2,
    "count": n,
    "order": "natural",
    "points": [[float(v) for v in row] for row in x],
    "l2_star": float(qmc.discrepancy(x, method="L2-star")),
})

with open(out, "w", newline="\n") as f:
    json.dump({"scipy_version": scipy.__version__, "source": "Debian python3-scipy, scipy.stats.qmc", "cases": cases}, f, indent=1)
    f.write("\n")
print(f"wrote {os.path.normpath(out)} (scipy {scipy.__version__})")
