#!/usr/bin/python3
"""Golden transfer functions for analysis/transfer_golden_test.go.

Independent derivation: each reference circuit below is written as its
hand-written nodal (KCL) equations with exact rational part values and
solved symbolically with sympy; H(s) = N(s)/D(s) is reduced (common
factors cancelled exactly), D normalised so its lowest-order non-zero
coefficient is 1, and the roots of N and D computed to 30 digits.

Regenerate (Debian's python3-sympy):

    /usr/bin/python3 analysis/transfer/testdata/tf_goldens.py > analysis/transfer/testdata/tf_goldens.json

The Go test stamps the same circuits (same names, same values) with its
own MNA helper and compares.
"""
import json
import sys
from sympy import Rational as Q, symbols, solve, together, fraction, Poly, cancel, nroots, re, im

s = symbols('s')
vin = 1  # unit source


def k(x):
    return Q(x)


def rc_lowpass():
    R, C = k('1500'), k('47e-9')
    vo = symbols('vo')
    sol = solve([(vo - vin) / R + s * C * vo], [vo])
    return sol[vo]


def sallen_key_unity():
    R1, R2, C1, C2 = k('10e3'), k('22e3'), k('22e-9'), k('4.7e-9')
    va, vb = symbols('va vb')
    vo = vb  # follower
    eqs = [(va - vin) / R1 + (va - vb) / R2 + s * C1 * (va - vo),
           (vb - va) / R2 + s * C2 * vb]
    sol = solve(eqs, [va, vb])
    return sol[vb]


def sallen_key_gain2():
    R, C, K = k('4.7e3'), k('10e-9'), 2
    va, vb = symbols('va vb')
    vo = K * vb
    eqs = [(va - vin) / R + (va - vb) / R + s * C * (va - vo),
           (vb - va) / R + s * C * vb]
    sol = solve(eqs, [va, vb])
    return K * sol[vb]


def mfb_bandpass():
    R1, R2, C1, C2 = k('3.3e3'), k('150e3'), k('10e-9'), k('6.8e-9')
    va, vo = symbols('va vo')
    # inverting input held at 0 V by the ideal op-amp
    eqs = [(va - vin) / R1 + s * C1 * va + s * C2 * (va - vo),
           s * C1 * (0 - va) + (0 - vo) / R2]
    sol = solve(eqs, [va, vo])
    return sol[vo]


def twin_t():
    R, C = k('16e3'), k('10e-9')
    vm, vk, vo = symbols('vm vk vo')
    eqs = [(vm - vin) / R + (vm - vo) / R + 2 * s * C * vm,
           s * C * (vk - vin) + s * C * (vk - vo) + vk / (R / 2),
           (vo - vm) / R + s * C * (vo - vk)]
    sol = solve(eqs, [vm, vk, vo])
    return sol[vo]


def cap_loop():
    R, C = k('1e3'), k('100e-9')
    va, vb = symbols('va vb')
    eqs = [(va - vin) / R + s * C * va + 2 * s * C * (va - vb),
           2 * s * C * (vb - va) + 3 * s * C * vb + vb / (2 * R)]
    sol = solve(eqs, [va, vb])
    return sol[vb]


# Tenth-order ladder, part values spread over six decades:
# source -RS- n0, then five sections: series L_k from n_{k-1} to n_k, shunt
# C_k and R_k from n_k to ground; output v(n5).
LADDER = {
    'RS': '50',
    'L': ['0.1', '3e-3', '1e-4', '2e-6', '5e-8'],
    'C': ['1e-5', '2e-7', '5e-9', '1e-10', '3e-12'],
    'R': ['200', '1e3', '4.7e3', '22e3', '100e3'],
}


def ladder10():
    RS = k(LADDER['RS'])
    v = symbols('v0:6')
    eqs = [(v[0] - vin) / RS + (v[0] - v[1]) / (s * k(LADDER['L'][0]))]
    for i in range(1, 6):
        e = s * k(LADDER['C'][i - 1]) * v[i] + v[i] / k(LADDER['R'][i - 1])
        e += (v[i] - v[i - 1]) / (s * k(LADDER['L'][i - 1]))
        if i < 5:
            e += (v[i] - v[i + 1]) / (s * k(LADDER['L'][i]))
        eqs.append(e)
    sol = solve(eqs, list(v))
    return sol[v[5]]


def bridge_allpass():
    R1, C1, R2 = k('10e3'), k('15e-9'), k('33e3')
    C2 = R1 * C1 / R2
    va, vb = symbols('va vb')
    eqs = [(va - vin) / R1 + s * C1 * va, s * C2 * (vb - vin) + vb / R2]
    sol = solve(eqs, [va, vb])
    return sol[va] - sol[vb]


def golden(h):
    num, den = fraction(cancel(together(h)))
    pn, pd = Poly(num, s), Poly(den, s)
    cd = list(reversed(pd.all_coeffs()))
    cn = list(reversed(pn.all_coeffs()))
    low = next(c for c in cd if c != 0)
    cd = [c / low for c in cd]
    cn = [c / low for c in cn]
    roots = lambda p: [[float(re(r)), float(im(r))] for r in nroots(p, n=30, maxsteps=200)] if p.degree() > 0 else []
    return {
        'num': [float(c) for c in cn],
        'den': [float(c) for c in cd],
        'zeros': roots(pn),
        'poles': roots(pd),
    }


CIRCUITS = {
    'rc_lowpass': rc_lowpass,
    'sallen_key_unity': sallen_key_unity,
    'sallen_key_gain2': sallen_key_gain2,
    'mfb_bandpass': mfb_bandpass,
    'twin_t': twin_t,
    'cap_loop': cap_loop,
    'bridge_allpass': bridge_allpass,
    'ladder10': ladder10,
}

if __name__ == '__main__':
    out = {name: golden(f()) for name, f in CIRCUITS.items()}
    json.dump(out, sys.stdout, indent=1, sort_keys=True)
    sys.stdout.write('\n')
