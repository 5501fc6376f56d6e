package analysis

import (
	"math"
	"math/cmplx"
	"testing"
)

// TestCascadeMatchesClosedForms: the matrix-exponential samples of the
// cascade realization against closed forms (common practice): a first-
// order low-pass step 1 − e^(−t/τ); a second-order pair's step response
// 1 − e^(−ζω0t)(cos ωd·t + ζ/√(1−ζ²)·sin ωd·t); a high-pass impulse
// δ − (1/τ)e^(−t/τ) (Dirac part excluded); and the 22-fold pole's
// Erlang step.
func TestCascadeMatchesClosedForms(t *testing.T) {
	tau, w0, zeta := 1e-3, 2*math.Pi*1e3, 0.3
	wd := w0 * math.Sqrt(1-zeta*zeta)
	pair := complex(-zeta*w0, wd)
	erlang := func(n int) func(float64) float64 {
		return func(tt float64) float64 {
			x, sum, term := tt/tau, 0.0, 1.0
			for k := 0; k < n; k++ {
				sum += term
				term *= x / float64(k+1)
			}
			return 1 - math.Exp(-x)*sum
		}
	}
	poles22 := make([]complex128, 22)
	for i := range poles22 {
		poles22[i] = complex(-1/tau, 0)
	}
	cases := []struct {
		name string
		tf   *TransferFunction
		step bool
		want func(float64) float64
	}{
		{"RC step", newTransferFunction(1/tau, nil, []complex128{complex(-1/tau, 0)}, nil), true,
			func(tt float64) float64 { return 1 - math.Exp(-tt/tau) }},
		{"pair step", newTransferFunction(w0*w0, nil, []complex128{pair, cmplx.Conj(pair)}, nil), true,
			func(tt float64) float64 {
				return 1 - math.Exp(-zeta*w0*tt)*(math.Cos(wd*tt)+zeta/math.Sqrt(1-zeta*zeta)*math.Sin(wd*tt))
			}},
		{"high-pass impulse", newTransferFunction(1, []complex128{0}, []complex128{complex(-1/tau, 0)}, nil), false,
			func(tt float64) float64 { return -math.Exp(-tt/tau) / tau }},
		{"22-fold pole step", newTransferFunction(math.Pow(1/tau, 22), nil, poles22, nil), true, erlang(22)},
	}
	for _, tc := range cases {
		c, err := newCascade(tc.tf)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		h := 60 * tau / 499
		ys, err := c.samples(tc.step, h, 500)
		if err != nil {
			t.Fatal(err)
		}
		scale := 0.0
		for i := range ys {
			scale = math.Max(scale, math.Abs(tc.want(float64(i)*h)))
		}
		for i, y := range ys {
			if want := tc.want(float64(i) * h); math.Abs(y-want) > 1e-9*scale {
				t.Errorf("%s: y(%g) = %.12g, want %.12g", tc.name, float64(i)*h, y, want)
				break
			}
		}
	}
}
