package syntax

import "testing"

// TestPrefixTable checks the one SI prefix table against the SI Brochure
// (BIPM, 9th edition 2019, table 7): factor, exponent and the symbol
// nodal writes. "u" and U+03BC stand in for U+00B5 MICRO SIGN (common
// practice).
func TestPrefixTable(t *testing.T) {
	for _, tc := range []struct {
		sym   string
		scale float64
		exp   int
	}{
		{"f", 1e-15, -15}, {"p", 1e-12, -12}, {"n", 1e-9, -9},
		{"u", 1e-6, -6}, {"µ", 1e-6, -6}, {"μ", 1e-6, -6}, {"m", 1e-3, -3},
		{"k", 1e3, 3}, {"M", 1e6, 6}, {"G", 1e9, 9}, {"T", 1e12, 12},
	} {
		s, ok := PrefixScale(tc.sym)
		e, ok2 := PrefixExponent(tc.sym)
		if !ok || !ok2 || s != tc.scale || e != tc.exp {
			t.Errorf("%q: scale %v %v exponent %v %v; want %v %v", tc.sym, s, ok, e, ok2, tc.scale, tc.exp)
		}
	}
	for _, bad := range []string{"", "K", "kk", "x", "mu", "P", "E", "Ω"} {
		if _, ok := PrefixScale(bad); ok {
			t.Errorf("PrefixScale(%q) accepted", bad)
		}
		if _, ok := PrefixExponent(bad); ok {
			t.Errorf("PrefixExponent(%q) accepted", bad)
		}
	}
	for exp3, want := range map[int]string{-5: "f", -4: "p", -3: "n", -2: "µ", -1: "m", 0: "", 1: "k", 2: "M", 3: "G", 4: "T"} {
		if got, ok := PrefixSymbol(exp3); !ok || got != want {
			t.Errorf("PrefixSymbol(%d) = %q %v; want %q", exp3, got, ok, want)
		}
		if want != "" {
			if e, _ := PrefixExponent(want); e != 3*exp3 {
				t.Errorf("PrefixSymbol(%d) = %q reads back as 10^%d", exp3, want, e)
			}
		}
	}
	for _, out := range []int{-6, 5} {
		if _, ok := PrefixSymbol(out); ok {
			t.Errorf("PrefixSymbol(%d) accepted", out)
		}
	}
}
