#!/usr/bin/python3
"""Independent noise reference for nodal's noise analysis.

How to run (from the repository root, Debian's interpreter):

    /usr/bin/python3 testdata/reference/noise/gen_noise_reference.py

It writes testdata/reference/noise/photodiode_tia_noise.json from the
circuit photodiode_tia_noise.nodal beside it. Deterministic: fixed grids,
no randomness.

Independence: no MNA matrix and no stamping. The node equations of this one
circuit are written out BY HAND below (KCL at each node, the opamp's gain
equation), with every noise source an explicit symbol, and solved with
sympy for v(out) as a linear combination of the sources. The part values
are typed in here from the circuit file and written into the golden; the
Go test checks that the circuit file has the same values, so the two cannot
drift apart.

Numbers in the golden:
  * per-source output densities |H_k(j2πf)|·√S_k and their power sum, on
    a fixed log grid: sympy solve, lambdify to numpy (complex128);
  * the band integrals ∫ S_out df, ∫ S_out/|H|² df, ∫|H|² df over the band:
    scipy.integrate.quad in u = ln f, split into 1/10-decade pieces,
    epsrel 1e-10 (independent of nodal's adaptive Simpson);
  * the sanity check below: the low-frequency output density of Rf alone is
    √(4kT·Rf)·Rq/(Ro + Rq) (common practice: in a TIA the feedback
    resistor's noise reaches the amplifier output with gain 1), asserted
    to 1e-3.
"""

import json
import math
import os
import platform

import numpy as np
import scipy
import scipy.integrate
import sympy as sp

HERE = os.path.dirname(os.path.abspath(__file__))
K_B = 1.380649e-23  # J/K, exact (CODATA 2018, SI redefinition)
TEMP_K = 310.0

# Part values, as in photodiode_tia_noise.nodal (SI units).
V = dict(Cd=47e-12, Rsh=200e6, Rb=47e3, Cb=220e-9, a0=100e3, gbw=8e6, rout=75.0,
         en=9e-9, in_=20e-15, fen=300.0, fin=2e3, Rf=220e3, Cf=2.2e-12,
         Ro=2.2e3, Co=4.7e-9, Rq=1e6)

s = sp.Symbol("s")
# The part values as exact rationals (sympy works exactly; only the final
# evaluation is in floating point).
R = {k: sp.Rational(repr(v)) for k, v in V.items()}
Cd, Rsh, Rb, Cb, a0, gbw, rout, Rf, Cf, Ro, Co, Rq = (R[k] for k in
    ("Cd", "Rsh", "Rb", "Cb", "a0", "gbw", "rout", "Rf", "Cf", "Ro", "Co", "Rq"))
# Sources: the signal Ipd and each noise source as a small-signal phasor.
Ipd, iRsh, iRb, iRf, iRo, en, inp, inm = sp.symbols("Ipd iRsh iRb iRf iRo en inp inm")
vpd, vp, vt, vout, vint = sp.symbols("vpd vp vt vout vint")

# Opamp: the voltage behind rout is vint = A(s)·(vp + en − vpd), with the
# single pole A(s) = a0 / (1 + s·a0/ωt), ωt = 2π·gbw. en is in series with
# the + input; inp and inm are currents pushed into the + and − inputs.
A = a0 / (1 + s * a0 / (2 * sp.pi * gbw))
# Thermal noise of a resistor: a current pushed into its first node and out
# of its second (iRsh into pd, iRb into p, iRf into pd out of t, iRo into t
# out of out). Rq is marked noiseless.
eqs = [
    # KCL at pd: currents leaving through Cd, Rsh, Rf, Cf = currents pushed in
    vpd * s * Cd + vpd / Rsh + (vpd - vt) / Rf + (vpd - vt) * s * Cf - (Ipd + iRsh + inm + iRf),
    # KCL at p: Rb and Cb to ground
    vp / Rb + vp * s * Cb - (iRb + inp),
    # KCL at t: back through Rf and Cf, on through Ro, and into the opamp's rout
    (vt - vpd) / Rf + (vt - vpd) * s * Cf + (vt - vout) / Ro + (vt - vint) / rout - (-iRf + iRo),
    # KCL at out: Co and Rq to ground
    (vout - vt) / Ro + vout * s * Co + vout / Rq - (-iRo),
    # the opamp's gain equation
    vint - A * (vp + en - vpd),
]
unknowns = [vpd, vp, vt, vout, vint]
sources = [("Rsh", iRsh), ("Rb", iRb), ("Rf", iRf), ("Ro", iRo), ("U1.en", en), ("U1.in+", inp), ("U1.in-", inm)]
# The equations are linear: M·x = b(sources); v(out) = Σ H_k·source_k.
M, b = sp.linear_eq_to_matrix(eqs, unknowns)


