#!/usr/bin/python3
"""Independent reference goldens for nodal's analyses.

How to run (from the repository root; Debian's interpreter, not a pyenv one):

    /usr/bin/python3 testdata/reference/gen_reference.py

It rewrites testdata/reference/golden/NAME.json for every circuit file
testdata/reference/circuits/NAME.nodal listed in CIRCUITS below, and exits
non-zero if any built-in sanity check fails. It is deterministic: no random
numbers, no clock, stable sort orders, fixed sample grids.

Why this is independent of the project: nothing here builds an MNA matrix
or stamps elements. Each circuit has its own function below in which the
node equations (KCL at every non-reference node plus the constraint of each
source, op-amp or inductor) are written out BY HAND, as in a paper
derivation, with the equations repeated as comments. The only thing read
from the .nodal file is the part values (and a check that every part the
hand formulation assumes is there, with the same kind and terminals), so a
typo in a circuit file or a value is caught instead of silently diverging.

Sources of each number in a golden:
  * sympy (exact rational arithmetic): solving the hand-written node
    equations for H(s) = V(output)/V(input) in the part symbols; the
    symbolic and numeric coefficients; poles and zeros (square-free
    factorisation over Q, then sympy nroots at 30 digits).
  * scipy.signal.freqs: the frequency response (cross-checked here against
    an evaluation of the rational function with mpmath at 50 digits).
  * scipy.signal.step / scipy.signal.impulse: the time responses at explicit
    times (cross-checked here against a 50-digit mpmath matrix exponential
    of the controllable canonical state space; see HighPrecisionResponse).
  * published closed forms, asserted per circuit (Sedra & Smith,
    Microelectronic Circuits; Van Valkenburg, Analog Filter Design; or
    `common practice`), so a slip in a hand formulation fails the script.

Package versions used are written into each golden's "generator" field.
The JSON schema is documented in testdata/reference/README.md.
"""

import ast
import json
import math
import os
import platform
import re
import sys
from fractions import Fraction

import mpmath
import numpy as np
import scipy
import scipy.signal
import sympy as sp

HERE = os.path.dirname(os.path.abspath(__file__))
CIRCUIT_DIR = os.path.join(HERE, "circuits")
GOLDEN_DIR = os.path.join(HERE, "golden")

s = sp.Symbol("s")
mpmath.mp.dps = 50

GENERATOR = (
    "testdata/reference/gen_reference.py; python %s; sympy %s; scipy %s; numpy %s; mpmath %s"
    % (platform.python_version(), sp.__version__, scipy.__version__, np.__version__, mpmath.__version__)
)

N_FREQ = 25  # log-spaced frequency samples
N_TIME = 60  # time samples, t = 0 .. T inclusive
TIME_CONSTANTS = 7  # T = 7 / min|Re p| (slowest decaying pole)


# ---------------------------------------------------------------------------
# Reading part values from a circuit file. This is only a value reader and a
# consistency check of the hand formulation against the file; it builds no
# equations.
# ---------------------------------------------------------------------------

PREFIX = {"f": -15, "p": -12, "n": -9, "u": -6, "µ": -6, "m": -3, "": 0,
          "k": 3, "M": 6, "G": 9, "T": 12}
UNITS = ("ohm", "Ω", "F", "H", "Hz", "V", "A", "S")
LIT_RE = re.compile(r"^(\d+(?:\.\d*)?(?:[eE][+-]?\d+)?)([fpnuµmkMGT]?)(%s)?$" % "|".join(UNITS))
IEC_RE = re.compile(r"^(\d*)([RkMGTmunpµ])(\d*)$")  # IEC 60062 codes: 4k7, 2R2, R47, 4n7


def literal(text):
    """Exact value of a numeric literal with optional SI prefix and unit."""
    m = LIT_RE.match(text)
    if m:
        return Fraction(m.group(1)) * Fraction(10) ** PREFIX[m.group(2)]
    m = IEC_RE.match(text)
    if m and (m.group(1) or m.group(3)):
        exp = 0 if m.group(2) == "R" else PREFIX[m.group(2)]
        return Fraction((m.group(1) or "0") + "." + (m.group(3) or "0")) * Fraction(10) ** exp
    raise ValueError("bad literal %r" % text)


def evaluate(expr, env):
    """Evaluate a value expression exactly (Fraction) unless pi or a function
    makes it irrational (float)."""
    lits = {}

    def sub(m):
        key = "_lit%d" % len(lits)
        lits[key] = literal(m.group(0))
        return key

    py = re.sub(r"(?<![\w.])\d[\w.µΩ]*", sub, expr).replace("^", "**")
    names = dict(env)
    names.update(lits)
    names["pi"] = math.pi

    def ev(node):
        if isinstance(node, ast.Expression):
            return ev(node.body)
        if isinstance(node, ast.Name):
            return names[node.id]
        if isinstance(node, ast.Constant):
            return Fraction(node.value)
        if isinstance(node, ast.UnaryOp) and isinstance(node.op, ast.USub):
            return -ev(node.operand)
        if isinstance(node, ast.BinOp):
            a, b = ev(node.left), ev(node.right)
            op = type(node.op)
            if op is ast.Add:
                return a + b
            if op is ast.Sub:
                return a - b
            if op is ast.Mult:
                return a * b
            if op is ast.Div:
                return a / b
            if op is ast.Pow:
                return a ** b
        if isinstance(node, ast.Call) and node.func.id == "sqrt":
            return math.sqrt(ev(node.args[0]))
        raise ValueError("unsupported expression %r" % expr)

    return ev(ast.parse(py, mode="eval"))


ELEM_RE = re.compile(r"^(\w+)\s*:\s*(\w+(?: source)?)\s*\(([^)]*)\)\s*(.*)$")
# The value of a controlled source: GAIN*v(c), GAIN*v(c, d) or GAIN*i(PART).
CONTROL_RE = re.compile(r"^(.*?)\s*\*\s*([vi])\(([^)]*)\)\s*(.*)$")


def read_parts(path):
    """Return ({name: {"kind", "nodes", "value", "opts"}}, header) for a file."""
    env, parts, header = {}, {}, []
    with open(path, encoding="utf-8") as f:
        lines = f.read().splitlines()
    for line in lines:
        if line.startswith("#") and not parts and not env:
            header.append(line[1:].strip())
        line = line.split("#", 1)[0].strip()
        if not line or line.startswith("title "):
            continue
        m = re.match(r"^let\s+(\w+)\s*=\s*(.+)$", line)
        if m:
            env[m.group(1)] = evaluate(m.group(2).strip(), env)
            continue
        m = ELEM_RE.match(line)
        if not m:
            raise ValueError("%s: cannot read line %r" % (path, line))
        name, kind, terms, rest = m.groups()
        opts = {}
        cm = CONTROL_RE.match(rest) if kind.endswith(" source") else None
        if cm:
            gain, what, ctl, tail = cm.groups()
            if what == "v":
                sensed = [t.strip() for t in ctl.split(",")]
                opts["sense"] = sensed + ["gnd"] * (2 - len(sensed))  # v(c) is v(c, gnd)
            else:
                opts["sense"] = ctl.strip()  # the element whose current controls
            rest = (gain + " " + tail).strip()
        for om in re.finditer(r"(\w+)=(\S+)", rest):
            opts[om.group(1)] = evaluate(om.group(2), env)
        rest = re.sub(r"(\w+)=(\S+)", "", rest).strip()
        value = evaluate(rest, env) if rest else None
        parts[name] = {"kind": kind, "nodes": [t.strip() for t in terms.split(",")],
                       "value": value, "opts": opts}
    return parts, header


