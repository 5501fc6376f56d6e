package symbolic

import (
	"math/big"
	"strings"
	"testing"

	"nodal/analysis/derivation"
)

// rationalOf parses a transfer function (when src has no "=") or an ODE in
// y and u and reduces it.
func rationalOf(t *testing.T, src string) *derivation.Rational {
	t.Helper()
	if strings.Contains(src, "=") {
		eq, err := derivation.ParseODE("ode", src)
		if err != nil {
			t.Fatalf("%s: %v", src, err)
		}
		r, err := eq.Reduce(derivation.Signals{Output: "y", Input: "u"})
		if err != nil {
			t.Fatalf("%s: %v", src, err)
		}
		return r
	}
	tf, err := derivation.ParseTF("tf", src)
	if err != nil {
		t.Fatalf("%s: %v", src, err)
	}
	r, err := tf.Reduce()
	if err != nil {
		t.Fatalf("%s: %v", src, err)
	}
	return r
}

// The expected polynomials are expanded from the expressions
// (exact rational arithmetic, common practice); where denominators are
// cleared the expectation is compared up to a common factor with
// Equivalent and, where the cleared form is determined, exactly.
func TestFromDerivation(t *testing.T) {
	rat := func(a, b int64) Poly { return Const(big.NewRat(a, b)) }
	for _, tc := range []struct {
		name     string
		src      string
		num, den []Poly
	}{
		{"RC low-pass ODE", "R1*C1*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), m("R1", "C1")}},
		{"RC low-pass TF", "1/(1 + s*R1*C1)", []Poly{Int(1)}, []Poly{Int(1), m("R1", "C1")}},
		{"unity-gain Sallen-Key", "1/(1 + s*C2*(R1+R2) + s^2*R1*R2*C1*C2)",
			[]Poly{Int(1)}, []Poly{Int(1), sum(m("R1", "C2"), m("R2", "C2")), m("R1", "R2", "C1", "C2")}},
		{"power of a sum", "(R1+R2)^2*y' + y = u", []Poly{Int(1)},
			[]Poly{Int(1), sum(m("R1", "R1"), prod(2, "R1", "R2"), m("R2", "R2"))}},
		{"power zero", "R1^0*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), Int(1)}},
		{"decimal text is exact", "0.1*y' + y = 3*u", []Poly{Int(3)}, []Poly{Int(1), rat(1, 10)}},
		{"SI prefixes exact", "4.7k*y' + 2.2e-7*y = 10n*u", []Poly{rat(1, 100000000)}, []Poly{rat(22, 100000000), Int(4700)}},
		{"micro sign", "100µ*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), rat(1, 10000)}},
		// The shared number token (IEC 60062:2016 codes, attached units,
		// percent) is read exactly too: 4k7 = 4700, 1k5 = 1500, 4n7 = 47/10^10.
		{"value codes and units exact", "4k7*4n7*y' + 1k5*y = 2kHz*5%*u", []Poly{Int(100)}, []Poly{Int(1500), rat(4700*47, 10000000000)}},
		{"division by a constant", "R1*C1/2*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), prod(1, "R1", "C1").Scale(big.NewRat(1, 2))}},
		{"negation and subtraction", "(R1 - R2)*y' - -y = u", []Poly{Int(1)}, []Poly{Int(1), Var("R1").Sub(Var("R2"))}},
		{"dotted names", "U1.a0*y = u", []Poly{Int(1)}, []Poly{Var("U1.a0")}},
		// y' = (u − y)/(R1·C1): Den (1/(R1C1), 1), Num (1/(R1C1)); cleared by R1·C1.
		{"division by a symbol is cleared", "y' = (u - y)/(R1*C1)", []Poly{Int(1)}, []Poly{Int(1), m("R1", "C1")}},
		{"negative power", "R1^-1*y' + y = u", []Poly{Var("R1")}, []Poly{Var("R1"), Int(1)}},
		// The reduction folds literal arithmetic in float64; the exact
		// value is recovered: 0.1*3 is 3/10, 1/3 stays 1/3.
		{"folded decimal product", "0.1*3*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), rat(3, 10)}},
		{"folded third", "1/3*R1*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), Var("R1").Scale(big.NewRat(1, 3))}},
		{"folded prefixed product", "4.7k*2.2n*y' + y = u", []Poly{Int(1)}, []Poly{Int(1), rat(1034, 100000000)}},
		{"trailing zero trimmed", "y + 0*y'' = u", []Poly{Int(1)}, []Poly{Int(1)}},
	} {
		num, den, ok, why := FromDerivation(rationalOf(t, tc.src))
		if !ok {
			t.Errorf("%s: not converted: %s", tc.name, why)
			continue
		}
		if !polysEqual(num, tc.num) || !polysEqual(den, tc.den) {
			t.Errorf("%s: got %v / %v, want %v / %v", tc.name, num, den, tc.num, tc.den)
		}
	}
}

func TestFromDerivationRefuses(t *testing.T) {
	for _, tc := range []struct {
		name, src, why string
	}{
		{"sqrt", "sqrt(L1*C1)*y' + y = u", "sqrt"},
		{"pi", "2*pi*R1*C1*y' + y = u", "pi"},
		{"symbolic exponent", "R1^n*y' + y = u", "not a constant integer"},
		{"fractional exponent", "R1^0.5*y' + y = u", "not a constant integer"},
		{"huge exponent", "R1^40*y' + y = u", "larger than"},
		{"division by zero", "R1/(R2 - R2)*y' + y = u", "zero"},
	} {
		_, _, ok, why := FromDerivation(rationalOf(t, tc.src))
		if ok || !strings.Contains(why, tc.why) {
			t.Errorf("%s: ok=%v why=%q; want refusal mentioning %q", tc.name, ok, why, tc.why)
		}
	}
}

// Expressions that would blow up are refused before they are expanded
// (Poly.Mul panics past an exponent of 255).
func TestFromDerivationSizeGuard(t *testing.T) {
	for _, src := range []string{"((R1+R2)^16)^16*y' + y = u", "(R1+R2+R3+R4+R5+R6)^16*y' + y = u", "R1^16*R1^16*R1^16*R1^16*R1^16*y = u"} {
		_, _, ok, why := FromDerivation(rationalOf(t, src))
		if ok || why == "" {
			t.Errorf("%s: ok=%v why=%q; want a refusal", src, ok, why)
		}
	}
}
