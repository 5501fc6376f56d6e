package derivation

import (
	"math"
	"math/big"
	"testing"
)

// TestPrintedNotation: the notations nodal prints (the product dot, the
// minus sign U+2212, primes ′ ″ ‴ ⁗, the order y⁽⁴⁾, superscript powers,
// square brackets) read as their ASCII forms, coefficient for coefficient.
func TestPrintedNotation(t *testing.T) {
	tests := []struct {
		tf          bool
		printed, as string
	}{
		{false, "1.008e-15·y⁽³⁾ + 6.368e-9·y″ + 112.7e-6·y′ + y = u", "1.008e-15*y''' + 6.368e-9*y'' + 112.7e-6*y' + y = u"},
		{false, "2·y⁽⁴⁾ + 3·y‴ + y⁗ + y = −5·u″", "2*y^(4) + 3*y''' + y'''' + y = -5*u''"},
		{false, "y′′ + y′ + y = u", "y'' + y' + y = u"},
		{false, "a1×y′ + y = 5e-6·u′ − 100e3·u", "a1*y' + y = 5e-6*u' - 100e3*u"},
		{true, "(1 + 10.13e-6·s²) / (1 + 12.73e-3·s + 10.13e-6·s²)", "(1 + 10.13e-6*s^2) / (1 + 12.73e-3*s + 10.13e-6*s^2)"},
		{true, "-100e3·(1 − s/20e9) / [(1 + s/996.1e3)·(1 + s/2.136e9)]", "-100e3*(1 - s/20e9) / ((1 + s/996.1e3)*(1 + s/2.136e9))"},
		{true, "122.5e-15·s² / [(1 + s/15.71e6 + (s/951.3e3)²)]", "122.5e-15*s^2 / (1 + s/15.71e6 + (s/951.3e3)^2)"},
		{true, "2.05e18·s⁻³", "2.05e18*s^-3"},
		{true, "s⁽²⁾ + s¹⁰", "s^(2) + s^10"},
	}
	for _, tt := range tests {
		_, n1, d1, err := coefsOf(tt.tf, tt.printed)
		if err != nil {
			t.Errorf("%q: %v", tt.printed, err)
			continue
		}
		_, n2, d2, err := coefsOf(tt.tf, tt.as)
		if err != nil {
			t.Fatalf("%q: %v", tt.as, err)
		}
		if !sameList(n1, n2) || !sameList(d1, d2) {
			t.Errorf("%q: %v / %v, want %v / %v as %q", tt.printed, n1, d1, n2, d2, tt.as)
		}
	}
}

// TestPrintedNotationErrors: a superscript power past the order limit and
// a stray character are positioned errors (line and column of the
// offending token).
func TestPrintedNotationErrors(t *testing.T) {
	tests := []struct {
		src, want string // want: the message prefix with line and column
	}{
		{"1/(1 + s¹⁰⁰)", "tf:1:9: the power"},
		{"y⁽⁹⁹⁾ = u", "ode:1:1: derivative order"},
		{"1/(1 + s·)", "tf:1:9: expected an operator before \"*\""}, // as for the ASCII "*"
	}
	for _, tt := range tests {
		_, _, _, err := coefsOf(tt.want[:2] == "tf", tt.src)
		if err == nil {
			t.Errorf("%q: no error", tt.src)
			continue
		}
		if got := err.Error(); len(got) < len(tt.want) || got[:len(tt.want)] != tt.want {
			t.Errorf("%q: %q, want prefix %q", tt.src, got, tt.want)
		}
	}
}

// TestWrittenPrecision: a literal is read to half a unit in its last
// written digit (the precision its digits state); whole numbers without
// exponent, prefix or unit are exact.
func TestWrittenPrecision(t *testing.T) {
	tests := []struct {
		src string
		tol float64 // precision of the s^1 coefficient of 1/(1 + X*s)
	}{
		{"59.97e-9", 0.005e-9},
		{"4.478e-21", 0.0005e-21},
		{"1.000", 0.0005},
		{"382.0", 0.05},
		{"4k7", 50},
		{"2.2µ", 0.05e-6},
		{"10k", 500},
		{"1e-3", 0.5e-3},
		{"2", 0},
		{"1500000000", 0},
		{"R1", 0},
		// First-order propagation: (2.0 ± 0.05)·(3.00 ± 0.005) = 6 ± (2·0.005 + 3·0.05).
		{"2.0*3.00", 2*0.005 + 3*0.05},
		{"1/4.0", 0.05 / 16},
	}
	for _, tt := range tests {
		r, _, _, err := coefsOf(true, "1/(1 + ("+tt.src+")*s)")
		if err != nil {
			t.Fatalf("%q: %v", tt.src, err)
		}
		_, den := r.Precision(lookup)
		if len(den) < 2 || math.Abs(den[1]-tt.tol) > 1e-12*math.Max(tt.tol, 1e-30) {
			t.Errorf("%q: precision %v, want %g", tt.src, den, tt.tol)
		}
	}
}

// TestExactFolding: constants folded from literals keep their exact
// rational value, so the 1/ωt fractions nodal prints for a gbw op-amp
// survive the reduction (a float64 fold would give 4.77464829275686e-07
// with no short exact form).
func TestExactFolding(t *testing.T) {
	r, _, _, err := coefsOf(true, "1/(1 + s*(1500000000/3141592653589793 + R1*C1))")
	if err != nil {
		t.Fatal(err)
	}
	var found *big.Rat
	Walk(&TF{Expr: r.Den[1]}, func(n Node) bool {
		if x, ok := n.(*Number); ok && x.Exact != nil && x.Exact.Sign() != 0 && !x.Exact.IsInt() {
			found = x.Exact
		}
		return true
	})
	if want := big.NewRat(1500000000, 3141592653589793); found == nil || found.Cmp(want) != 0 {
		t.Fatalf("folded constant %v, want exactly %v in %s", found, want, Format(r.Den[1]))
	}
}
