package symbolic

import (
	"fmt"
	"math/big"
	"sort"
)

// Content returns the positive rational c such that p/c has coprime
// integer coefficients (the gcd of the numerators over the lcm of the
// denominators) taken jointly over all ps; 1 when every p is zero.
func Content(ps ...Poly) *big.Rat {
	num := new(big.Int)
	den := big.NewInt(1)
	for _, p := range ps {
		for _, t := range p.terms {
			num.GCD(nil, nil, num, new(big.Int).Abs(t.coef.Num()))
			g := new(big.Int).GCD(nil, nil, den, t.coef.Denom())
			den.Mul(den, new(big.Int).Quo(t.coef.Denom(), g))
		}
	}
	if num.Sign() == 0 {
		return big.NewRat(1, 1)
	}
	return new(big.Rat).SetFrac(num, den)
}

// CommonMonomial returns the greatest monomial (coefficient 1) dividing
// every term of every p; 1 when every p is zero.
func CommonMonomial(ps ...Poly) Poly {
	minExp := map[string]int{}
	first := true
	for _, p := range ps {
		for _, t := range p.Terms() {
			e := map[string]int{}
			for _, pw := range t.Powers {
				e[pw.Var] = pw.Exp
			}
			if first {
				minExp = e
				first = false
				continue
			}
			for v, m := range minExp {
				minExp[v] = min(m, e[v])
			}
		}
	}
	out := Int(1)
	for v, e := range minExp {
		for range e {
			out = out.Mul(Var(v))
		}
	}
	return out
}

// FromTerms builds a polynomial from terms named by variable; repeated
// monomials are summed. It is the inverse of Poly.Terms. An exponent that
// is negative or whose sum for one variable exceeds MaxExponent gives an
// error wrapping ErrExponentRange.
func FromTerms(terms []Term) (Poly, error) {
	set := map[string]bool{}
	for _, t := range terms {
		for _, pw := range t.Powers {
			set[pw.Var] = true
		}
	}
	vars := make([]string, 0, len(set))
	for v := range set {
		vars = append(vars, v)
	}
	sort.Slice(vars, func(i, j int) bool { return varLess(vars[i], vars[j]) })
	idx := make(map[string]int, len(vars))
	for i, v := range vars {
		idx[v] = i
	}
	acc := make(map[string]*big.Rat, len(terms))
	buf := make([]byte, len(vars))
	for _, t := range terms {
		clear(buf)
		for _, pw := range t.Powers {
			e := int(buf[idx[pw.Var]]) + pw.Exp
			if e > MaxExponent || pw.Exp < 0 {
				return Poly{}, fmt.Errorf("%w: %s^%d", ErrExponentRange, pw.Var, pw.Exp)
			}
			buf[idx[pw.Var]] = byte(e)
		}
		if c, ok := acc[string(buf)]; ok {
			c.Add(c, t.Coef)
		} else {
			acc[string(buf)] = new(big.Rat).Set(t.Coef)
		}
	}
	return fromMap(vars, acc), nil
}
