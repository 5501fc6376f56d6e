package symbolic

import (
	"errors"
	"math/big"
	"strings"
	"testing"
)

// Exponents past MaxExponent (one byte per variable in a monomial) are an
// error wrapping ErrExponentRange, never a panic.
func TestExponentRange(t *testing.T) {
	one := big.NewRat(1, 1)
	for _, tc := range []struct {
		name  string
		terms []Term
		ok    bool
	}{
		{"at the limit", []Term{{Coef: one, Powers: []Power{{Var: "R1", Exp: 255}}}}, true},
		{"split at the limit", []Term{{Coef: one, Powers: []Power{{Var: "R1", Exp: 200}, {Var: "R1", Exp: 55}}}}, true},
		{"past the limit", []Term{{Coef: one, Powers: []Power{{Var: "R1", Exp: 256}}}}, false},
		{"summed past the limit", []Term{{Coef: one, Powers: []Power{{Var: "R1", Exp: 200}, {Var: "R1", Exp: 56}}}}, false},
		{"negative", []Term{{Coef: one, Powers: []Power{{Var: "C1", Exp: -1}}}}, false},
	} {
		p, err := FromTerms(tc.terms)
		if tc.ok && (err != nil || p.Degree("R1") != 255) {
			t.Errorf("%s: %v, degree %d", tc.name, err, p.Degree("R1"))
		}
		if !tc.ok && !errors.Is(err, ErrExponentRange) {
			t.Errorf("%s: error %v, want ErrExponentRange", tc.name, err)
		}
	}
	x200, _ := FromTerms([]Term{{Coef: one, Powers: []Power{{Var: "R1", Exp: 200}}}})
	x55, _ := FromTerms([]Term{{Coef: one, Powers: []Power{{Var: "R1", Exp: 55}, {Var: "C1", Exp: 3}}}})
	if p, err := x200.TryMul(x55); err != nil || p.Degree("R1") != 255 || p.Degree("C1") != 3 {
		t.Errorf("x^200·x^55: %v %v", p, err)
	}
	if _, err := x200.TryMul(x55.Mul(Var("R1"))); !errors.Is(err, ErrExponentRange) {
		t.Errorf("x^200·x^56: error %v, want ErrExponentRange", err)
	}
	// Four distinct denominators of degree 64 in R1 (each within the
	// derivation bound) clear to a common denominator of degree 256.
	r := rationalOf(t, "1/((R1^16)^4+1)*y''' + 1/((R1^16)^4+2)*y'' + 1/((R1^16)^4+3)*y' + 1/((R1^16)^4+4)*y = u")
	if _, _, ok, why := FromDerivation(r); ok || !strings.Contains(why, "exponent out of range") {
		t.Errorf("ok %v why %q; want a refusal naming the exponent range", ok, why)
	}
}
