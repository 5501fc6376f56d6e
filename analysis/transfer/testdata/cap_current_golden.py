#!/usr/bin/python3
"""Golden H(s) = i(C1)/Vin of logger_finite.nodal (the README's Sallen-Key
example with a finite op-amp) for transfer_cap_current_test.go and
analysis/timeresp/exact_step_test.go.

Independent derivation: the nodal (KCL) equations of the circuit written by
hand with exact rational part values, the op-amp as its single-pole model
v(out) = A(s)·(v(b) − v(out)), A(s) = A0/(1 + s·A0/ωt), ωt = 2π·1 MHz
(the model README.md states), solved symbolically with sympy; H is reduced,
D normalised so its lowest-order non-zero coefficient is 1, the roots and
H(jω) at a few frequencies and the unit-step response (residues of
H(s)·e^(st)/s) at a few times computed to 30 digits.

With a finite A0 the current through C1 has ONE zero at s = 0 (at DC
v(out) = v(b)·A0/(1 + A0), so C1 sees v(in)/(1 + A0)) and a second real
zero near −0.089 rad/s, not the double zero at s = 0 of the ideal op-amp.

Regenerate (Debian's python3-sympy):

    /usr/bin/python3 analysis/transfer/testdata/cap_current_golden.py > analysis/transfer/testdata/cap_current_golden.json
"""
import json
import sys
from sympy import Rational as Q, symbols, solve, together, fraction, Poly, cancel, nroots, re, im, pi, I, N, diff, exp

s = symbols('s')
R1 = R2 = Q('5.6e3')
C = Q('10e-9')
C1, C2 = 2 * C, C
RL = Q('10e3')
A0 = Q('200e3')
wt = 2 * pi * Q('1e6')
A = A0 / (1 + s * A0 / wt)
vin = 1
va, vb, vo, iu = symbols('va vb vo iu')
eqs = [
    (va - vin) / R1 + (va - vb) / R2 + s * C1 * (va - vo),  # node a
    (vb - va) / R2 + s * C2 * vb,                            # node b
    vo - A * (vb - vo),                                      # op-amp, output follower
]
sol = solve(eqs, [va, vb, vo])
H = cancel(together(s * C1 * (sol[va] - sol[vo])))
num, den = fraction(H)
pn, pd = Poly(num, s), Poly(den, s)
cn = list(reversed(pn.all_coeffs()))
cd = list(reversed(pd.all_coeffs()))
low = next(c for c in cd if c != 0)
cn = [c / low for c in cn]
cd = [c / low for c in cd]
roots = lambda p: [[float(re(r)), float(im(r))] for r in nroots(p, n=30, maxsteps=200)]
omegas = ['0.01', '0.0890', '1.00691', '100', '1e4', '1e6', '1e8']
resp = []
for w in omegas:
    v = N(H.subs(s, I * Q(w)), 30)
    resp.append([float(Q(w)), float(re(v)), float(im(v))])
# Unit-step response y(t) = Σ residues of H(s)·e^(st)/s at the poles of
# H(s)/s (all simple; the zero of H at s = 0 cancels the 1/s).
Y = pn.as_expr() / (pd.as_expr() * s)
dY = pn.as_expr() / diff(pd.as_expr() * s, s)
ys = [p for p in Poly(pd.as_expr() * s, s).nroots(n=40, maxsteps=200)]
step = []
for t in ['0', '4e-6', '2e-5', '1e-4', '4e-4', '1e-3']:
    v = sum(N(dY.subs(s, p) * exp(p * Q(t)), 40) for p in ys)
    step.append([float(Q(t)), float(re(N(v, 30)))])
out = {
    'num': [float(N(c, 30)) for c in cn],
    'den': [float(N(c, 30)) for c in cd],
    'zeros': roots(pn),
    'poles': roots(pd),
    'h_jw': resp,  # [omega rad/s, Re H, Im H] in A/V
    'step': step,  # [t s, y A] for a unit step of Vin
}
json.dump(out, sys.stdout, indent=1, sort_keys=True)
sys.stdout.write('\n')
