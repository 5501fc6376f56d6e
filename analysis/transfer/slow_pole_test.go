package transfer

import (
	"fmt"
	"math"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// TestSlowPoleSpreads: two RC sections whose poles lie 10⁶ … 10²⁰ apart
// have two negative real poles and DC gain 1 (testcircuit.TwoTimeConstants:
// the exact quadratic, nodal analysis, common practice), never a pole at
// s = 0: Y(0) = G is regular, which mna's pivot rule proves, and the
// check against direct solves at s = 0 would refute an integrator.
func TestSlowPoleSpreads(t *testing.T) {
	for _, cs := range testcircuit.TwoTimeConstantCases() {
		c := cs.Load(t)
		sys := testcircuit.Build(t, c, mna.Output{Kind: mna.NodeVoltage, Node: "out"})
		tf, err := Extract(sys)
		if err != nil {
			t.Errorf("%s: %v", cs.Name, err)
			continue
		}
		slow, fast := cs.Poles()
		tol := cs.Tol()
		if len(tf.Poles) != 2 || len(tf.Zeros) != 0 {
			t.Errorf("%s: poles %v zeros %v, want two poles %g, %g and no zero", cs.Name, tf.Poles, tf.Zeros, slow, fast)
			continue
		}
		for i, want := range []float64{slow, fast} {
			got := tf.Poles[i]
			if imag(got) != 0 || math.Abs(real(got)-want) > tol*math.Abs(want) {
				t.Errorf("%s: pole %d = %v, want %.12g (relative %.2g, allowed %.2g)", cs.Name, i, got, want, math.Abs(real(got)-want)/math.Abs(want), tol)
			}
		}
		if dc := tf.DCGain(); dc.Power != 0 || math.Abs(dc.Gain-1) > tol {
			t.Errorf("%s: DC gain %+v, want 1 within %.2g", cs.Name, dc, tol)
		}
	}
}

// TestSlowZeroNotAtOrigin: a coupling capacitor C1 = 1 µF shunted by a
// leak Rl into R2 = 10 Ω ∥ C2 = 1 pF has
// H(s) = (gl + s·C1)/(gl + g2 + s·(C1 + C2)) (nodal analysis, common
// practice): a zero at −gl/C1, 10⁻⁸ … 10⁻¹⁴ rad/s for Rl = 100 GΩ …
// 10²⁰ Ω, beside a pole at −(gl + g2)/(C1 + C2) ≈ −10⁵, and DC gain
// gl/(gl + g2). H(0) is then far above its own rounding (dcGainNonzero),
// which refutes a zero at s = 0: the zero is never reported as s.
func TestSlowZeroNotAtOrigin(t *testing.T) {
	const c1, r2, c2 = 1e-6, 10.0, 1e-12
	for _, rl := range []float64{1e11, 1e14, 1e18, 1e20} {
		src := fmt.Sprintf(`title "leaky coupling capacitor"
Vin: voltage source (in, gnd) 1
C1: capacitor (in, out) %g
Rl: resistor (in, out) %g
R2: resistor (out, gnd) %g
C2: capacitor (out, gnd) %g
`, c1, rl, r2, c2)
		sys := loadSystem(t, "leak.nodal", []byte(src), "out")
		tf, err := Extract(sys)
		if err != nil {
			t.Errorf("Rl = %g: %v", rl, err)
			continue
		}
		gl, g2 := 1/rl, 1/r2
		zero, pole, dc := -gl/c1, -(gl+g2)/(c1+c2), gl/(gl+g2)
		const tol = 1e-9
		if len(tf.Zeros) != 1 || len(tf.Poles) != 1 {
			t.Errorf("Rl = %g: zeros %v poles %v, want %g and %g", rl, tf.Zeros, tf.Poles, zero, pole)
			continue
		}
		if z := tf.Zeros[0]; imag(z) != 0 || math.Abs(real(z)-zero) > tol*math.Abs(zero) {
			t.Errorf("Rl = %g: zero %v, want %.12g", rl, z, zero)
		}
		if p := tf.Poles[0]; imag(p) != 0 || math.Abs(real(p)-pole) > tol*math.Abs(pole) {
			t.Errorf("Rl = %g: pole %v, want %.12g", rl, p, pole)
		}
		if g := tf.DCGain(); g.Power != 0 || math.Abs(g.Gain-dc) > tol*dc {
			t.Errorf("Rl = %g: DC gain %+v, want %.12g", rl, g, dc)
		}
	}
}
