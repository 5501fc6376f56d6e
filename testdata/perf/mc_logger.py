#!/usr/bin/python3
"""Monte Carlo of one figure of the logger filter, vectorised with numpy.

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

For all runs at once it builds the nodal admittance Y(s) = G + s*C of the
three unknowns (v(a), v(b), v(out); the op-amp row (1/A0 + s/wt)*v(out)
= v(b) - v(out) replaces KCL at out, whose only use would be the
op-amp's output current, and RL drops out with it), then computes one
metric (the first argument):

  f3db  the -3 dB frequency (Hz): H solved at s = 0 for the reference
        |H(0)|, then ln|H(j*2*pi*f)|^2 - ln(|H(0)|^2/2) bisected in ln f
        on [100 Hz, 100 kHz] for every run in parallel (60 halvings: the
        bracket shrinks below 1e-15 relative); the filter is monotone
        there, so the one crossing is the lowest.
  f0    the natural frequency (Hz) of the dominant pole pair, and
  q     its quality factor: the poles are -1/mu for the eigenvalues mu of
        G^-1*C (three finite poles, C is regular; batched eigvals), the
        dominant pair the complex one (the third pole, the op-amp's, is
        real): f0 = |p|/(2*pi), Q = |p|/(-2*Re p).
  peak  the largest gain (dB): |H(jw)|^2 = |H(0)|^2 * prod|p|^2 /
        prod|jw - p|^2 from the same poles (H has no finite zero),
        maximised by ternary search in ln w on [f0/1000, f0] (the one
        maximum lies below f0; 100 steps), against the DC end.
  noise the output noise density at 1 kHz (V/sqrt(Hz), 300 K): the
        resistors' thermal currents 4kT/R, R1 into node a (its other end
        is the stiff input) and R2 between a and b, reach v(out) through
        z = Y(j*2*pi*1kHz)^-T * e_out: S = 4kT*(|z_a|^2/R1 + |z_a -
        z_b|^2/R2) (the op-amp here is noiseless, RL's current is absorbed
        by the op-amp's output).

It prints the run count, then the mean and standard deviation of the
metric: a run of nodal's

    nodal tolerance testdata/examples/logger_antialias.nodal --out out --runs 10000 --metric f3db

(--metric f0, q, peak, noise@1kHz for the others) should agree with them
statistically (the standard error of the mean is std/sqrt(runs), about
0.6 Hz for f3db at 10,000 runs).

How to run (from the repository root, Debian's interpreter with
python3-numpy, NOT the pyenv python3 on PATH):

    /usr/bin/python3 testdata/perf/mc_logger.py [METRIC [RUNS [SEED]]]

METRIC defaults to f3db, RUNS to 10000, SEED to 1. (A first argument
that is a number is RUNS, as in the script's first form.) Nothing in the
test suite runs this script.
"""
import sys

import numpy as np

BOLTZMANN = 1.380649e-23  # J/K, exact (SI 2019)
TEMP_K = 300.0


