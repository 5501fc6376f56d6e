package testcircuit

import (
	"fmt"
	"math"
	"testing"

	"nodal/netlist"
)

// TwoTimeConstants is the two-section RC low-pass
//
//	Vin — R1 — a (C1 to ground) — R2 — out (C2 to ground)
//
// with values in Ω and F, whose two real poles can lie many decades
// apart: a slow pole far below the fastest scale must not be taken for
// one at s = 0.
type TwoTimeConstants struct {
	Name           string
	R1, C1, R2, C2 float64
}

// TwoTimeConstantCases returns circuits whose pole spreads (fast over
// slow) run from 10⁶ to 10²⁰: by the capacitance ratio with R1 = R2 (no
// cancellation anywhere in G), and by resistor ratios, among them the
// electrometer 1 TΩ / 1 pF into 100 Ω / 1 mF (poles ≈ −1.0e-9 and
// −1e10 rad/s).
func TwoTimeConstantCases() []TwoTimeConstants {
	return []TwoTimeConstants{
		{"spread 1e6", 1e3, 1e-12, 1e3, 0.25e-6},
		{"spread 1e10", 1e3, 1e-12, 1e3, 2.5e-3},
		{"spread 1e14", 1e3, 1e-12, 1e3, 25},
		{"spread 1e20", 1e3, 1e-15, 1e3, 25e3},
		{"electrometer 100 ohm 1 mF", 1e12, 1e-12, 100, 1e-3},
		{"electrometer 1 ohm 1 uF", 1e12, 1e-12, 1, 1e-6},
		{"fast first section", 1, 1e-9, 1e9, 1e-3},
	}
}

// Source returns the circuit file, the output node named "out".
func (c TwoTimeConstants) Source() string {
	return fmt.Sprintf(`title "two time constants, %s"
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) %g
C1: capacitor (a, gnd) %g
R2: resistor (a, out) %g
C2: capacitor (out, gnd) %g
`, c.Name, c.R1, c.C1, c.R2, c.C2)
}

// Poles returns the two poles (rad/s), slow first, of
// H(s) = 1/(1 + b·s + a·s²), a = R1·C1·R2·C2, b = R1·C1 + R1·C2 + R2·C2
// (nodal analysis of the two sections, common practice), from the
// quadratic formula in its cancellation-free form q = −(b + √(b² − 4a))/2,
// roots 1/q and q/a (common practice, from memory; both roots to a few
// ulps since b, a > 0).
func (c TwoTimeConstants) Poles() (slow, fast float64) {
	a := c.R1 * c.C1 * c.R2 * c.C2
	b := c.R1*c.C1 + c.R1*c.C2 + c.R2*c.C2
	q := -(b + math.Sqrt(b*b-4*a)) / 2
	return 1 / q, q / a
}

// Tol returns the relative accuracy (dimensionless) to which the poles
// and the DC gain of this circuit are defined by its stamped matrices:
// 1e-9, plus ε·(g1 + g2)/g1 for the node a whose diagonal holds the sum
// g1 + g2 (g = 1/R) rounded once, which keeps g1 only to
// u·(g1 + g2)/g1 (standard model fl(x + y) = (x + y)(1 + δ), |δ| ≤ u = ε/2:
// Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., 2002,
// §2.2; twice that here). The electrometer's 1e-12 + 1e-2 S keeps 1e-12 S
// to 1e-6 only, and so does every answer that rests on it.
func (c TwoTimeConstants) Tol() float64 {
	g1, g2 := 1/c.R1, 1/c.R2
	return 1e-9 + 0x1p-52*(g1+g2)/g1
}

// Load elaborates Source, failing the test on any error.
func (c TwoTimeConstants) Load(t testing.TB) *netlist.Circuit {
	t.Helper()
	circ, err := netlist.Load(c.Name+".nodal", []byte(c.Source()), nil)
	if err != nil {
		t.Fatalf("%s: %v", c.Name, err)
	}
	return circ
}
