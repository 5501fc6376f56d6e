package symbolic

import (
	"math/big"
	"testing"
)

// Terminating decimals with many zeros print exactly in exponent form;
// short ones stay plain (common practice of number formatting).
func TestFormatRatScientific(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"1/50000000", "0.00000002"},
		{"3/2000000000000000000000", "1.5e-21"},
		{"-7/10000000000000000000000000000000", "-7e-31"},
		{"123456789/100000000000000000000", "1.23456789e-12"},
	} {
		r, ok := new(big.Rat).SetString(tc.in)
		if !ok {
			t.Fatal(tc.in)
		}
		got := FormatRat(r)
		if got != tc.want {
			t.Errorf("FormatRat(%s) = %q, want %q", tc.in, got, tc.want)
		}
		back, ok := new(big.Rat).SetString(got)
		if !ok || back.Cmp(r) != 0 {
			t.Errorf("%q does not read back as %s", got, tc.in)
		}
	}
}
