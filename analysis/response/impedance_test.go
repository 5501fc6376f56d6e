package response_test

import (
	"math"
	"math/cmplx"
	"testing"

	"nodal/analysis/response"
)

// TestRefineExtreme: R + sL in series with C ∥ Rp (R = 10 Ω, L = 1 mH,
// C = 1 µF, Rp = 1 kΩ; hand-written impedance) has its series resonance,
// phase 0°, at ω² = (C·Rp²/L − 1)/(C·Rp)², 5030.40 Hz, where
// |Z| = R + Rp/(1 + (ωC·Rp)²) = 11 Ω exactly, but its minimum |Z| lies
// above it: 10.994558 Ω at 5057.873 Hz (scipy's bounded Brent minimiser
// on the same expression, xatol 1e-9 Hz). The sampled minimum of a
// 10-per-decade grid is a row; the refined one must be that minimum, and
// below |Z| at every point of a dense grid (the definition of a minimum).
// The maximum stays at the range end, 10 Hz, where |Z| falls from.
func TestRefineExtreme(t *testing.T) {
	const r, l, c, rp = 10.0, 1e-3, 1e-6, 1e3
	z := func(w float64) complex128 {
		s := complex(0, w)
		return complex(r, 0) + s*complex(l, 0) + 1/(s*complex(c, 0)+complex(1/rp, 0))
	}
	freqs := response.LogGrid(10, 1e5, 10)
	resp := &response.Response{FreqHz: freqs}
	for _, f := range freqs {
		v := z(2 * math.Pi * f)
		resp.Mag = append(resp.Mag, cmplx.Abs(v))
		resp.PhaseDeg = append(resp.PhaseDeg, cmplx.Phase(v)*180/math.Pi)
	}
	lo, hi, ok := response.Extremes(resp)
	if !ok {
		t.Fatal("no extremes")
	}
	for _, tc := range []struct {
		name            string
		start           response.Extreme
		min             bool
		wantHz, wantOhm float64
		relHz, relOhm   float64
	}{
		{"minimum from the sampled row", lo, true, 5057.873368699172, 10.994558334740775, 1e-6, 1e-12},
		{"minimum from the resonance", response.Extreme{FreqHz: 5030.404120413929, Mag: 11}, true, 5057.873368699172, 10.994558334740775, 1e-6, 1e-12},
		{"maximum at the range end", hi, false, 10, cmplx.Abs(z(2 * math.Pi * 10)), 1e-9, 1e-12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got := response.RefineExtreme(resp, tc.start, tc.min, z)
			if math.Abs(got.FreqHz-tc.wantHz) > tc.relHz*tc.wantHz || math.Abs(got.Mag-tc.wantOhm) > tc.relOhm*tc.wantOhm {
				t.Errorf("got %+v, want %.10g Ω at %.10g Hz", got, tc.wantOhm, tc.wantHz)
			}
			if !tc.min {
				return
			}
			for _, f := range response.LogGrid(1000, 1e4, 20000) {
				if m := cmplx.Abs(z(2 * math.Pi * f)); m < got.Mag*(1-1e-14) {
					t.Fatalf("|Z(%g Hz)| = %.15g below the refined minimum %.15g", f, m, got.Mag)
				}
			}
		})
	}
}