def transfer(sym):
    """v(out) for a unit value of one source, every other source zero."""
    bk = b.subs({k: (1 if k == sym else 0) for k in [Ipd] + [x for _, x in sources]})
    x = M.LUsolve(bk)
    h = sp.cancel(sp.together(x[unknowns.index(vout)]))
    return sp.lambdify(s, h, "numpy")


H = {name: transfer(sym) for name, sym in sources}
H_in = transfer(Ipd)
kT4 = 4 * K_B * TEMP_K


def psd(name, f):
    """One-sided PSD of a source at f Hz (A²/Hz or V²/Hz)."""
    return {
        "Rsh": kT4 / V["Rsh"], "Rb": kT4 / V["Rb"], "Rf": kT4 / V["Rf"], "Ro": kT4 / V["Ro"],
        "U1.en": V["en"] ** 2 * (1 + V["fen"] / f),
        "U1.in+": V["in_"] ** 2 * (1 + V["fin"] / f), "U1.in-": V["in_"] ** 2 * (1 + V["fin"] / f),
    }[name]


def out_psd_parts(f):
    w = 2j * math.pi * f
    return {name: abs(complex(H[name](w))) ** 2 * psd(name, f) for name, _ in sources}


def gain2(f):
    return abs(complex(H_in(2j * math.pi * f))) ** 2


freqs = [10 ** (k / 4) for k in range(0, 29)]  # 1 Hz .. 10 MHz, 4 per decade
points = []
for f in freqs:
    parts = out_psd_parts(f)
    tot = sum(parts.values())
    points.append({"freq_hz": f, "out_v_per_rthz": math.sqrt(tot),
                   "in_a_per_rthz": math.sqrt(tot / gain2(f)),
                   "sources_v_per_rthz": {k: math.sqrt(v) for k, v in parts.items()}})

# Sanity check (common practice): at low frequency Rf's noise current
# flows through Rf itself, √(4kT·Rf) at the amplifier output, then the
# divider Ro–Rq: √(4kT·Rf)·Rq/(Ro + Rq) at out.
lf = math.sqrt(out_psd_parts(10.0)["Rf"])
want = math.sqrt(kT4 * V["Rf"]) * V["Rq"] / (V["Ro"] + V["Rq"])
assert abs(lf / want - 1) < 1e-3, (lf, want)

BAND = (10.0, 1e6)


def integrate(fn):
    """∫ fn(f) df over BAND, in u = ln f, in 1/10-decade pieces."""
    edges = np.exp(np.linspace(math.log(BAND[0]), math.log(BAND[1]), int(round(10 * math.log10(BAND[1] / BAND[0]))) + 1))
    total = 0.0
    for a, b in zip(edges[:-1], edges[1:]):
        v, _ = scipy.integrate.quad(lambda u: fn(math.exp(u)) * math.exp(u), math.log(a), math.log(b),
                                    epsabs=0, epsrel=1e-10, limit=200)
        total += v
    return total


per_source = {name: integrate(lambda f, n=name: out_psd_parts(f)[n]) for name, _ in sources}
out_ms = sum(per_source.values())
in_ms = integrate(lambda f: sum(out_psd_parts(f).values()) / gain2(f))
g2 = integrate(gain2)
# |H| of this TIA is largest at DC; the band starts at 10 Hz, where |H|² is
# within 1e-12 of its maximum over the band (checked on a fine grid).
grid = np.exp(np.linspace(math.log(BAND[0]), math.log(BAND[1]), 20001))
g2max = max(gain2(f) for f in grid)
assert abs(g2max / gain2(BAND[0]) - 1) < 1e-9

golden = {
    "circuit": "photodiode_tia_noise.nodal",
    "input": "Ipd", "output": "out", "temperature_k": TEMP_K,
    "generator": "testdata/reference/noise/gen_noise_reference.py; python %s; sympy %s; scipy %s; numpy %s"
                 % (platform.python_version(), sp.__version__, scipy.__version__, np.__version__),
    "values": V,
    "points": points,
    "band": {"from_hz": BAND[0], "to_hz": BAND[1], "out_rms_v": math.sqrt(out_ms), "in_rms_a": math.sqrt(in_ms),
             "enbw_hz": g2 / g2max,
             "contributions": [{"source": k, "rms_v": math.sqrt(v), "fraction": v / out_ms}
                               for k, v in sorted(per_source.items(), key=lambda kv: -kv[1])]},
}
with open(os.path.join(HERE, "photodiode_tia_noise.json"), "w") as fh:
    json.dump(golden, fh, indent=1, sort_keys=False)
    fh.write("\n")
print("wrote photodiode_tia_noise.json: out_rms %.6g V over %g..%g Hz" % (math.sqrt(out_ms), *BAND))