def exact(v):
    """sympy exact rational of a Fraction or a float (floats: their exact binary value)."""
    if isinstance(v, Fraction):
        return sp.Rational(v.numerator, v.denominator)
    return sp.Rational(Fraction(v).numerator, Fraction(v).denominator)


# ---------------------------------------------------------------------------
# Hand formulations, one per circuit. Each returns a dict with
#   file, input, output, parts (name -> (kind, nodes) as assumed by the hand
#   equations), symbols (part symbols in H), H (sympy expression of
#   V(output)/V(input)), values(parts) -> {symbol: exact value},
#   checks(H, vals) -> list of {"what", "source", "value"} after asserting.
# Unknowns are node voltages V<node> (and inductor currents where needed).
# KCL is written as "sum of currents leaving the node = 0".
# ---------------------------------------------------------------------------

def sym(names):
    return sp.symbols(names, positive=True)


def part_values(parts, syms):
    """{symbol: exact value} for part symbols named like the file's parts."""
    return {x: exact(parts[x.name]["value"]) for x in syms}


def close(a, b, rel=1e-12, what=""):
    a, b = complex(a), complex(b)
    assert abs(a - b) <= rel * max(abs(a), abs(b), 1e-300), "%s: %r != %r" % (what, a, b)


def same_rational(H, closed, what):
    assert sp.simplify(sp.cancel(H - closed)) == 0, "%s: hand formulation differs from closed form" % what


def second_order(den):
    """ω0 (rad/s) and Q of a 1 + a1 s + a2 s² denominator (ascending list)."""
    a0, a1, a2 = den
    w0 = sp.sqrt(a0 / a2)
    return w0, w0 * a2 / a1


