package stability

import (
	"math"
	"testing"

	"nodal/mna/testcircuit"
)

// TestSlowPoleStable: two RC sections whose poles lie 10⁶ … 10²⁰ apart
// are stable with both natural frequencies negative and equal to the
// exact quadratic's roots (testcircuit.TwoTimeConstants, common
// practice), never marginal with one at s = 0: Y(0) = G is regular by
// mna's pivot rule, which refutes a root at 0.
func TestSlowPoleStable(t *testing.T) {
	for _, cs := range testcircuit.TwoTimeConstantCases() {
		res, err := Analyze(cs.Load(t), Options{})
		if err != nil {
			t.Errorf("%s: %v", cs.Name, err)
			continue
		}
		slow, fast := cs.Poles()
		if res.Class != Stable || !res.AllNatural || len(res.Natural) != 2 {
			t.Errorf("%s: class %v, natural %v (all %v), want stable with %g and %g", cs.Name, res.Class, res.Natural, res.AllNatural, slow, fast)
			continue
		}
		tol := cs.Tol()
		for i, want := range []float64{slow, fast} {
			if got := res.Natural[i]; imag(got) != 0 || math.Abs(real(got)-want) > tol*math.Abs(want) {
				t.Errorf("%s: natural frequency %d = %v, want %.12g (allowed %.2g relative)", cs.Name, i, got, want, tol)
			}
		}
	}
}
