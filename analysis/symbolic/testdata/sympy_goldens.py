#!/usr/bin/python3
"""Independent symbolic goldens for analysis/symbolic.

Each circuit's node equations are written here by hand from Kirchhoff's
current law (currents leaving a node through impedances, sources as
known voltages), solved with sympy, and H(s) = Vout/Vin reduced with
sympy.cancel. The result is written as structured terms, so the Go test
needs no expression parser:

  {"CIRCUIT": {"num": [[term, ...] per power of s], "den": [...]}}
  term = {"c": "p/q", "v": {"R1": 1, "C1": 1}}

Run with Debian's interpreter (python3-sympy):
  /usr/bin/python3 analysis/symbolic/testdata/sympy_goldens.py > analysis/symbolic/testdata/sympy_goldens.json
"""
import json
import sympy as sp

s = sp.Symbol('s')


def sym(names):
    return sp.symbols(names, positive=True)


def solve_h(eqs, unknowns, out):
    sol = sp.solve(eqs, unknowns, dict=True)[0]
    return sp.cancel(sp.together(sol[out]))


def golden(h, names):
    num, den = sp.fraction(sp.cancel(h))
    gens = [sp.Symbol(n, positive=True) for n in names]
    res = {}
    for key, p in (("num", num), ("den", den)):
        poly = sp.Poly(sp.expand(p), s)
        coeffs = list(reversed(poly.all_coeffs()))  # ascending powers of s
        out = []
        for c in coeffs:
            terms = []
            if c != 0:
                cp = sp.Poly(sp.expand(c), *gens)
                for mon, coef in cp.terms():
                    v = {names[i]: e for i, e in enumerate(mon) if e}
                    q = sp.Rational(coef)
                    terms.append({"c": f"{q.p}/{q.q}", "v": v})
            out.append(terms)
        res[key] = out
    return res


goldens = {}

# Sallen-Key low-pass with a voltage-controlled gain K (out = K·vb).
R1, R2, C1, C2, K = sym('R1 R2 C1 C2 K')
va, vb = sp.symbols('va vb')
vin = 1
vout = K * vb
eqs = [
    (va - vin) / R1 + (va - vb) / R2 + (va - vout) * s * C1,
    (vb - va) / R2 + vb * s * C2,
]
goldens["sallen-key gain K"] = golden(solve_h(eqs, [va, vb], vb) * K, ['R1', 'R2', 'C1', 'C2', 'K'])

# Twin-T notch: R1-R2 series arm with C3 to ground, C1-C2 series arm with
# R3 to ground, output unloaded.
R1, R2, R3, C1, C2, C3 = sym('R1 R2 R3 C1 C2 C3')
vm, vn, vo = sp.symbols('vm vn vo')
eqs = [
    (vm - vin) / R1 + (vm - vo) / R2 + vm * s * C3,
    (vn - vin) * s * C1 + (vn - vo) * s * C2 + vn / R3,
    (vo - vm) / R2 + (vo - vn) * s * C2,
]
goldens["twin-T notch"] = golden(solve_h(eqs, [vm, vn, vo], vo), ['R1', 'R2', 'R3', 'C1', 'C2', 'C3'])

# Lossy inverting integrator with a finite-gain op-amp: R1 in, R2 || C1
# feedback, vout = −a0·vn.
R1, R2, C1, a0 = sym('R1 R2 C1 U1.a0')
vn = sp.Symbol('vn')
vout = -a0 * vn
eqs = [(vn - vin) / R1 + (vn - vout) / R2 + (vn - vout) * s * C1]
goldens["lossy integrator, finite a0"] = golden(solve_h(eqs, [vn], vn) * (-a0), ['R1', 'R2', 'C1', 'U1.a0'])

# Coupled inductors: R1 from the source to the primary L1, secondary L2
# loaded by R2 || C1; mutual inductance M (dots on the top terminals).
R1, R2, L1, L2, M, C1 = sym('R1 R2 L1 L2 Link1.M C1')
i1, i2, vp, vsec = sp.symbols('i1 i2 vp vsec')
eqs = [
    vin - R1 * i1 - vp,              # source loop
    vp - s * L1 * i1 - s * M * i2,    # primary: i1 into the dot
    vsec - s * L2 * i2 - s * M * i1,  # secondary: i2 into the dot
    i2 + vsec / R2 + vsec * s * C1,   # KCL at the secondary top node
]
goldens["coupled inductors"] = golden(solve_h(eqs, [i1, i2, vp, vsec], vsec), ['R1', 'R2', 'L1', 'L2', 'Link1.M', 'C1'])

print(json.dumps(goldens, indent=1, sort_keys=True))
