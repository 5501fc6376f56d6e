#!/usr/bin/python3
"""Reference unwrapped phase of a uniform RC ladder, for phase_unwrap_test.go.

The ladder: 1000 sections of series R = 1 kOhm and shunt C = 10 nF, driven
at n0 and read, open, at n1000 (testcircuit.RCLadder(1000, 1e3, 10e-9); the
same as `python3 genladder.py 1000`, output n1000).

H(jw) by the chain-matrix recursion from the open end (common practice):
v = 1, i = 0 at n1000; for each section, i += jwC*v (the shunt C), then
v += R*i (the series R); H = 1/v at n0. The phase is unwrapped from
H(0) = 1 (phase 0 at DC) along a fine grid from 1e-3 Hz (where the phase
is -1.8 deg) up, 4000 points per decade in numpy complex128, every
step checked below 30 deg so that the nearest turn is the right one; the
phase at each golden point is then the mpmath value (50 digits) of arg H,
put on the turn the fine grid gives.

Writes ladder1000_phase.txt: one line per point, "freq_hz phase_deg",
2 points per decade from 1 Hz to 10 kHz (|H| underflows float64 above
about 16 kHz). Run: /usr/bin/python3 gen_ladder_phase.py
"""
import numpy as np
import mpmath as mp

N, R, C = 1000, 1e3, 10e-9
golden = [10 ** (k / 2) for k in range(0, 9)]  # 1 Hz .. 10 kHz, 2 per decade


def h_numpy(f):
    s = 2j * np.pi * f
    v = np.ones_like(s)
    i = np.zeros_like(s)
    for _ in range(N):
        i = i + s * C * v
        v = v + R * i
    return 1 / v


def arg_mp(f):
    mp.mp.dps = 50
    s = 2j * mp.pi * mp.mpf(f)
    v, i = mp.mpc(1), mp.mpc(0)
    for _ in range(N):
        i = i + s * C * v
        v = v + R * i
    return mp.arg(1 / v) * 180 / mp.pi


fine = np.logspace(-3, 4, 7 * 4000 + 1)
fine = np.union1d(fine, golden)
ph = np.angle(h_numpy(fine), deg=True)
un = np.unwrap(ph, period=360)
steps = np.abs(np.diff(un))
assert steps.max() < 30, steps.max()
assert abs(un[0]) < 10, un[0]  # continuous from 0 deg at DC
with open("ladder1000_phase.txt", "w") as out:
    for f in golden:
        k = int(np.argmin(np.abs(fine - f)))
        p = float(arg_mp(f))
        p += 360 * round((un[k] - p) / 360)
        out.write(f"{f!r} {p!r}\n")