def main():
    args = sys.argv[1:]
    metric = "f3db"
    if args and not args[0].isdigit():
        metric = args.pop(0)
    runs = int(args[0]) if len(args) > 0 else 10000
    seed = int(args[1]) if len(args) > 1 else 1
    if metric not in ("f3db", "f0", "q", "peak", "noise"):
        sys.exit("metric must be f3db, f0, q, peak or noise, not " + metric)
    rng = np.random.default_rng(seed)

    fc, q, c0 = 2e3, 1 / np.sqrt(2), 10e-9
    r = 1 / (2 * np.pi * fc * c0)
    a0, wt = 200e3, 2 * np.pi * 1e6

    c0v = c0 * (1 + 0.05 * (2 * rng.random(runs) - 1))
    c1, c2 = 2 * q * c0v, c0v / (2 * q)
    r1 = r * (1 + 0.01 * (2 * rng.random(runs) - 1))
    r2 = r * (1 + 0.01 / 3 * rng.standard_normal(runs))
    g1, g2 = 1 / r1, 1 / r2

    # G and C of every run: Y(s) = G + s*C.
    G = np.zeros((runs, 3, 3))
    C = np.zeros((runs, 3, 3))
    # KCL at a: (va - vin)*g1 + (va - vb)*g2 + s*c1*(va - vout) = 0
    G[:, 0, 0] = g1 + g2
    G[:, 0, 1] = -g2
    C[:, 0, 0] = c1
    C[:, 0, 2] = -c1
    # KCL at b: (vb - va)*g2 + s*c2*vb = 0
    G[:, 1, 0] = -g2
    G[:, 1, 1] = g2
    C[:, 1, 1] = c2
    # op-amp: (1/a0 + s/wt)*vout - (vb - vout) = 0
    G[:, 2, 1] = -1
    G[:, 2, 2] = 1 + 1 / a0
    C[:, 2, 2] = 1 / wt
    b = np.zeros((runs, 3, 1), dtype=complex)
    b[:, 0, 0] = g1

    def h(s):
        """H(s) = v(out)/v(in) of every run at the complex frequency s
        (rad/s; one for all runs, or one per run)."""
        s = np.reshape(s, (-1, 1, 1))
        return np.linalg.solve(G + s * C, b)[:, 2, 0]

    def poles():
        """The three poles of every run (rad/s), (runs, 3)."""
        mu = np.linalg.eigvals(np.linalg.solve(G, C))
        return -1 / mu

    if metric == "f3db":
        target = np.log(np.abs(h(0.0)) ** 2 / 2)
        lo = np.full(runs, np.log(100.0))
        hi = np.full(runs, np.log(100e3))
        for _ in range(60):
            mid = 0.5 * (lo + hi)
            above = np.log(np.abs(h(2j * np.pi * np.exp(mid))) ** 2) > target
            lo = np.where(above, mid, lo)
            hi = np.where(above, hi, mid)
        values, unit = np.exp(0.5 * (lo + hi)), "Hz"
    elif metric in ("f0", "q", "peak"):
        p = poles()
        # The dominant pair: the member with the largest imaginary part.
        pair = p[np.arange(runs), np.argmax(p.imag, axis=1)]
        w0 = np.abs(pair)
        if metric == "f0":
            values, unit = w0 / (2 * np.pi), "Hz"
        elif metric == "q":
            values, unit = w0 / (-2 * pair.real), ""
        else:
            h0 = np.abs(h(0.0))
            pm2 = np.prod(np.abs(p) ** 2, axis=1)

            def ratio(u):
                """|H(jw)/H(0)|^2 at w = e^u."""
                jw = 1j * np.exp(u)[:, None]
                return pm2 / np.prod(np.abs(jw - p) ** 2, axis=1)

            lo, hi = np.log(w0 / 1000), np.log(w0)
            for _ in range(100):
                m1, m2 = lo + (hi - lo) / 3, hi - (hi - lo) / 3
                rising = ratio(m1) < ratio(m2)
                lo = np.where(rising, m1, lo)
                hi = np.where(rising, hi, m2)
            best = np.maximum(ratio(0.5 * (lo + hi)), 1.0)
            values, unit = 20 * np.log10(h0) + 10 * np.log10(best), "dB"
    else:
        s = 2j * np.pi * 1e3
        e_out = np.zeros((runs, 3, 1), dtype=complex)
        e_out[:, 2, 0] = 1
        z = np.linalg.solve(np.transpose(G + s * C, (0, 2, 1)), e_out)[:, :, 0]
        kt4 = 4 * BOLTZMANN * TEMP_K
        psd = kt4 * (np.abs(z[:, 0]) ** 2 / r1 + np.abs(z[:, 0] - z[:, 1]) ** 2 / r2)
        values, unit = np.sqrt(psd), "V/sqrt(Hz)"
    print(runs, "runs: %s mean %.6g %s, std %.6g %s" % (metric, values.mean(), unit, values.std(ddof=1), unit))


if __name__ == "__main__":
    main()
