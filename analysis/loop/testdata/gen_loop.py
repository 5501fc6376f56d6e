#!/usr/bin/python3
"""Reference loop gains for loop.NewLoopGain (analysis/loop/loop_gain_test.go).

For two op-amp circuits of our own this script writes the loop gain
T(s) around U1 from hand-written node equations (no stamping engine: the
point is independence), then its figures by polynomial root finding:

  * gain crossovers: the positive real roots w of |N(jw)|^2 - |D(jw)|^2;
  * phase margin: 180 deg + arg T(jw) there, the phase unwrapped from
    w = 1e-3 rad/s along a dense log grid (numpy.unwrap) ending at w;
  * phase crossovers: positive real roots of Im(N(jw)·conj(D(jw))) where
    Re T(jw) < 0; gain margin -20·log10|T| there.

The op-amp is a(s) = A0/(1 + s·A0/wt), wt = 2·pi·GBW; its control is
broken: its internal source is a(s)·t, and T = -r/t with r = v(+) - v(-)
returned by the circuit (Bode's return ratio).

Output: golden/NAME.json with num, den (ascending, den[0] = 1),
crossovers_hz, phase_margins_deg, phase_crossovers_hz, gain_margins_db.

Run: /usr/bin/python3 analysis/loop/testdata/gen_loop.py
(Debian python3-sympy, python3-numpy.)
"""
import json
import os

import numpy as np
import sympy as sp

HERE = os.path.dirname(os.path.abspath(__file__))
s = sp.Symbol("s")
R = sp.Rational


def opamp(a0, gbw):
    wt = 2 * sp.pi * gbw
    return a0 / (1 + s * a0 / wt)


def photodiode_frontend():
    # testdata/examples/photodiode_frontend.nodal: Cd from inv to gnd,
    # Rf ∥ Cf from inv to out, U1 (+ = gnd, - = inv), a0=100k gbw=10MHz.
    # With the op-amp output a·t (rout = 0): v(inv) = a·t·Zd/(Zd + Zf),
    # r = 0 - v(inv), T = -r/t = a·Zd/(Zd + Zf).
    cd, rf, cf = R(47, 10**12), 10**6, R(1, 10**12)
    zd = 1 / (s * cd)
    zf = rf / (1 + s * rf * cf)
    return opamp(100000, 10**7) * zd / (zd + zf)


def line_driver():
    # analysis/loop/testdata/line_driver.nodal: U1 (+ = in, - = fb, out) a0=200k,
    # gbw=5MHz, rout=100; R2 out-fb, R1 fb-gnd 10k each; CL 2nF out-gnd.
    # Node out: (a·t - v)/Ro = v·s·CL + v/(R1 + R2); v(fb) = v·R1/(R1 + R2);
    # r = 0 - v(fb).
    ro, r1, r2, cl = 100, 10000, 10000, R(2, 10**9)
    v, t = sp.symbols("v t")
    a = opamp(200000, 5 * 10**6)
    vout = sp.solve(sp.Eq((a * t - v) / ro, v * s * cl + v / (r1 + r2)), v)[0]
    r = -vout * r1 / (r1 + r2)
    return sp.simplify(-r / t)


def figures(t):
    num, den = sp.fraction(sp.cancel(sp.together(t)))
    pn, pd = sp.Poly(num, s), sp.Poly(den, s)
    nc = [float(sp.N(c, 30)) for c in reversed(pn.all_coeffs())]
    dc = [float(sp.N(c, 30)) for c in reversed(pd.all_coeffs())]
    k = next(c for c in dc if c != 0)
    nc, dc = [c / k for c in nc], [c / k for c in dc]
    w = sp.Symbol("w", positive=True)
    nj, dj = sp.expand(pn.as_expr().subs(s, sp.I * w)), sp.expand(pd.as_expr().subs(s, sp.I * w))
    mag = sp.Poly(sp.expand(nj * sp.conjugate(nj) - dj * sp.conjugate(dj)), w)
    im = sp.Poly(sp.expand(sp.im(nj * sp.conjugate(dj))), w)
    tf = sp.lambdify(s, t, "numpy")

    def positive_roots(p):
        if p.degree() < 1:
            return []
        out = []
        for r in sp.Poly(p, w).nroots(n=30, maxsteps=200):
            if abs(sp.im(r)) < 1e-20 * (1 + abs(r)) and sp.re(r) > 0:
                out.append(float(sp.re(r)))
        return sorted(out)

    def phase_deg(wc):
        grid = np.concatenate([np.logspace(-3, np.log10(wc), 200000, endpoint=False), [wc]])
        ph = np.unwrap(np.angle(tf(1j * grid)))
        p0 = ph[0]
        shift = -2 * np.pi * np.ceil((p0 - np.pi) / (2 * np.pi))
        return float(np.degrees(ph[-1] + shift))

    cross = positive_roots(mag)
    pcross = [x for x in positive_roots(im) if complex(tf(1j * x)).real < 0]
    return {
        "num": nc,
        "den": dc,
        "crossovers_hz": [x / (2 * np.pi) for x in cross],
        "phase_margins_deg": [180 + phase_deg(x) for x in cross],
        "phase_crossovers_hz": [x / (2 * np.pi) for x in pcross],
        "gain_margins_db": [-20 * np.log10(abs(complex(tf(1j * x)))) for x in pcross],
    }


def main():
    out = os.path.join(HERE, "golden")
    os.makedirs(out, exist_ok=True)
    for name, t in [("photodiode_frontend", photodiode_frontend()), ("line_driver", line_driver())]:
        doc = figures(t)
        with open(os.path.join(out, name + ".json"), "w") as f:
            json.dump(doc, f, indent=1)
            f.write("\n")
        print(name, doc["crossovers_hz"], doc["phase_margins_deg"], doc["phase_crossovers_hz"])


if __name__ == "__main__":
    main()
