package response

import (
	"context"
	"math"
	"math/cmplx"
	"testing"
)

// Sum adds responses point by point: H = H1 + H2 and dH/ds = dH1/ds +
// dH2/ds, so the group delay of the sum of 1/(1+s) and s/(1+s) (= 1) is 0
// and its magnitude 0 dB (partial fractions; common practice); mismatched
// inputs or frequencies are refused.
func TestSum(t *testing.T) {
	freqs := []float64{0.01, 0.1, 1}
	mk := func(input, output string, h, dh func(s complex128) complex128) *Response {
		hs, ds := make([]complex128, len(freqs)), make([]complex128, len(freqs))
		for i, f := range freqs {
			s := complex(0, 2*math.Pi*f)
			hs[i], ds[i] = h(s), dh(s)
		}
		return newResponse(input, output, freqs, hs, ds, make([]bool, len(freqs)), make([]bool, len(freqs)))
	}
	lp := mk("V", "lp", func(s complex128) complex128 { return 1 / (1 + s) }, func(s complex128) complex128 { return -1 / ((1 + s) * (1 + s)) })
	hp := mk("V", "hp", func(s complex128) complex128 { return s / (1 + s) }, func(s complex128) complex128 { return 1 / ((1 + s) * (1 + s)) })
	sum, err := Sum(context.Background(), "lp+hp", lp, hp)
	if err != nil {
		t.Fatal(err)
	}
	for i := range freqs {
		if cmplx.Abs(sum.H[i]-1) > 1e-15 || math.Abs(sum.MagDB[i]) > 1e-12 || math.Abs(sum.GroupDelayS[i]) > 1e-15 || sum.Output != "lp+hp" {
			t.Errorf("point %d: H %v, %g dB, τ %g s", i, sum.H[i], sum.MagDB[i], sum.GroupDelayS[i])
		}
	}
	other := mk("W", "x", func(s complex128) complex128 { return 1 }, func(s complex128) complex128 { return 0 })
	if _, err := Sum(context.Background(), "bad", lp, other); err == nil {
		t.Error("a sum over two inputs was accepted")
	}
	short := newResponse("V", "y", freqs[:2], lp.H[:2], lp.dh[:2], make([]bool, 2), make([]bool, 2))
	if _, err := Sum(context.Background(), "bad", lp, short); err == nil {
		t.Error("a sum over different frequencies was accepted")
	}
}
