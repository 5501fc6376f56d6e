#!/usr/bin/python3
"""Independent reference for the -3 dB frequency of uniform unloaded RC
ladders at the far end (the f3db of a tolerance run's nominal circuit).

How to run (from the repository root, Debian's interpreter):

    /usr/bin/python3 testdata/reference/ladder/gen_ladder_f3db.py

It rewrites testdata/reference/ladder/ladder_f3db.json. Deterministic: no
random numbers, no clock.

The ladder is that of gen_ladders.py (its R, C and walk v0 are imported): a source at node 0, K
sections of series R (node j-1 to node j) and shunt C (node j to ground),
nothing on node K. H = 1/V_0 with V_0 from walking back from the open far
end (KCL and Ohm's law by hand, 50-digit mpmath; no MNA matrix). |H(0)| = 1
and |H| falls monotonically (real poles, no zeros), so f3db is the one root
of ln|V_0(j2πf)|² = ln 2, found by mpmath's Anderson-Björck bracketing
solver between a tenth of the slowest pole's frequency and that
frequency. The root is checked against the closed-form poles (from
memory; gen_ladders.py checks them against scipy's eigenvalues)

    p_j = -(4/(R·C))·sin²((2j-1)·π / (2·(2K+1))),  |H(jω)|² = Π p_j²/(p_j² + ω²),

to 1e-25 relative in |H|², so a slip in either formula fails the script.
"""

import json
import os
import platform

import sys

import mpmath

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
from gen_ladders import C, R, v0  # noqa: E402  (the same ladder, the same walk)

SECTIONS = [100, 1000, 10000]
mpmath.mp.dps = 50


def mag2_walk(k, om):
    return 1 / abs(v0(k, mpmath.mpc(0, om))) ** 2


def mag2_poles(k, om):
    r, c = mpmath.mpf(R), mpmath.mpf(C)
    prod = mpmath.mpf(1)
    for j in range(1, k + 1):
        p = (4 / (r * c)) * mpmath.sin((2 * j - 1) * mpmath.pi / (2 * (2 * k + 1))) ** 2
        prod *= p * p / (p * p + om * om)
    return prod


def main():
    out = {"generator": {"python": platform.python_version(), "mpmath": mpmath.__version__},
           "r_ohm": R, "c_farad": C, "ladders": []}
    for k in SECTIONS:
        slow = (4 / (mpmath.mpf(R) * mpmath.mpf(C))) * mpmath.sin(mpmath.pi / (2 * (2 * k + 1))) ** 2
        om = mpmath.findroot(lambda w: mpmath.log(mag2_walk(k, w)) + mpmath.log(2),
                             (slow / 10, slow), solver="anderson", tol=mpmath.mpf(10) ** -40)
        a, b = mag2_walk(k, om), mag2_poles(k, om)
        assert abs(a - 0.5) < mpmath.mpf(10) ** -30, (k, a)
        assert abs(a - b) <= mpmath.mpf(10) ** -25 * a, (k, a, b)
        out["ladders"].append({"sections": k, "f3db_hz": mpmath.nstr(om / (2 * mpmath.pi), 30)})
    with open(os.path.join(HERE, "ladder_f3db.json"), "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
