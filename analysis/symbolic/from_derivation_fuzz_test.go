package symbolic

import (
	"math"
	"testing"

	"nodal/analysis/derivation"
)

// FuzzFromDerivation feeds arbitrary transfer functions through the
// derivation parser and FromDerivation: it must never panic, and when it
// converts, the exact polynomials must give the same H(s) as the float
// evaluation of the same expression (at s = 0.7 rad/s, every name valued
// from its length), within a tolerance scaled by the magnitudes summed.
// Seeds are under testdata/fuzz/FuzzFromDerivation.
func FuzzFromDerivation(f *testing.F) {
	f.Add("1/(1 + s*R1*C1)")
	f.Add("2kHz*5%/(1 + s*4k7*4n7 + s^2*10kΩ*1nF*2R2)")
	f.Fuzz(func(t *testing.T, src string) {
		tf, err := derivation.ParseTF("fuzz", src)
		if err != nil {
			return
		}
		r, err := tf.Reduce()
		if err != nil {
			return
		}
		num, den, ok, why := FromDerivation(r)
		if !ok {
			if why == "" {
				t.Fatalf("%q: refused without a reason", src)
			}
			return
		}
		value := func(name string) (float64, bool) { return 0.5 + float64(len(name))/4, true }
		fn, fd, err := r.Evaluate(value)
		if err != nil {
			return
		}
		values := map[string]float64{}
		for _, p := range append(append([]Poly(nil), num...), den...) {
			for _, v := range p.Vars() {
				values[v], _ = value(v)
			}
		}
		const s0 = 0.7
		horner := func(c []float64) (v, mag float64) {
			for k := len(c) - 1; k >= 0; k-- {
				v = v*s0 + c[k]
				mag = mag*s0 + math.Abs(c[k])
			}
			return v, mag
		}
		polyVals := func(ps []Poly) []float64 {
			out := make([]float64, len(ps))
			for i, p := range ps {
				x, err := p.EvalFloat(values)
				if err != nil {
					t.Fatalf("%q: %v", src, err)
				}
				out[i] = x
			}
			return out
		}
		n1, m1 := horner(fn)
		d1, e1 := horner(fd)
		n2, m2 := horner(polyVals(num))
		d2, e2 := horner(polyVals(den))
		// n1/d1 = n2/d2  ⇔  n1·d2 = n2·d1, compared against the magnitudes.
		lhs, rhs := n1*d2, n2*d1
		scale := m1*e2 + m2*e1
		if math.IsInf(scale, 0) || math.IsNaN(scale) || scale == 0 || scale > 1e200 {
			return
		}
		if math.Abs(lhs-rhs) > 1e-6*scale {
			t.Fatalf("%q: exact form %v / %v gives %g/%g, the expression %g/%g", src, num, den, n2, d2, n1, d1)
		}
	})
}
