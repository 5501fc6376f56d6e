#!/usr/bin/python3
"""A frequency sweep with scipy's sparse LU, for timing against `nodal sweep`.

This is the script an engineer would write from nodal's exported
matrices: one scipy.sparse.linalg.splu factorisation of Y = G + j·2πf·C
per point (scipy picks its own fill-reducing column order each time),
one solve, and the output unknown read from x.

How to run (from the repository root, Debian's interpreter):

    nodal equations CIRCUIT --format sparse-json -o m.json
    /usr/bin/time -f "%e s %M KB" /usr/bin/python3 testdata/perf/splu_sweep.py m.json 'v(OUT)' 1000

Arguments: the exported matrices, the unknown to read, the number of
log-spaced points from 1 Hz to 1 MHz. It prints the number of points and
|H| at the first and last, so a run can be checked against nodal's
sweep of the same range. Nothing is written; nothing in the test suite
runs this (timings are reported, not asserted).
"""
import json
import sys

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla


def main():
    path, out, points = sys.argv[1], sys.argv[2], int(sys.argv[3])
    with open(path) as f:
        doc = json.load(f)
    n = len(doc["unknowns"])
    g = sp.csc_matrix((doc["G"]["vals"], (doc["G"]["rows"], doc["G"]["cols"])), shape=(n, n))
    c = sp.csc_matrix((doc["C"]["vals"], (doc["C"]["rows"], doc["C"]["cols"])), shape=(n, n))
    b = np.array(doc["b"], dtype=complex)
    k = doc["unknowns"].index(out)
    freqs = np.logspace(0, 6, points)
    h = np.empty(points, dtype=complex)
    for i, f in enumerate(freqs):
        lu = spla.splu((g + 2j * np.pi * f * c).tocsc())
        h[i] = lu.solve(b)[k]
    print(points, abs(h[0]), abs(h[-1]))


if __name__ == "__main__":
    main()
