#!/usr/bin/python3
"""Reference natural frequencies for analysis/stability.

For every MNA pencil in pencils/ (each written by
`nodal equations CIRCUIT --format json`; the Go test checks that its own
G and C equal the committed ones, so this is the same matrices) this
script computes every finite root of det(G + sC) independently of nodal:

  * values: scipy.linalg.eig(-G, C), the QZ algorithm, on the frequency-
    scaled pencil (s = w0*z, w0 = ||G||_2/||C||_2); eigenvalues with
    |z| > 1e6 are the infinite ones, which QZ reports as huge or inf;
  * count: the exact degree of det(G + sC) in s, with sympy over the
    rationals (the entries as exact binary fractions), which says how
    many finite roots there are and so checks the finite/infinite split.

It writes golden/NAME.json: {"degree": d, "natural": [[re, im], ...]}
sorted by decreasing real part then imaginary part, rad/s.

Run: /usr/bin/python3 analysis/stability/testdata/gen_natural.py
(Debian python3-scipy and python3-sympy.)
"""
import json
import os
from fractions import Fraction

import numpy as np
import scipy.linalg
import sympy

HERE = os.path.dirname(os.path.abspath(__file__))


def exact_degree(g, c):
    n = len(g)
    s = sympy.Symbol("s")
    m = sympy.Matrix(n, n, lambda i, j: sympy.Rational(Fraction(g[i][j])) + s * sympy.Rational(Fraction(c[i][j])))
    det = sympy.Poly(m.det(method="berkowitz"), s)
    if det.is_zero:
        return -1
    return det.degree()


def natural(g, c):
    g, c = np.array(g, dtype=float), np.array(c, dtype=float)
    cn = np.linalg.norm(c, 2)
    if cn == 0:
        return []
    w0 = np.linalg.norm(g, 2) / cn
    alpha, beta = scipy.linalg.eig(-g, w0 * c, right=False, homogeneous_eigvals=True)
    out = []
    for a, b in zip(alpha, beta):
        if abs(b) == 0 or abs(a) > 1e6 * abs(b):
            continue
        z = a / b * w0
        out.append((float(z.real), float(z.imag)))
    out.sort(key=lambda r: (-r[0], -r[1]))
    return out


def main():
    pdir, gdir = os.path.join(HERE, "pencils"), os.path.join(HERE, "golden")
    os.makedirs(gdir, exist_ok=True)
    for name in sorted(os.listdir(pdir)):
        if not name.endswith(".json"):
            continue
        with open(os.path.join(pdir, name)) as f:
            doc = json.load(f)
        nat = natural(doc["G"], doc["C"])
        deg = exact_degree(doc["G"], doc["C"])
        if deg != len(nat):
            raise SystemExit(f"{name}: QZ finds {len(nat)} finite roots, det(G + sC) has degree {deg}")
        with open(os.path.join(gdir, name), "w") as f:
            json.dump({"degree": deg, "natural": nat}, f, indent=1)
            f.write("\n")
        print(f"{name}: degree {deg}")


if __name__ == "__main__":
    main()
