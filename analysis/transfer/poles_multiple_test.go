package transfer

import (
	"fmt"
	"math"
	"testing"
)

// TestRepeatedRealPoles: m identical RC sections separated by ideal
// buffers give H(s) = 1/(1 + sτ)^m (common practice): an m-fold real pole
// at −1/τ. Rounding splits an m-fold root by about ε^(1/m) (6e-6 relative
// for m = 3), so the poles must come back merged, exactly real and equal.
// The all-pass with an inductor (c4) has den (1 + s/10⁴)³ as well.
func TestRepeatedRealPoles(t *testing.T) {
	for _, tc := range []struct {
		m    int
		r, c float64
	}{{2, 10e3, 10e-9}, {3, 10e3, 10e-9}, {3, 4.7e3, 33e-9}, {4, 1e3, 100e-9}} {
		st := newStamper().V("in", "0")
		prev := "in"
		for k := 0; k < tc.m; k++ {
			a, b := fmt.Sprintf("a%d", k), fmt.Sprintf("b%d", k)
			st.R(prev, a, tc.r).C(a, "0", tc.c).Amp(a, b, b, math.Inf(1))
			prev = b
		}
		tf := mustExtract(t, st.Out(prev, "0").System())
		checkRepeatedPole(t, fmt.Sprintf("%d RC sections", tc.m), tf, tc.m, -1/(tc.r*tc.c))
	}
	const c4 = `title "tone stage second-order allpass"
Vin: voltage source (in, gnd) 1
R1: resistor (in, n) 10k
R2: resistor (n, out) 10k
R3: resistor (in, p) 10k
C1: capacitor (p, q) 10nF
R4: resistor (q, gnd) 10k
C2: capacitor (q, gnd) 10nF
L1: inductor (p, gnd) 1
U1: opamp (p, n, out)
`
	checkRepeatedPole(t, "c4", mustExtract(t, loadSystem(t, "c4.nodal", []byte(c4), "out")), 3, -1e4)
}

// checkRepeatedPole asserts that tf has exactly m poles, all exactly real
// and equal, within 1e-9 of p.
func checkRepeatedPole(t *testing.T, name string, tf *TransferFunction, m int, p float64) {
	t.Helper()
	if len(tf.Poles) != m {
		t.Fatalf("%s: poles %v, want %d", name, tf.Poles, m)
	}
	for _, v := range tf.Poles {
		if imag(v) != 0 || v != tf.Poles[0] || math.Abs(real(v)-p) > 1e-9*math.Abs(p) {
			t.Errorf("%s: poles %v, want %d-fold real %g", name, tf.Poles, m, p)
			break
		}
	}
}
