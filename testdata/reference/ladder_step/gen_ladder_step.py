#!/usr/bin/python3
"""Reference step and impulse responses of the unloaded uniform RC ladder.

Writes ladder_step.json beside this script: for K = 300 and 1000 sections
of series R = 1 kOhm and shunt C = 10 nF, driven by a unit voltage at node
n0 and read at the open far end nK, y(t) of a unit step and of a unit
impulse at the times t_i = i * T / 30, i = 0 ... 30 (T = 3 s for 300
sections, 30 s for 1000), as `nodal time FILE --out nK --until T
--points 31` samples them.

Independent of nodal: the node equations are written here by hand,
C v' = -(1/R) T v + (1/R) e_1 u, with T the K x K tridiagonal matrix of 2
on the diagonal (1 in the last place: the open end) and -1 beside it.
T is symmetric, so with T = Q diag(lam) Q^T (scipy.linalg.eigh_tridiagonal)
the step response from v(0) = 0 to v(inf) = 1 (every node) is
  v_K(t) = 1 - sum_j Q[K, j] (Q[:, j] . 1) exp(-lam_j t / RC)
and the impulse response is its derivative. The eigen-solution is
cross-checked by scipy.linalg.expm of the dense A = -T/RC (at every time
for 300 sections, at three for 1000) and the largest difference is
printed (9e-12 for 300 sections, 8e-11 for 1000).

Run with Debian's interpreter: /usr/bin/python3 gen_ladder_step.py
"""
import json
import os

import numpy as np
from scipy.linalg import eigh_tridiagonal, expm

R, C = 1e3, 10e-9
RC = R * C


def ladder(k, until):
    d = np.full(k, 2.0)
    d[-1] = 1.0
    e = np.full(k - 1, -1.0)
    lam, q = eigh_tridiagonal(d, e)
    w = q[-1, :] * q.sum(axis=0)  # Q[K, j] (Q[:, j] . 1)
    rate = lam / RC
    ts = [i * until / 30 for i in range(31)]
    step = [float(1 - np.dot(w, np.exp(-rate * t))) for t in ts]
    imp = [float(np.dot(w * rate, np.exp(-rate * t))) for t in ts]
    # Cross-check with the matrix exponential of the dense system.
    a = -(np.diag(d) + np.diag(e, 1) + np.diag(e, -1)) / RC
    ones = np.ones(k)
    worst = 0.0
    check = range(31) if k <= 300 else (5, 15, 30)
    for i in check:
        v = ones - expm(a * ts[i]) @ ones
        worst = max(worst, abs(v[-1] - step[i]))
    print(f"{k} sections: eigen-solution against expm, largest step difference {worst:.2e}")
    return {"sections": k, "r_ohm": R, "c_farad": C, "until_s": until, "output": f"n{k}",
            "t_s": ts, "step": step, "impulse": imp}


def main():
    out = {"source": "gen_ladder_step.py (eigh_tridiagonal modal solution, checked by expm)",
           "ladders": [ladder(300, 3.0), ladder(1000, 30.0)]}
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "ladder_step.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
