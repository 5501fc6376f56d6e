#!/usr/bin/python3
"""A frequency sweep with numpy's batched dense solve, for timing against `nodal sweep`.

This is the script an engineer would write from nodal's exported
matrices for a small circuit: the whole stack of Y = G + j·2πf·C, one
n×n matrix per point, built at once and handed to numpy.linalg.solve
(LAPACK's gesv on every matrix of the stack in one call), then the
output unknown read from each solution. It is the yardstick for systems
of 10 to 100 unknowns, where a dense solve is the natural choice.

How to run (from the repository root, Debian's interpreter):

    nodal equations CIRCUIT --format sparse-json -o m.json
    /usr/bin/time -f "%e s %M KB" /usr/bin/python3 testdata/perf/numpy_sweep.py m.json 'v(OUT)' 1000

Arguments: the exported matrices, the unknown to read, the number of
log-spaced points from 1 Hz to 1 MHz. It prints the number of points and
|H| at the first and last, so a run can be checked against nodal's
sweep of the same range. Nothing is written; nothing in the test suite
runs this (timings are reported, not asserted).
"""
import json
import sys

import numpy as np


def main():
    path, out, points = sys.argv[1], sys.argv[2], int(sys.argv[3])
    with open(path) as f:
        doc = json.load(f)
    n = len(doc["unknowns"])
    g = np.zeros((n, n))
    c = np.zeros((n, n))
    np.add.at(g, (doc["G"]["rows"], doc["G"]["cols"]), doc["G"]["vals"])
    np.add.at(c, (doc["C"]["rows"], doc["C"]["cols"]), doc["C"]["vals"])
    b = np.array(doc["b"], dtype=complex)
    k = doc["unknowns"].index(out)
    s = 2j * np.pi * np.logspace(0, 6, points)
    y = g[None, :, :] + s[:, None, None] * c[None, :, :]
    x = np.linalg.solve(y, np.broadcast_to(b, (points, n))[:, :, None])[:, :, 0]
    h = x[:, k]
    print(points, abs(h[0]), abs(h[-1]))


if __name__ == "__main__":
    main()
