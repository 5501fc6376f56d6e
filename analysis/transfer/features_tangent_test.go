package transfer

import (
	"math"
	"math/cmplx"
	"testing"
)

// TestF3dBTangentCrossing: H = (s² + (ω0/Qz)s + ω0²)/(s² + (ω0/Qp)s + ω0²)
// has DC gain 1 and |H(jω0)| = Qp/Qz its minimum (|H|² is a weighted mean
// of 1 and (Qp/Qz)² with the weight of the latter 1 only at ω0, closed
// form); with Qz = √2·Qp the gain touches exactly −3 dB at ω0, a double
// root of |H|² − 1/2.
func TestF3dBTangentCrossing(t *testing.T) {
	for _, tc := range []struct{ w0, qp float64 }{{1e4, 0.7}, {2 * math.Pi * 1e3, 2}, {1, 0.3}, {5e5, 10}} {
		qz := math.Sqrt2 * tc.qp
		pair := func(q float64) []complex128 {
			re := -tc.w0 / (2 * q)
			if q <= 0.5 {
				d := tc.w0 * math.Sqrt(1/(4*q*q)-1)
				return []complex128{complex(re+d, 0), complex(re-d, 0)}
			}
			im := tc.w0 * math.Sqrt(1-1/(4*q*q))
			return []complex128{complex(re, im), cmplx.Conj(complex(re, im))}
		}
		tf := newTransferFunction(1, pair(qz), pair(tc.qp), nil)
		bw, err := tf.F3dB()
		if err != nil {
			t.Fatal(err)
		}
		f0 := tc.w0 / (2 * math.Pi)
		if len(bw.CrossingsHz) != 1 || math.Abs(bw.CrossingsHz[0]-f0) > 1e-6*f0 {
			t.Errorf("w0 %g Qp %g: crossings %v Hz, want [%g]", tc.w0, tc.qp, bw.CrossingsHz, f0)
		}
	}
}
