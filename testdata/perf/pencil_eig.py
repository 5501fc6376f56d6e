#!/usr/bin/python3
"""Full eigenvalues of an MNA pencil with scipy, for timing against nodal's
full path (stability.FiniteEigenvalues, BenchmarkFullEigenvalues300 in
analysis/stability/full_eig_bench_test.go).

The natural frequencies are the generalised eigenvalues s of
(G + s*C)*x = 0, i.e. scipy.linalg.eig(-G, C) (LAPACK's QZ, dggev); C is
singular (a voltage source's branch row), so some come out infinite and
are dropped.

How to run (from the repository root, Debian's interpreter):

    nodal equations testdata/perf/cable_ladder_298.nodal --format sparse-json -o m.json
    /usr/bin/python3 testdata/perf/pencil_eig.py m.json 20

Arguments: the exported matrices and the number of repetitions. It prints
the size, the best and median time of one scipy.linalg.eig call, the
number of finite eigenvalues and the smallest and largest magnitude, so a
run can be checked against nodal's. Nothing is written; nothing in the
test suite runs this (timings are reported, not asserted).
"""
import json
import sys
import time

import numpy as np
import scipy.linalg


def main():
    path, reps = sys.argv[1], int(sys.argv[2])
    with open(path) as f:
        doc = json.load(f)
    n = len(doc["unknowns"])
    g = np.zeros((n, n))
    c = np.zeros((n, n))
    for m, key in ((g, "G"), (c, "C")):
        for r, k, v in zip(doc[key]["rows"], doc[key]["cols"], doc[key]["vals"]):
            m[r, k] += v
    times = []
    for _ in range(reps):
        t0 = time.perf_counter()
        ev = scipy.linalg.eig(-g, c, right=False)
        times.append(time.perf_counter() - t0)
    fin = ev[np.isfinite(ev)]
    times.sort()
    print(f"n={n} best {times[0]*1e3:.1f} ms median {times[len(times)//2]*1e3:.1f} ms; "
          f"{len(fin)} finite, |s| from {np.min(np.abs(fin)):.6g} to {np.max(np.abs(fin)):.6g} rad/s")


if __name__ == "__main__":
    main()
