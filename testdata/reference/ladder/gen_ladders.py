#!/usr/bin/python3
"""Independent reference for uniform unloaded RC ladders (issue: exact
answers at high order).

How to run (from the repository root, Debian's interpreter):

    /usr/bin/python3 testdata/reference/ladder/gen_ladders.py

It rewrites testdata/reference/ladder/ladders.json. Deterministic: fixed
grids, no random numbers, no clock.

The ladder: a source at node 0, K sections of series R (node j-1 to node j)
and shunt C (node j to ground), nothing on node K. Nothing here builds an
MNA matrix. |H| is computed by walking the ladder backwards from the open
far end in 60-digit mpmath arithmetic (KCL and Ohm's law by hand):

    V_K = 1,  I_K = s·C·V_K            (current into the last capacitor)
    V_{j-1} = V_j + R·I_j,  I_{j-1} = I_j + s·C·V_{j-1}
    far end:    H = V_K / V_0 = 1 / V_0
    first node: H = V_1 / V_0

The poles come from the closed form (from memory)

    p_j = -(4/(R·C))·sin²((2j-1)·π / (2·(2K+1))),  j = 1..K,

checked here against scipy's eigenvalues of the nodal matrix -(1/RC)·T
(T tridiagonal 2,-1 with the last diagonal 1: the open end), to 1e-9
relative, so a slip in either fails the script.

Step responses at the far end (for STEP_SECTIONS) come from the residues
of H(s)/s at the closed-form poles, in 120-digit arithmetic:

    y(t) = 1 + Σ_j e^(p_j·t) / (p_j · V_0'(p_j)),

V_0'(p) by mpmath.diff of the same walk; the script checks y(0) = 0.
"""

import json
import math
import os
import platform

import mpmath
import numpy as np
import scipy
import scipy.linalg

HERE = os.path.dirname(os.path.abspath(__file__))
R, C = 1e3, 10e-9
SECTIONS = [10, 22, 30, 40, 64, 100, 200]
STEP_SECTIONS = [22, 64, 100]
mpmath.mp.dps = 60


def closed_form_poles(k):
    return [-(4 / (R * C)) * math.sin((2 * j - 1) * math.pi / (2 * (2 * k + 1))) ** 2 for j in range(1, k + 1)]


def scipy_poles(k):
    d = np.full(k, 2.0)
    d[-1] = 1.0
    e = np.full(k - 1, -1.0)
    w = scipy.linalg.eigvalsh_tridiagonal(d, e)
    return sorted((-w / (R * C)).tolist(), key=abs)


def v0(k, s):
    """V_0 for V_K = 1: walk back from the open far end over k sections."""
    r, c = mpmath.mpf(R), mpmath.mpf(C)
    v = mpmath.mpf(1)
    i = s * c * v
    for _ in range(k):
        v = v + r * i
        i = i + s * c * v
    return v


def responses(k, f_hz):
    """|H| at the far end (1/V_0) and at the first node (V_1/V_0): walking
    k-1 sections from the open end gives V_1."""
    s = mpmath.mpc(0, 2 * mpmath.pi * mpmath.mpf(f_hz))
    v = v0(k, s)
    return abs(1 / v), abs(v0(k - 1, s) / v)


def step_far(k, times):
    with mpmath.workdps(120):
        r, c = mpmath.mpf(R), mpmath.mpf(C)
        poles = [-(4 / (r * c)) * mpmath.sin((2 * j - 1) * mpmath.pi / (2 * (2 * k + 1))) ** 2 for j in range(1, k + 1)]
        res = [1 / (p * mpmath.diff(lambda x: v0(k, x), p)) for p in poles]
        y0 = 1 + sum(res)
        assert abs(y0) < mpmath.mpf(10) ** -30, (k, y0)
        return [float(1 + sum(rj * mpmath.exp(p * mpmath.mpf(t)) for rj, p in zip(res, poles))) for t in times]


def main():
    out = {"generator": {"python": platform.python_version(), "numpy": np.__version__,
                         "scipy": scipy.__version__, "mpmath": mpmath.__version__},
           "r_ohm": R, "c_farad": C, "ladders": []}
    for k in SECTIONS:
        cf = closed_form_poles(k)
        sp = scipy_poles(k)
        for a, b in zip(cf, sp):
            assert abs(a - b) <= 1e-9 * abs(a), (k, a, b)
        # DC: both responses are exactly 1 (no current flows).
        far0, first0 = responses(k, 0)
        assert far0 == 1 and first0 == 1
        lo, hi = abs(cf[0]) / (2 * math.pi) / 10, abs(cf[-1]) / (2 * math.pi)
        freqs = [lo * (hi / lo) ** (i / 19) for i in range(20)]
        far, first = [], []
        for f in freqs:
            a, b = responses(k, f)
            far.append(float(a))
            first.append(float(b))
        out["ladders"].append({"sections": k, "freq_hz": freqs, "mag_far": far,
                               "mag_first": first, "poles_rad_s": cf})
    out["steps"] = []
    for k in STEP_SECTIONS:
        slow = abs(closed_form_poles(k)[0])
        times = [7 / slow * i / 9 for i in range(10)]
        out["steps"].append({"sections": k, "t_s": times, "y_far": step_far(k, times)})
    with open(os.path.join(HERE, "ladders.json"), "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
