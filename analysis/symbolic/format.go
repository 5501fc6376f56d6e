package symbolic

import (
	"fmt"
	"math/big"
	"sort"
	"strings"
)

// String formats p in canonical order as a sum of products: terms joined
// by " + " and " - ", factors by "*", powers written out as repeated
// factors ("C1*C1"), coefficients as integers, exact decimals ("0.25") or
// exact fractions ("1/3") — numbers and names only. Zero is "0".
func (p Poly) String() string { return p.Format(nil) }

// Format is String with a display order: the variables listed in first
// come first, in that order, both within each product and in the
// lexicographic order of the terms; the others follow in canonical order.
// Terms of lower total degree come first ("R1 + R2 + R1*U1.a0"), terms of
// equal degree in lexicographic order ("R1*C1 + R2*C1 + R2*C2").
// The display order changes only the text, never the value.
func (p Poly) Format(first []string) string {
	if len(p.terms) == 0 {
		return "0"
	}
	rank := make(map[string]int, len(first))
	for i, v := range first {
		if _, dup := rank[v]; !dup {
			rank[v] = i
		}
	}
	// Display permutation of p.vars.
	perm := make([]int, len(p.vars))
	for i := range perm {
		perm[i] = i
	}
	sort.SliceStable(perm, func(a, b int) bool {
		va, vb := p.vars[perm[a]], p.vars[perm[b]]
		ra, oka := rank[va]
		rb, okb := rank[vb]
		switch {
		case oka && okb:
			return ra < rb
		case oka != okb:
			return oka
		}
		return varLess(va, vb)
	})
	type shown struct {
		key  string
		coef *big.Rat
		mono string
	}
	list := make([]shown, len(p.terms))
	buf := make([]byte, len(p.vars))
	for k, t := range p.terms {
		for j, i := range perm {
			buf[j] = t.mono[i]
		}
		list[k] = shown{key: string(buf), coef: t.coef, mono: t.mono}
	}
	sort.SliceStable(list, func(a, b int) bool {
		if da, db := monoDegree(list[a].key), monoDegree(list[b].key); da != db {
			return da < db
		}
		return list[a].key > list[b].key
	})
	var b strings.Builder
	for k, t := range list {
		neg := t.coef.Sign() < 0
		abs := new(big.Rat).Abs(t.coef)
		switch {
		case k == 0 && neg:
			b.WriteString("-")
		case k > 0 && neg:
			b.WriteString(" - ")
		case k > 0:
			b.WriteString(" + ")
		}
		var factors []string
		for j, i := range perm {
			for range t.key[j] {
				factors = append(factors, p.vars[i])
			}
		}
		if len(factors) == 0 || abs.Cmp(big.NewRat(1, 1)) != 0 {
			factors = append([]string{FormatRat(abs)}, factors...)
		}
		b.WriteString(strings.Join(factors, "*"))
	}
	return b.String()
}

// FormatRat writes r exactly: an integer, a terminating decimal ("0.001")
// when the denominator has no prime factors but 2 and 5, or "p/q".
func FormatRat(r *big.Rat) string {
	if r.IsInt() {
		return r.Num().String()
	}
	d := new(big.Int).Set(r.Denom())
	two, five := big.NewInt(2), big.NewInt(5)
	a, c := 0, 0
	m := new(big.Int)
	for {
		if q, rem := new(big.Int).QuoRem(d, two, m); rem.Sign() == 0 {
			d, a = q, a+1
			continue
		}
		break
	}
	for {
		if q, rem := new(big.Int).QuoRem(d, five, m); rem.Sign() == 0 {
			d, c = q, c+1
			continue
		}
		break
	}
	if d.Cmp(big.NewInt(1)) == 0 {
		k := max(a, c)
		if plain := r.FloatString(k); len(plain) <= 16 {
			return plain
		}
		return scientific(r, k)
	}
	return r.Num().String() + "/" + r.Denom().String()
}

// scientific writes the terminating decimal r = M·10^−k exactly in
// exponent form ("1.5e-9"), for values whose plain decimal would run to
// many zeros.
func scientific(r *big.Rat, k int) string {
	m := new(big.Int).Mul(r.Num(), new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(k)), nil))
	m.Quo(m, r.Denom()) // exact: r·10^k is an integer
	sign := ""
	if m.Sign() < 0 {
		sign = "-"
		m.Neg(m)
	}
	digits := strings.TrimRight(m.String(), "0")
	exp := len(m.String()) - 1 - k
	mant := digits[:1]
	if len(digits) > 1 {
		mant += "." + digits[1:]
	}
	return fmt.Sprintf("%s%se%d", sign, mant, exp)
}

// monoDegree is the total degree of an exponent string.
func monoDegree(m string) int {
	d := 0
	for i := 0; i < len(m); i++ {
		d += int(m[i])
	}
	return d
}