def sallen_key_lp():
    R1, R2, C1, C2 = sym("R1 R2 C1 C2")
    Vin, Va, Vb, Vout = sp.symbols("Vin Va Vb Vout")
    eqs = [
        # KCL at a: (Va - Vin)/R1 + (Va - Vb)/R2 + s*C1*(Va - Vout) = 0
        (Va - Vin) / R1 + (Va - Vb) / R2 + s * C1 * (Va - Vout),
        # KCL at b: (Vb - Va)/R2 + s*C2*Vb = 0
        (Vb - Va) / R2 + s * C2 * Vb,
        # ideal op-amp (nullor) wired as follower: V(b) = V(out);
        # its output current is free, so no KCL is written at out.
        Vb - Vout,
    ]
    sol = sp.solve(eqs, [Va, Vb, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Sedra & Smith, Microelectronic Circuits (Sallen-Key unity-gain
        # low-pass): H = 1 / (1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2),
        # w0 = 1/sqrt(R1 R2 C1 C2), Q = sqrt(R1 R2 C1 C2) / (C2 (R1 + R2)).
        same_rational(H, 1 / (1 + s * C2 * (R1 + R2) + s**2 * R1 * R2 * C1 * C2), "Sallen-Key")
        den = numeric_den(H, v)
        w0, q = second_order(den)
        w0_ref = 1 / sp.sqrt(v[R1] * v[R2] * v[C1] * v[C2])
        q_ref = sp.sqrt(v[R1] * v[R2] * v[C1] * v[C2]) / (v[C2] * (v[R1] + v[R2]))
        close(w0, w0_ref, what="Sallen-Key w0")
        close(q, q_ref, what="Sallen-Key Q")
        return [
            {"what": "f0_hz", "value": float(w0_ref / (2 * sp.pi)),
             "source": "Sedra & Smith, Microelectronic Circuits: Sallen-Key unity gain, w0 = 1/sqrt(R1 R2 C1 C2)"},
            {"what": "q", "value": float(q_ref),
             "source": "Sedra & Smith, Microelectronic Circuits: Q = sqrt(R1 R2 C1 C2)/(C2 (R1+R2))"},
            {"what": "gain_dc", "value": 1.0, "source": "unity-gain follower (common practice)"},
        ]

    return dict(file="sallen_key_lp.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "a"]),
                       "R2": ("resistor", ["a", "b"]), "C1": ("capacitor", ["a", "out"]),
                       "C2": ("capacitor", ["b", "gnd"]), "U1": ("opamp", ["b", "out", "out"])},
                symbols=[R1, R2, C1, C2], H=H, order=2, checks=checks)


def sensor_bridge_rc():
    R1, R2, Rg, R3, Cd = sym("R1 R2 Rg R3 Cd")
    Amp1 = sp.Symbol("Amp1")
    Vexc, Va, Vb, Vout = sp.symbols("Vexc Va Vb Vout")
    eqs = [
        # KCL at a: (Va - Vexc)/R1 + Va/R2 + s*Cd*(Va - Vb) = 0
        (Va - Vexc) / R1 + Va / R2 + s * Cd * (Va - Vb),
        # KCL at b: (Vb - Vexc)/Rg + Vb/R3 + s*Cd*(Vb - Va) = 0
        (Vb - Vexc) / Rg + Vb / R3 + s * Cd * (Vb - Va),
        # voltage source Amp1 (out, gnd) Amp1*v(a, b): V(out) = Amp1*(V(a) - V(b));
        # its sense terminals draw no current, its output current is free.
        Vout - Amp1 * (Va - Vb),
    ]
    sol = sp.solve(eqs, [Va, Vb, Vout], dict=True)[0]
    H = sol[Vout] / Vexc

    def checks(H, v):
        # Thevenin equivalent of each bridge half (common practice):
        # V(a)-V(b) = (R2/(R1+R2) - R3/(Rg+R3)) / (1 + s*Cd*(R1||R2 + Rg||R3)).
        Ra, Rb = R1 * R2 / (R1 + R2), Rg * R3 / (Rg + R3)
        same_rational(H, Amp1 * (R2 / (R1 + R2) - R3 / (Rg + R3)) / (1 + s * Cd * (Ra + Rb)), "bridge")
        fc = 1 / (2 * sp.pi * v[Cd] * (Ra + Rb).subs(v))
        pole = roots_of(numeric_den(H, v))[0][0]
        close(-pole / (2 * sp.pi), fc, what="bridge RC corner")
        return [
            {"what": "corner_hz", "value": float(fc),
             "source": "first-order RC corner 1/(2 pi R C) with R the Thevenin resistance (common practice)"},
            {"what": "gain_dc", "value": float((Amp1 * (R2 / (R1 + R2) - R3 / (Rg + R3))).subs(v)),
             "source": "bridge imbalance times amplifier gain (common practice)"},
        ]

    return dict(file="sensor_bridge_rc.nodal", input="Vexc", output="out",
                parts={"Vexc": ("voltage source", ["top", "gnd"]), "R1": ("resistor", ["top", "a"]),
                       "R2": ("resistor", ["a", "gnd"]), "Rg": ("resistor", ["top", "b"]),
                       "R3": ("resistor", ["b", "gnd"]), "Cd": ("capacitor", ["a", "b"]),
                       "Amp1": ("voltage source", ["out", "gnd"])},
                symbols=[R1, R2, Rg, R3, Cd, Amp1], H=H, order=1, checks=checks,
                sense={"Amp1": ["a", "b"]})


def mfb_bandpass():
    R1, R2, R3, C1, C2 = sym("R1 R2 R3 C1 C2")
    Vin, Va, Vout = sp.symbols("Vin Va Vout")
    # ideal op-amp (nullor) with its noninverting input grounded: V(n) = 0.
    Vn = 0
    eqs = [
        # KCL at a: (Va - Vin)/R1 + Va/R2 + s*C1*(Va - Vn) + s*C2*(Va - Vout) = 0
        (Va - Vin) / R1 + Va / R2 + s * C1 * (Va - Vn) + s * C2 * (Va - Vout),
        # KCL at n (no current into the nullor input): s*C1*(Vn - Va) + (Vn - Vout)/R3 = 0
        s * C1 * (Vn - Va) + (Vn - Vout) / R3,
    ]
    sol = sp.solve(eqs, [Va, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Multiple-feedback (Delyiannis-Friend) band-pass, general form
        # (Van Valkenburg, Analog Filter Design; from memory), with C2 the
        # feedback capacitor (a to out) and C1 the one to the inverting input:
        # H = -(s/(R1 C2)) / (s^2 + s (C1+C2)/(R3 C1 C2) + (1/R1 + 1/R2)/(R3 C1 C2)).
        b = R3 * C1 * C2
        same_rational(H, -(s / (R1 * C2)) / (s**2 + s * (C1 + C2) / b + (1 / R1 + 1 / R2) / b), "MFB")
        # Equal capacitors C (Sedra & Smith, Microelectronic Circuits; from memory):
        # w0 = (1/C) sqrt((1/R3)(1/R1 + 1/R2)), Q = (1/2) sqrt(R3 (1/R1 + 1/R2)),
        # centre gain -R3/(2 R1).
        assert v[C1] == v[C2]
        g = 1 / v[R1] + 1 / v[R2]
        w0_ref = sp.sqrt(g / v[R3]) / v[C1]
        q_ref = sp.sqrt(v[R3] * g) / 2
        k_ref = -v[R3] / (2 * v[R1])
        den = numeric_den(H, v)
        w0, q = second_order(den)
        close(w0, w0_ref, what="MFB w0")
        close(q, q_ref, what="MFB Q")
        close(H.subs(v).subs(s, sp.I * w0_ref), k_ref, what="MFB centre gain")
        return [
            {"what": "f0_hz", "value": float(w0_ref / (2 * sp.pi)),
             "source": "Sedra & Smith, Microelectronic Circuits, MFB band-pass (equal C): w0 = sqrt((1/R1+1/R2)/R3)/C"},
            {"what": "q", "value": float(q_ref),
             "source": "Sedra & Smith, MFB band-pass (equal C): Q = sqrt(R3 (1/R1+1/R2))/2"},
            {"what": "gain_centre", "value": float(k_ref),
             "source": "Sedra & Smith, MFB band-pass (equal C): H(j w0) = -R3/(2 R1)"},
        ]

    return dict(file="mfb_bandpass.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "a"]),
                       "R2": ("resistor", ["a", "gnd"]), "C1": ("capacitor", ["a", "n"]),
                       "C2": ("capacitor", ["a", "out"]), "R3": ("resistor", ["n", "out"]),
                       "U1": ("opamp", ["gnd", "n", "out"])},
                symbols=[R1, R2, R3, C1, C2], H=H, order=2, checks=checks)


def rlc_pickup():
    Rw, Lp, Cc, Rin = sym("Rw Lp Cc Rin")
    Vemf, Vm, Vout = sp.symbols("Vemf Vm Vout")
    eqs = [
        # KCL at m: (Vm - Vemf)/Rw + (Vm - Vout)/(s*Lp) = 0
        (Vm - Vemf) / Rw + (Vm - Vout) / (s * Lp),
        # KCL at out: (Vout - Vm)/(s*Lp) + s*Cc*Vout + Vout/Rin = 0
        (Vout - Vm) / (s * Lp) + s * Cc * Vout + Vout / Rin,
    ]
    sol = sp.solve(eqs, [Vm, Vout], dict=True)[0]
    H = sol[Vout] / Vemf

    def checks(H, v):
        # Voltage divider Zshunt/(Zseries + Zshunt), Zseries = Rw + s Lp,
        # Zshunt = Rin || 1/(s Cc) (common practice):
        # H = Rin / ((Rw + s Lp)(1 + s Cc Rin) + Rin).
        same_rational(H, Rin / ((Rw + s * Lp) * (1 + s * Cc * Rin) + Rin), "pickup")
        w0_ref = sp.sqrt((v[Rw] + v[Rin]) / (v[Lp] * v[Cc] * v[Rin]))
        w0, q = second_order(numeric_den(H, v))
        close(w0, w0_ref, what="pickup w0")
        return [
            {"what": "f0_hz", "value": float(w0_ref / (2 * sp.pi)),
             "source": "series-parallel RLC: w0^2 = (Rw+Rin)/(Lp Cc Rin) (common practice)"},
            {"what": "gain_dc", "value": float(v[Rin] / (v[Rw] + v[Rin])),
             "source": "resistive divider at DC (common practice)"},
        ]

    return dict(file="rlc_pickup.nodal", input="Vemf", output="out",
                parts={"Vemf": ("voltage source", ["emf", "gnd"]), "Rw": ("resistor", ["emf", "m"]),
                       "Lp": ("inductor", ["m", "out"]), "Cc": ("capacitor", ["out", "gnd"]),
                       "Rin": ("resistor", ["out", "gnd"])},
                symbols=[Rw, Lp, Cc, Rin], H=H, order=2, checks=checks)


def lc_ladder3():
    Rs, C1, L2, C3, RL = sym("Rs C1 L2 C3 RL")
    Vin, V1, Vout = sp.symbols("Vin V1 Vout")
    eqs = [
        # KCL at n1: (V1 - Vin)/Rs + s*C1*V1 + (V1 - Vout)/(s*L2) = 0
        (V1 - Vin) / Rs + s * C1 * V1 + (V1 - Vout) / (s * L2),
        # KCL at out: (Vout - V1)/(s*L2) + s*C3*Vout + Vout/RL = 0
        (Vout - V1) / (s * L2) + s * C3 * Vout + Vout / RL,
    ]
    sol = sp.solve(eqs, [V1, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Butterworth n = 3, doubly terminated, normalised g = 1, 2, 1
        # (Van Valkenburg, Analog Filter Design, ladder tables; from memory):
        # poles on the circle |p| = wc at 120, 180 and 240 degrees; DC gain RL/(Rs+RL) = 1/2.
        wc = 2 * math.pi * 10e3
        poles, _ = roots_of(numeric_den(H, v))
        angles = sorted(math.degrees(math.atan2(complex(p).imag, complex(p).real)) % 360 for p in poles)
        for p in poles:
            close(abs(complex(p)), wc, rel=1e-12, what="Butterworth radius")
        for a, ref in zip(angles, [120.0, 180.0, 240.0]):
            assert abs(a - ref) < 1e-9, "Butterworth angle %r != %r" % (a, ref)
        close(H.subs(v).subs(s, 0), sp.Rational(1, 2), what="ladder DC gain")
        return [
            {"what": "pole_radius_rad_s", "value": wc,
             "source": "Butterworth poles on |p| = wc (Van Valkenburg, Analog Filter Design)"},
            {"what": "pole_angles_deg", "value": [120.0, 180.0, 240.0],
             "source": "Butterworth n=3 pole angles (Van Valkenburg, Analog Filter Design)"},
            {"what": "gain_dc", "value": 0.5, "source": "RL/(Rs+RL) with Rs = RL (common practice)"},
        ]

    return dict(file="lc_ladder3.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "Rs": ("resistor", ["in", "n1"]),
                       "C1": ("capacitor", ["n1", "gnd"]), "L2": ("inductor", ["n1", "out"]),
                       "C3": ("capacitor", ["out", "gnd"]), "RL": ("resistor", ["out", "gnd"])},
                symbols=[Rs, C1, L2, C3, RL], H=H, order=3, checks=checks)


def wien_network():
    R1, C1, R2, C2 = sym("R1 C1 R2 C2")
    Vin, Vm, Vout = sp.symbols("Vin Vm Vout")
    eqs = [
        # KCL at m: (Vm - Vin)/R1 + s*C1*(Vm - Vout) = 0
        (Vm - Vin) / R1 + s * C1 * (Vm - Vout),
        # KCL at out: s*C1*(Vout - Vm) + Vout/R2 + s*C2*Vout = 0
        s * C1 * (Vout - Vm) + Vout / R2 + s * C2 * Vout,
    ]
    sol = sp.solve(eqs, [Vm, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Wien network (Sedra & Smith, Microelectronic Circuits, Wien-bridge
        # oscillator): H = s R2 C1 / (1 + s (R1 C1 + R2 C2 + R2 C1) + s^2 R1 R2 C1 C2);
        # with R1 = R2 = R, C1 = C2 = C: H(j/(RC)) = 1/3 exactly.
        same_rational(H, s * R2 * C1 / (1 + s * (R1 * C1 + R2 * C2 + R2 * C1) + s**2 * R1 * R2 * C1 * C2), "Wien")
        assert v[R1] == v[R2] and v[C1] == v[C2]
        w0 = 1 / (v[R1] * v[C1])
        assert sp.simplify(H.subs(v).subs(s, sp.I * w0) - sp.Rational(1, 3)) == 0, "Wien 1/3 at f0"
        return [
            {"what": "f0_hz", "value": float(w0 / (2 * sp.pi)),
             "source": "Sedra & Smith, Microelectronic Circuits: Wien network f0 = 1/(2 pi R C)"},
            {"what": "gain_f0", "value": 1 / 3,
             "source": "Sedra & Smith, Microelectronic Circuits: Wien network gain 1/3, phase 0 at f0"},
        ]

    return dict(file="wien_network.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "m"]),
                       "C1": ("capacitor", ["m", "out"]), "R2": ("resistor", ["out", "gnd"]),
                       "C2": ("capacitor", ["out", "gnd"])},
                symbols=[R1, R2, C1, C2], H=H, order=2, checks=checks)


def twin_t_notch():
    R1, R2, R3, C1, C2, C3 = sym("R1 R2 R3 C1 C2 C3")
    Vin, Va, Vb, Vout = sp.symbols("Vin Va Vb Vout")
    eqs = [
        # KCL at a: (Va - Vin)/R1 + (Va - Vout)/R2 + s*C3*Va = 0
        (Va - Vin) / R1 + (Va - Vout) / R2 + s * C3 * Va,
        # KCL at b: s*C1*(Vb - Vin) + s*C2*(Vb - Vout) + Vb/R3 = 0
        s * C1 * (Vb - Vin) + s * C2 * (Vb - Vout) + Vb / R3,
        # KCL at out (unloaded): (Vout - Va)/R2 + s*C2*(Vout - Vb) = 0
        (Vout - Va) / R2 + s * C2 * (Vout - Vb),
    ]
    sol = sp.solve(eqs, [Va, Vb, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Balanced passive twin-T (R, R, 2C; C, C, R/2), unloaded (common practice):
        # H = (1 + s^2 R^2 C^2) / (1 + 4 s R C + s^2 R^2 C^2): zero at w0 = 1/(R C), Q = 1/4.
        R, C = sp.Symbol("R", positive=True), sp.Symbol("C", positive=True)
        bal = {R1: R, R2: R, R3: R / 2, C1: C, C2: C, C3: 2 * C}
        same_rational(H.subs(bal), (1 + s**2 * R**2 * C**2) / (1 + 4 * s * R * C + s**2 * R**2 * C**2), "twin-T")
        assert v[R1] == v[R2] and v[R3] == v[R1] / 2 and v[C1] == v[C2] and v[C3] == 2 * v[C1]
        w0 = 1 / (v[R1] * v[C1])
        assert sp.simplify(H.subs(v).subs(s, sp.I * w0)) == 0, "twin-T zero at f0"
        w0p, q = second_order(numeric_den(H, v))
        close(q, sp.Rational(1, 4), what="twin-T Q")
        close(w0p, w0, what="twin-T pole w0")
        return [
            {"what": "f0_hz", "value": float(w0 / (2 * sp.pi)),
             "source": "twin-T notch at f0 = 1/(2 pi R C) (common practice)"},
            {"what": "q", "value": 0.25, "source": "passive twin-T Q = 1/4 (common practice)"},
        ]

    return dict(file="twin_t_notch.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "a"]),
                       "R2": ("resistor", ["a", "out"]), "C3": ("capacitor", ["a", "gnd"]),
                       "C1": ("capacitor", ["in", "b"]), "C2": ("capacitor", ["b", "out"]),
                       "R3": ("resistor", ["b", "gnd"])},
                symbols=[R1, R2, R3, C1, C2, C3], H=H, order=2, checks=checks)


def buffered_rc2():
    R1, C1, R2, C2 = sym("R1 C1 R2 C2")
    Buf1 = sp.Symbol("Buf1")
    Vin, Va, Vb, Vout = sp.symbols("Vin Va Vb Vout")
    eqs = [
        # KCL at a (the sensed voltage v(a) draws no current): (Va - Vin)/R1 + s*C1*Va = 0
        (Va - Vin) / R1 + s * C1 * Va,
        # voltage source Buf1 (b, gnd) Buf1*v(a): V(b) = Buf1*V(a); its output current is free.
        Vb - Buf1 * Va,
        # KCL at out: (Vout - Vb)/R2 + s*C2*Vout = 0
        (Vout - Vb) / R2 + s * C2 * Vout,
    ]
    sol = sp.solve(eqs, [Va, Vb, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Cascade of buffered first-order sections (common practice):
        # H = Buf1 / ((1 + s R1 C1)(1 + s R2 C2)); for equal sections a double pole at -1/(RC)
        # and the step response 1 - (1 + t/tau) e^(-t/tau), tau = RC.
        same_rational(H, Buf1 / ((1 + s * R1 * C1) * (1 + s * R2 * C2)), "buffered RC")
        poles, mult = roots_of(numeric_den(H, v))
        tau = v[R1] * v[C1]
        assert mult == [2] and len(poles) == 2, "repeated pole expected"
        close(poles[0], -1 / tau, what="repeated pole")
        return [
            {"what": "repeated_pole_rad_s", "value": float(-1 / tau),
             "source": "double pole of two buffered equal RC sections at -1/(RC) (common practice)"},
            {"what": "tau_s", "value": float(tau), "source": "tau = R C (common practice)"},
        ]

    def step_closed(t, v):
        tau = float(v[R1] * v[C1])
        return 1 - (1 + t / tau) * math.exp(-t / tau)

    return dict(file="buffered_rc2.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "a"]),
                       "C1": ("capacitor", ["a", "gnd"]), "Buf1": ("voltage source", ["b", "gnd"]),
                       "R2": ("resistor", ["b", "out"]), "C2": ("capacitor", ["out", "gnd"])},
                symbols=[R1, R2, C1, C2, Buf1], H=H, order=2, checks=checks, sense={"Buf1": ["a", "gnd"]},
                step_closed=step_closed)


def coupled_pair():
    R1, C1, L1, L2, C2, RL, M = sym("R1 C1 L1 L2 C2 RL M")
    Vin, Va, Vp, Vsec, I1, I2 = sp.symbols("Vin Va Vp Vsec I1 I2")
    eqs = [
        # KCL at a: (Va - Vin)/R1 + s*C1*(Va - Vp) = 0
        (Va - Vin) / R1 + s * C1 * (Va - Vp),
        # KCL at p (I1 flows into L1 at its first, dotted terminal p): s*C1*(Vp - Va) + I1 = 0
        s * C1 * (Vp - Va) + I1,
        # KCL at sec (I2 into L2 at its dotted terminal sec): I2 + s*C2*Vsec + Vsec/RL = 0
        I2 + s * C2 * Vsec + Vsec / RL,
        # L1 (p, gnd): V(p) = s*L1*I1 + s*M*I2, with M = Link1*sqrt(L1*L2)
        Vp - (s * L1 * I1 + s * M * I2),
        # L2 (sec, gnd): V(sec) = s*M*I1 + s*L2*I2
        Vsec - (s * M * I1 + s * L2 * I2),
    ]
    sol = sp.solve(eqs, [Va, Vp, Vsec, I1, I2], dict=True)[0]
    H = sol[Vsec] / Vin

    def checks(H, v):
        # Lossless limit (R1 = 0, RL -> infinity) of two coupled tuned circuits
        # (common practice): natural frequencies from
        # (1 + s^2 L1 C1)(1 + s^2 L2 C2) - s^4 M^2 C1 C2 = 0.
        num, den = sp.fraction(sp.cancel(H))
        den = sp.expand(den)
        lossless = sp.Poly(den.subs(R1, 0), RL)
        top = lossless.all_coeffs()[0]  # coefficient of the highest power of RL
        ref = sp.expand((1 + s**2 * L1 * C1) * (1 + s**2 * L2 * C2) - s**4 * M**2 * C1 * C2)
        assert sp.cancel(top / ref).free_symbols <= {L1, L2, C1, C2, M} and sp.cancel(top / ref).has(s) is False, \
            "coupled pair lossless determinant"
        assert sp.Poly(numeric_den(H, v), s).degree() == 4
        return [
            {"what": "lossless_den", "value": "(1 + s^2 L1 C1)(1 + s^2 L2 C2) - s^4 M^2 C1 C2",
             "source": "coupled tuned circuits, lossless limit (common practice); checked symbolically"},
        ]

    def values(p):
        v = part_values(p, [R1, C1, L1, L2, C2, RL])
        k = exact(p["Link1"]["value"])
        v[M] = k * sp.sqrt(v[L1] * v[L2])
        return v

    return dict(file="coupled_pair.nodal", input="Vin", output="sec",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "a"]),
                       "C1": ("capacitor", ["a", "p"]), "L1": ("inductor", ["p", "gnd"]),
                       "L2": ("inductor", ["sec", "gnd"]), "C2": ("capacitor", ["sec", "gnd"]),
                       "RL": ("resistor", ["sec", "gnd"]), "Link1": ("coupling", ["L1", "L2"])},
                symbols=[R1, RL, L1, L2, M, C1, C2], H=H, order=4, values=values, checks=checks,
                derived={"M": "Link1*sqrt(L1*L2)"})


def finite_gain_inverting():
    R1, R2, C2 = sym("R1 R2 C2")
    U1 = sp.Symbol("U1", positive=True)  # the op-amp's a0 (finite DC gain, V/V)
    Vin, Vn, Vout = sp.symbols("Vin Vn Vout")
    eqs = [
        # KCL at n (no current into the op-amp input): (Vn - Vin)/R1 + (Vn - Vout)*(1/R2 + s*C2) = 0
        (Vn - Vin) / R1 + (Vn - Vout) * (1 / R2 + s * C2),
        # op-amp U1 (noninverting gnd, inverting n, output out), gain a0 = U1:
        # V(out) = U1*(0 - V(n)); output current free.
        Vout - U1 * (0 - Vn),
    ]
    sol = sp.solve(eqs, [Vn, Vout], dict=True)[0]
    H = sol[Vout] / Vin

    def checks(H, v):
        # Sedra & Smith, Microelectronic Circuits (inverting amplifier with finite
        # open-loop gain A): G = -(R2/R1) / (1 + (1 + R2/R1)/A). At DC the capacitor is open.
        same_rational(H.subs(s, 0), -(R2 / R1) / (1 + (1 + R2 / R1) / U1), "inverting DC gain")
        # Ideal limit A -> infinity: -(R2/R1)/(1 + s R2 C2) (common practice).
        assert sp.simplify(sp.limit(H, U1, sp.oo) + (R2 / R1) / (1 + s * R2 * C2)) == 0, "inverting ideal limit"
        g = -(v[R2] / v[R1]) / (1 + (1 + v[R2] / v[R1]) / v[U1])
        return [
            {"what": "gain_dc", "value": float(g),
             "source": "Sedra & Smith, Microelectronic Circuits: inverting gain with finite A, -(R2/R1)/(1+(1+R2/R1)/A)"},
        ]

    def values(p):
        v = part_values(p, [R1, R2, C2])
        v[U1] = exact(p["U1"]["opts"]["a0"])
        return v

    return dict(file="finite_gain_inverting.nodal", input="Vin", output="out",
                parts={"Vin": ("voltage source", ["in", "gnd"]), "R1": ("resistor", ["in", "n"]),
                       "R2": ("resistor", ["n", "out"]), "C2": ("capacitor", ["n", "out"]),
                       "U1": ("opamp", ["gnd", "n", "out"])},
                symbols=[R1, R2, C2, U1], H=H, order=1, values=values, checks=checks,
                symbol_meaning={"U1": "a0 of op-amp U1 (finite DC gain, V/V)"})


def photodiode_hybrid_pi():
    Rpi, Rc, Rd, Cd, Cmu = sym("Rpi Rc Rd Cd Cmu")
    Gm, Mirror1, Tz1 = sp.symbols("Gm Mirror1 Tz1")
    Iph, Vb, Vc, Vd, Vout = sp.symbols("Iph Vb Vc Vd Vout")
    I_Rc = Vc / Rc  # current through Rc, into its first terminal c, out to gnd
    I_Rd = Vd / Rd  # current through Rd, d to gnd
    eqs = [
        # KCL at b (Iph pushes its current into b): s*Cd*Vb + Vb/Rpi + s*Cmu*(Vb - Vc) - Iph = 0
        s * Cd * Vb + Vb / Rpi + s * Cmu * (Vb - Vc) - Iph,
        # KCL at c (current source Gm (gnd, c) Gm*v(b) pushes Gm*Vb into gnd, so it draws Gm*Vb out of c):
        # s*Cmu*(Vc - Vb) + Gm*Vb + Vc/Rc = 0
        s * Cmu * (Vc - Vb) + Gm * Vb + I_Rc,
        # KCL at d (current source Mirror1 (d, gnd) Mirror1*i(Rc) pushes Mirror1*I(Rc) into d): Vd/Rd - Mirror1*I(Rc) = 0
        I_Rd - Mirror1 * I_Rc,
        # voltage source Tz1 (out, gnd) Tz1*i(Rd): V(out) = Tz1*I(Rd); output current free.
        Vout - Tz1 * I_Rd,
    ]
    sol = sp.solve(eqs, [Vb, Vc, Vd, Vout], dict=True)[0]
    H = sol[Vout] / Iph

    def checks(H, v):
        # Exact two-pole analysis of the common-emitter stage (Sedra & Smith,
        # Microelectronic Circuits, CE high-frequency response), driven by a
        # current into R's = Rpi (Cpi = Cd here):
        # Vc/I = -Rpi*Rc*(Gm - s*Cmu) / (1 + s*((Cd + Cmu)*Rpi + Cmu*Rc + Gm*Rpi*Rc*Cmu) + s^2*Cd*Cmu*Rpi*Rc);
        # then V(out) = Tz1*Mirror1*Vc/Rc (mirror and readout, common practice).
        d = 1 + s * ((Cd + Cmu) * Rpi + Cmu * Rc + Gm * Rpi * Rc * Cmu) + s**2 * Cd * Cmu * Rpi * Rc
        same_rational(H, Tz1 * Mirror1 / Rc * (-Rpi * Rc * (Gm - s * Cmu)) / d, "hybrid-pi")
        zeros, _ = roots_of([x / v[Cmu] for x in [-v[Gm] * v[Rpi] * v[Rc], v[Cmu] * v[Rpi] * v[Rc]]])
        close(zeros[0], v[Gm] / v[Cmu], what="RHP zero")
        return [
            {"what": "zero_rad_s", "value": float(v[Gm] / v[Cmu]),
             "source": "Sedra & Smith, Microelectronic Circuits: CE transmission zero at s = gm/Cmu"},
            {"what": "gain_dc", "value": float(-v[Tz1] * v[Mirror1] * v[Gm] * v[Rpi]),
             "source": "-gm*rpi*Rc times mirror and readout, V/A (common practice)"},
        ]

    return dict(file="photodiode_hybrid_pi.nodal", input="Iph", output="out",
                parts={"Iph": ("current source", ["b", "gnd"]), "Cd": ("capacitor", ["b", "gnd"]),
                       "Rpi": ("resistor", ["b", "gnd"]), "Cmu": ("capacitor", ["b", "c"]),
                       "Gm": ("current source", ["gnd", "c"]), "Rc": ("resistor", ["c", "gnd"]),
                       "Mirror1": ("current source", ["d", "gnd"]), "Rd": ("resistor", ["d", "gnd"]),
                       "Tz1": ("voltage source", ["out", "gnd"])},
                symbols=[Rpi, Rc, Rd, Cd, Cmu, Gm, Mirror1, Tz1], H=H, order=2, checks=checks,
                sense={"Gm": ["b", "gnd"], "Mirror1": "Rc", "Tz1": "Rd"})


CIRCUITS = [sallen_key_lp, sensor_bridge_rc, mfb_bandpass, rlc_pickup, lc_ladder3,
            wien_network, twin_t_notch, buffered_rc2, coupled_pair, finite_gain_inverting,
            photodiode_hybrid_pi]


# ---------------------------------------------------------------------------
# Shared post-processing (polynomial bookkeeping, roots, scipy responses).
# ---------------------------------------------------------------------------

def numer_denom(H):
    """Coprime polynomial numerator and denominator of a rational expression."""
    n, d = sp.fraction(sp.cancel(sp.together(H)))
    return sp.expand(n), sp.expand(d)


def ascending(expr):
    """Coefficients of expr as a polynomial in s, index k = coefficient of s^k."""
    return list(reversed(sp.Poly(expr, s).all_coeffs()))


def lowest_nonzero(coeffs):
    for c in coeffs:
        if c != 0:
            return c
    raise ValueError("zero polynomial")


def numeric_den(H, v):
    """Numeric ascending denominator of H with values v, lowest non-zero coefficient 1."""
    num, den = numer_denom(H.subs(v))
    d = ascending(den)
    low = lowest_nonzero(d)
    return [sp.nsimplify(c / low) if c.is_Rational else c / low for c in d]


def roots_of(coeffs):
    """Roots of an ascending polynomial: exact square-free factorisation over Q
    when the coefficients are rational, then sympy nroots at 30 digits.
    Returns (roots with multiplicity, list of multiplicities > 1)."""
    P = sp.Poly(list(reversed(coeffs)), s)
    if P.degree() <= 0:
        return [], []
    out, mult = [], []
    if all(c.is_Rational for c in P.all_coeffs()):
        _, factors = sp.sqf_list(P)
    else:
        factors = [(P, 1)]
    for f, m in factors:
        if m > 1:
            mult.append(m)
        for r in sp.Poly(f, s).nroots(n=30, maxsteps=500):
            out.extend([sp.N(r, 30)] * m)
    return out, mult


def sort_roots(roots):
    cs = [complex(r) for r in roots]
    cs = [complex(z.real, 0.0 if abs(z.imag) <= 1e-13 * abs(z) else z.imag) for z in cs]
    return sorted(cs, key=lambda z: (z.real, z.imag))


SYM_RANK = {"resistor": 0, "inductor": 1, "coupling": 2, "capacitor": 3}


def natural(name):
    return [int(t) if t.isdigit() else t for t in re.split(r"(\d+)", name)]


def symbol_order(c):
    def rank(x):
        kind = c["parts"].get(x.name, ("derived", None))[0]
        if x.name in c.get("derived", {}):
            kind = "coupling"
        return (SYM_RANK.get(kind, 4), natural(x.name))
    return sorted(c["symbols"], key=rank)


def poly_string(expr, syms):
    """A polynomial in the part symbols as a sum of products using only
    * + - integers and names (no powers: R1^2 is written R1*R1)."""
    expr = sp.expand(expr)
    if expr == 0:
        return "0"
    P = sp.Poly(expr, *syms)
    terms = []
    for monom, coef in P.terms():
        assert coef.is_Integer, "non-integer coefficient %r" % coef
        factors = []
        for x, e in zip(syms, monom):
            factors.extend([x.name] * e)
        terms.append((factors, int(coef)))
    terms.sort(key=lambda t: (len(t[0]), [natural(f) for f in t[0]]))
    out = ""
    for i, (factors, coef) in enumerate(terms):
        body = "*".join(([str(abs(coef))] if abs(coef) != 1 or not factors else []) + factors)
        if i == 0:
            out = ("-" if coef < 0 else "") + body
        else:
            out += (" - " if coef < 0 else " + ") + body
    assert re.fullmatch(r"[A-Za-z0-9_.*+\- ]+", out), out
    back = sp.sympify(out, locals={x.name: x for x in syms})
    assert sp.expand(back - expr) == 0, "string round trip failed: %s" % out
    return out


def normalise_symbolic(H, syms):
    """num, den (ascending in s) scaled by one rational constant so that every
    coefficient has integer coefficients in the part symbols, the integer
    coefficients of num and den together have gcd 1, and the first term (in
    poly_string order) of den's lowest-order non-zero coefficient is positive."""
    n, d = numer_denom(H)
    Pn, Pd = sp.Poly(n, s, *syms), sp.Poly(d, s, *syms)
    cs = Pn.coeffs() + Pd.coeffs()
    lcm = sp.ilcm(*[sp.Rational(c).q for c in cs]) if len(cs) > 1 else sp.Rational(cs[0]).q
    ints = [sp.Rational(c) * lcm for c in cs]
    g = sp.igcd(*ints) if len(ints) > 1 else ints[0]
    scale = sp.Rational(lcm, g)
    num = [sp.expand(c * scale) for c in ascending(n)]
    den = [sp.expand(c * scale) for c in ascending(d)]
    low = lowest_nonzero(den)
    first = poly_string(low, syms)
    if first.startswith("-"):
        num = [-c for c in num]
        den = [-c for c in den]
    return num, den


def fnum(x):
    return float(sp.N(x, 30))


def to_desc_floats(asc):
    a = [fnum(c) for c in asc]
    while len(a) > 1 and a[-1] == 0.0:
        a.pop()
    return list(reversed(a))


class HighPrecisionResponse:
    """Step and impulse responses of N(s)/D(s) (ascending mpf coefficients,
    deg N <= deg D, no pole at s = 0) from the controllable canonical state
    space and mpmath's matrix exponential at 50 digits. Independent of
    scipy's float64 path; exact for repeated poles."""

    def __init__(self, num, den):
        n = len(den) - 1
        lead = den[-1]
        a = [x / lead for x in den]            # monic, ascending
        b = [x / lead for x in num] + [mpmath.mpf(0)] * (n + 1 - len(num))
        self.D = b[n]                           # direct term
        c = [b[k] - self.D * a[k] for k in range(n)]  # strictly proper remainder, ascending
        # states x_k = s^k X, k = 0..n-1: x_k' = x_{k+1}, x_{n-1}' = -sum a_k x_k + u
        A = mpmath.zeros(n, n)
        for k in range(n - 1):
            A[k, k + 1] = 1
        for k in range(n):
            A[n - 1, k] = -a[k]
        self.A, self.n = A, n
        self.B = mpmath.zeros(n, 1)
        self.B[n - 1] = 1
        self.C = mpmath.matrix([c])
        self.Ainv = mpmath.inverse(A)

    def step(self, t):
        E = mpmath.expm(self.A * t)
        x = self.Ainv * (E - mpmath.eye(self.n)) * self.B
        return (self.C * x)[0] + self.D

    def impulse(self, t):
        return (self.C * mpmath.expm(self.A * t) * self.B)[0]


def build(c):
    path = os.path.join(CIRCUIT_DIR, c["file"])
    parts, header = read_parts(path)
    # Consistency of the hand formulation with the file (not used to build equations).
    assert set(parts) == set(c["parts"]), "%s: parts %s vs hand %s" % (c["file"], sorted(parts), sorted(c["parts"]))
    for name, (kind, nodes) in c["parts"].items():
        assert parts[name]["kind"] == kind and parts[name]["nodes"] == nodes, "%s: %s differs from the hand formulation" % (c["file"], name)
    assert header and header[0].split() == ["input:", c["input"], "output:", c["output"]], "%s: header" % c["file"]
    for name, sense in c.get("sense", {}).items():
        assert parts[name]["opts"].get("sense") == sense, "%s: %s sense differs from the hand formulation" % (c["file"], name)
    for name, p in parts.items():
        if "sense" in p["opts"]:
            assert name in c.get("sense", {}), "%s: hand formulation does not state the sense of %s" % (c["file"], name)
        if p["kind"] == "opamp":
            assert set(p["opts"]) <= {"a0"}, "%s: %s: only ideal or a0 op-amps are modelled" % (c["file"], name)
            assert ("a0" in p["opts"]) == (name in c.get("symbol_meaning", {})), "%s: %s a0 differs" % (c["file"], name)
        if p["kind"] in ("voltage source", "current source") and "sense" not in p["opts"]:
            assert p["value"] in (None, 1), "%s: source amplitude must be 1" % name
    vals = c["values"](parts) if "values" in c else part_values(parts, c["symbols"])
    H = c["H"]
    syms = symbol_order(c)

    # Symbolic result.
    num_s, den_s = normalise_symbolic(H, syms)
    symbolic = {"num": [poly_string(x, syms) for x in num_s], "den": [poly_string(x, syms) for x in den_s]}

    # Numeric result with exact values, common factors found and cancelled.
    Nn = sp.Poly(sp.expand(sum(co.subs(vals) * s**k for k, co in enumerate(num_s))), s)
    Dn = sp.Poly(sp.expand(sum(co.subs(vals) * s**k for k, co in enumerate(den_s))), s)
    cancelled = []
    if all(x.is_Rational for x in Nn.all_coeffs() + Dn.all_coeffs()):
        g = sp.gcd(Nn, Dn)
        if g.degree() > 0:
            cancelled = sort_roots(roots_of(list(reversed(g.all_coeffs())))[0])
            Nn, Dn = sp.div(Nn, g)[0], sp.div(Dn, g)[0]
    num_n, den_n = list(reversed(Nn.all_coeffs())), list(reversed(Dn.all_coeffs()))
    low = lowest_nonzero(den_n)
    num_n = [x / low for x in num_n]
    den_n = [x / low for x in den_n]
    order = len(den_n) - 1
    assert order == c["order"], "%s: order %d, expected %d" % (c["file"], order, c["order"])
    poles_x, _ = roots_of(den_n)
    zeros_x, _ = roots_of(num_n)
    poles, zeros = sort_roots(poles_x), sort_roots(zeros_x)

    checks = c["checks"](H, vals)

    # Exact evaluators for cross-checks (40 digits): H(p) and the step and
    # impulse responses from a high-precision matrix exponential.
    mn = [mpmath.mpmathify(sp.N(x, 50)) for x in num_n]
    md = [mpmath.mpmathify(sp.N(x, 50)) for x in den_n]

    def Hmp(p):
        return mpmath.polyval(list(reversed(mn)), p) / mpmath.polyval(list(reversed(md)), p)

    resp = HighPrecisionResponse(mn, md)

    b, a = to_desc_floats(num_n), to_desc_floats(den_n)

    # Frequency grid: two decades either side of the critical frequencies,
    # nudged off any jw-axis zero so no sample sits on an exact null.
    crit = [abs(z) for z in poles + zeros if abs(z) > 0]
    lo, hi = (min(crit) / 100, max(crit) * 100) if crit else (2 * math.pi, 2 * math.pi * 1e6)
    w = np.logspace(math.log10(lo), math.log10(hi), N_FREQ)
    for z in zeros:
        if abs(z) > 0 and abs(z.real) <= 1e-9 * abs(z) and np.any(np.abs(w / abs(z) - 1) < 0.01):
            w = w * 1.0123
    _, h = scipy.signal.freqs(b, a, worN=w)
    freq = []
    for wi, hi_ in zip(w, h):
        ref = complex(Hmp(mpmath.mpf(float(wi)) * 1j))
        close(hi_, ref, rel=1e-9, what="%s freqs at %g rad/s" % (c["file"], wi))
        freq.append({"freq_hz": float(wi / (2 * math.pi)), "mag": float(abs(hi_)),
                     "mag_db": float(20 * math.log10(abs(hi_))),
                     "phase_deg": float(math.degrees(math.atan2(hi_.imag, hi_.real)))})

    # Time grid: 0 .. 7 slowest time constants.
    slow = min(-p.real for p in poles)
    assert slow > 0, "unstable or marginal reference circuit"
    T = TIME_CONSTANTS / slow
    t = np.linspace(0.0, T, N_TIME)
    _, ys = scipy.signal.step((b, a), T=t)
    step = [{"t_s": float(ti), "y": float(yi)} for ti, yi in zip(t, ys)]
    peak = max(abs(y) for y in ys)
    step_err = 0.0
    for ti, yi in zip(t[1:], ys[1:]):
        ref = float(resp.step(float(ti)))
        step_err = max(step_err, abs(yi - ref))
    assert step_err <= 1e-7 * peak, "%s: scipy step differs from the mpmath reference by %g" % (c["file"], step_err)
    if "step_closed" in c:
        for ti, yi in zip(t, ys):
            assert abs(yi - c["step_closed"](float(ti), vals)) <= 1e-9 * peak, "%s: step closed form" % c["file"]
        checks.append({"what": "step_closed_form", "value": "1 - (1 + t/tau) exp(-t/tau)",
                       "source": "repeated real pole step response (common practice); asserted at every sample"})

    golden = {
        "circuit": c["file"],
        "description": " ".join(header[1:]),
        "input": c["input"],
        "output": c["output"],
        "generator": GENERATOR,
        "order": order,
        "symbolic": symbolic,
        "symbols": {x.name: c.get("symbol_meaning", {}).get(x.name, parts.get(x.name, {"kind": "derived"})["kind"])
                    for x in syms},
        "derived": c.get("derived", {}),
        "values": {x.name: fnum(vals[x]) for x in syms},
        "num": [fnum(x) for x in num_n],
        "den": [fnum(x) for x in den_n],
        "cancelled": [{"re": z.real, "im": z.imag} for z in cancelled],
        "poles": [{"re": z.real, "im": z.imag} for z in poles],
        "zeros": [{"re": z.real, "im": z.imag} for z in zeros],
        "gain_dc": fnum(num_n[0] / den_n[0]) if den_n[0] != 0 else None,
        "closed_form_checks": checks,
        "freq": freq,
        "step": step,
        "step_check_max_abs_diff": step_err,
    }
    if len(num_n) < len(den_n):
        _, yi = scipy.signal.impulse((b, a), T=t)
        ipeak = max(abs(y) for y in yi)
        imp_err = 0.0
        for ti, y in zip(t[1:], yi[1:]):
            ref = float(resp.impulse(float(ti)))
            imp_err = max(imp_err, abs(y - ref))
        assert imp_err <= 1e-7 * ipeak, "%s: scipy impulse differs from the mpmath reference by %g" % (c["file"], imp_err)
        golden["impulse"] = [{"t_s": float(ti), "y": float(y)} for ti, y in zip(t, yi)]
        golden["impulse_check_max_abs_diff"] = imp_err
    else:
        golden["impulse"] = None
        golden["impulse_note"] = ("not strictly proper: the impulse response has a Dirac term of weight %r at t = 0; "
                                  "no samples" % fnum(num_n[-1] / den_n[-1] if len(num_n) == len(den_n) else 0))
    return golden


def main():
    os.makedirs(GOLDEN_DIR, exist_ok=True)
    for make in CIRCUITS:
        c = make()
        g = build(c)
        name = os.path.splitext(c["file"])[0]
        with open(os.path.join(GOLDEN_DIR, name + ".json"), "w", encoding="utf-8") as f:
            json.dump(g, f, indent=1, ensure_ascii=False)
            f.write("\n")
        print("%-28s order %d  poles %d  zeros %d  step diff %.2g" % (
            c["file"], g["order"], len(g["poles"]), len(g["zeros"]), g["step_check_max_abs_diff"]))
    return 0


if __name__ == "__main__":
    sys.exit(main())
