#!/usr/bin/python3
"""Monte Carlo of the logger filter's -3 dB frequency, vectorised with numpy.

This is the script an engineer would write to check `nodal tolerance` on
testdata/examples/logger_antialias.nodal (a unity-gain Sallen-Key
low-pass, fc = 2 kHz, Q = 1/sqrt(2), in front of a 10 kOhm ADC load),
and to time it against nodal (timings are reported, not asserted).

It draws the same distributions as the circuit file's tolerances, not
the same random numbers:

  * C0 = 10 nF +-5 % uniform, one draw shared by C1 = 2*Q*C0 and
    C2 = C0/(2*Q) (a toleranced `let` is one draw);
  * R1 +-1 % uniform;  R2 +-1 % normal with sigma = tol/3, untruncated;
  * U1 a0 = 200k, gbw = 1 MHz and RL = 10k are fixed.

For all runs at once it builds the nodal admittance of the three
unknowns (v(a), v(b), v(out); the op-amp row (1/A0 + s/wt)*v(out) =
v(b) - v(out) replaces KCL at out, whose only use would be the op-amp's
output current, and RL drops out with it), solves it at s = 0 for the
reference |H(0)|, then bisects ln|H(j*2*pi*f)|^2 - ln(|H(0)|^2/2) in
ln f on [100 Hz, 100 kHz] for every run in parallel (60 halvings: the
bracket shrinks below 1e-15 relative). The filter is monotone there, so
the one crossing is the lowest.

It prints the run count, then the mean and standard deviation of f3db
(Hz): a run of nodal's

    nodal tolerance testdata/examples/logger_antialias.nodal --out out --runs 10000 --metric f3db

should agree with them statistically (the standard error of the mean
is std/sqrt(runs), about 0.6 Hz at 10,000 runs).

How to run (from the repository root, Debian's interpreter with
python3-numpy, NOT the pyenv python3 on PATH):

    /usr/bin/python3 testdata/perf/mc_logger.py 10000 [SEED]

Nothing in the test suite runs this script.
"""
import sys

import numpy as np


def main():
    runs = int(sys.argv[1]) if len(sys.argv) > 1 else 10000
    seed = int(sys.argv[2]) if len(sys.argv) > 2 else 1
    rng = np.random.default_rng(seed)

    fc, q, c0 = 2e3, 1 / np.sqrt(2), 10e-9
    r = 1 / (2 * np.pi * fc * c0)
    a0, wt = 200e3, 2 * np.pi * 1e6

    c0v = c0 * (1 + 0.05 * (2 * rng.random(runs) - 1))
    c1, c2 = 2 * q * c0v, c0v / (2 * q)
    r1 = r * (1 + 0.01 * (2 * rng.random(runs) - 1))
    r2 = r * (1 + 0.01 / 3 * rng.standard_normal(runs))
    g1, g2 = 1 / r1, 1 / r2

    def h(s):
        """H(s) = v(out)/v(in) of every run at the complex frequency s (rad/s)."""
        y = np.zeros((runs, 3, 3), dtype=complex)
        # KCL at a: (va - vin)*g1 + (va - vb)*g2 + s*c1*(va - vout) = 0
        y[:, 0, 0] = g1 + g2 + s * c1
        y[:, 0, 1] = -g2
        y[:, 0, 2] = -s * c1
        # KCL at b: (vb - va)*g2 + s*c2*vb = 0
        y[:, 1, 0] = -g2
        y[:, 1, 1] = g2 + s * c2
        # op-amp: (1/a0 + s/wt)*vout - (vb - vout) = 0
        y[:, 2, 1] = -1
        y[:, 2, 2] = 1 + 1 / a0 + s / wt
        b = np.zeros((runs, 3, 1), dtype=complex)
        b[:, 0, 0] = g1
        return np.linalg.solve(y, b)[:, 2, 0]

    target = np.log(np.abs(h(0.0)) ** 2 / 2)
    lo = np.full(runs, np.log(100.0))
    hi = np.full(runs, np.log(100e3))
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        above = np.log(np.abs(h(2j * np.pi * np.exp(mid))) ** 2) > target
        lo = np.where(above, mid, lo)
        hi = np.where(above, hi, mid)
    f3db = np.exp(0.5 * (lo + hi))
    print(runs, "runs: f3db mean %.6g Hz, std %.6g Hz" % (f3db.mean(), f3db.std(ddof=1)))


if __name__ == "__main__":
    main()
