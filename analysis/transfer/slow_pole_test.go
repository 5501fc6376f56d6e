package transfer

import (
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
