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
// The phase stage with an inductor (c4) has den (1 + s/10⁴)³ as well.
// Derivation (nodal analysis by hand, checked with sympy): the ideal op-amp
// with R1 = R2 gives v(out) = 2·v(p) − v(in); at p, R3 = R from in, L1 to
// gnd and C1 in series with R4 ∥ C2 (R4 = R, C1 = C2 = C) to gnd, so
//
//	v(p)/v(in) = Zp/(R + Zp),  Zp = sL ∥ (1/(sC) + R/(1 + sRC)),
//
// whose denominator, common to H = 2·v(p)/v(in) − 1, is
//
//	R + (L + 2CR²)·s + 3CLR·s² + C²LR²·s³.
//
// With R = 10 kΩ, C = 10 nF, L = 1 H: L + 2CR² = 3 H, so divided by R it
// is 1 + 3·10⁻⁴s + 3·10⁻⁸s² + 10⁻¹²s³ = (1 + s/10⁴)³. (The numerator is
// R + (2CR² − L)·s − CLR·s² + C²LR²·s³, not the mirror of the
// denominator: despite its title the stage is not an all-pass, |H| dips
// to 1/√2 at 10⁴ rad/s; only the triple pole is under test.)
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
