package main

import (
	"math"
	"testing"

	"nodal/analysis/transfer"
)

// The signed-term joiner behind polyText and odeText, and the NaN/Inf
// text of num and fixed (the conventions of this tool's tables; common
// practice for writing sums with a leading minus).
func TestSignedSumsAndNonFinite(t *testing.T) {
	for _, tc := range []struct{ got, want string }{
		{polyText(nil), "0"},
		{polyText([]float64{0, 0}), "0"},
		{polyText([]float64{1, 2, 3}), "1 + 2·s + 3·s²"},
		{polyText([]float64{-1, 0, -1}), "−1 − s²"},
		{polyText([]float64{0, -2, 1}), "−2·s + s²"},
		{joinSigned([]signedTerm{{"a", false}, {"b", true}, {"c", false}}), "a − b + c"},
		{odeText(transfer.ODE{A: []float64{1, 2}, B: []float64{-1}}, "y", "u"), "2·y′ + y = −u"},
		{odeText(transfer.ODE{A: []float64{0}, B: []float64{0, 0, 3}}, "y", "u"), "0 = 3·u″"},
		{num(math.NaN()), "-"}, {num(math.Inf(1)), "inf"}, {num(math.Inf(-1)), "-inf"}, {num(1.5), "1.5"},
		{fixed(math.NaN(), 2), "-"}, {fixed(math.Inf(1), 2), "inf"}, {fixed(math.Inf(-1), 2), "-inf"},
		{fixed(-0.0001, 2), "0.00"}, {fixed(-1.234, 1), "-1.2"},
	} {
		if tc.got != tc.want {
			t.Errorf("got %q, want %q", tc.got, tc.want)
		}
	}
}
