package symbolic

import (
	"fmt"
	"math/big"
	"strings"
)

// PowerDiff is the disagreement of two transfer functions in one
// coefficient: the terms of the first side (Extra) and of the second side
// (Missing) whose monomials carry different coefficients.
type PowerDiff struct {
	InDen   bool // true for a denominator coefficient, false for numerator
	Power   int  // k of s^k
	Extra   Poly // terms of side 1 that side 2 does not have (with that coefficient)
	Missing Poly // terms of side 2 that side 1 does not have (with that coefficient)
}

// String reads like "den s^1: missing R2*C2; extra 2*R1*C2".
func (d PowerDiff) String() string {
	part := "num"
	if d.InDen {
		part = "den"
	}
	var msg []string
	if !d.Missing.IsZero() {
		msg = append(msg, "missing "+d.Missing.String())
	}
	if !d.Extra.IsZero() {
		msg = append(msg, "extra "+d.Extra.String())
	}
	return fmt.Sprintf("%s s^%d: %s", part, d.Power, strings.Join(msg, "; "))
}

// Diff explains why two transfer functions differ. Scale is the factor
// applied to side 2 before the per-power comparison (chosen so the
// lowest-order denominator coefficients agree when they differ only by a
// constant), so the terms read in side 1's own scaling; Powers lists every
// coefficient that still differs.
type Diff struct {
	Scale  *big.Rat
	Powers []PowerDiff
}

// String joins the per-power differences with "; ".
func (d Diff) String() string {
	parts := make([]string, len(d.Powers))
	for i, p := range d.Powers {
		parts[i] = p.String()
	}
	return strings.Join(parts, "; ")
}

// Equivalent reports whether n1/d1 and n2/d2 (ascending coefficients in s,
// free of s) are the same rational function: N1·D2 − N2·D1 ≡ 0 exactly.
// When they are not, the Diff lists, per power of s, which terms side 1
// has extra and which it misses relative to side 2, after scaling side 2
// by a constant so the lowest-order denominator coefficients match when
// that is possible (side 1 is typically the hand derivation, side 2 the
// circuit). Both denominators must be non-zero.
func Equivalent(n1, d1, n2, d2 []Poly) (bool, Diff) {
	N1, D1 := FromPowers(LaplaceVar, n1), FromPowers(LaplaceVar, d1)
	N2, D2 := FromPowers(LaplaceVar, n2), FromPowers(LaplaceVar, d2)
	if N1.Mul(D2).Equal(N2.Mul(D1)) && !D1.IsZero() && !D2.IsZero() {
		return true, Diff{Scale: big.NewRat(1, 1)}
	}
	scale := big.NewRat(1, 1)
	if l1, l2 := lowest(d1), lowest(d2); !l1.IsZero() && !l2.IsZero() {
		if q, ok := l1.Div(l2); ok {
			if c, isConst := q.IsConst(); isConst {
				scale = c
			}
		}
	}
	var out Diff
	out.Scale = scale
	out.Powers = append(out.Powers, powerDiffs(false, n1, scaleAll(n2, scale))...)
	out.Powers = append(out.Powers, powerDiffs(true, d1, scaleAll(d2, scale))...)
	return false, out
}

func lowest(ps []Poly) Poly {
	for _, p := range ps {
		if !p.IsZero() {
			return p
		}
	}
	return Poly{}
}

func scaleAll(ps []Poly, r *big.Rat) []Poly {
	out := make([]Poly, len(ps))
	for i, p := range ps {
		out[i] = p.Scale(r)
	}
	return out
}

// powerDiffs compares a and b coefficient by coefficient.
func powerDiffs(inDen bool, a, b []Poly) []PowerDiff {
	var out []PowerDiff
	for k := 0; k < max(len(a), len(b)); k++ {
		var pa, pb Poly
		if k < len(a) {
			pa = a[k]
		}
		if k < len(b) {
			pb = b[k]
		}
		pa, pb = unify(pa, pb)
		coefB := make(map[string]*big.Rat, len(pb.terms))
		for _, t := range pb.terms {
			coefB[t.mono] = t.coef
		}
		coefA := make(map[string]*big.Rat, len(pa.terms))
		for _, t := range pa.terms {
			coefA[t.mono] = t.coef
		}
		d := PowerDiff{InDen: inDen, Power: k, Extra: Poly{vars: pa.vars}, Missing: Poly{vars: pb.vars}}
		for _, t := range pa.terms {
			if c, ok := coefB[t.mono]; !ok || c.Cmp(t.coef) != 0 {
				d.Extra.terms = append(d.Extra.terms, t)
			}
		}
		for _, t := range pb.terms {
			if c, ok := coefA[t.mono]; !ok || c.Cmp(t.coef) != 0 {
				d.Missing.terms = append(d.Missing.terms, t)
			}
		}
		if !d.Extra.IsZero() || !d.Missing.IsZero() {
			d.Extra, d.Missing = d.Extra.compact(), d.Missing.compact()
			out = append(out, d)
		}
	}
	return out
}
