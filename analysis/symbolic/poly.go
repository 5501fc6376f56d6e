package symbolic

import (
	"errors"
	"fmt"
	"math/big"
	"sort"
)

// Poly is an exact multivariate polynomial with rational coefficients.
//
// The zero value is the zero polynomial. A Poly is immutable: every
// operation returns a new value and never changes its operands, so Polys
// may be shared freely.
//
// Invariants: vars is sorted by varLess and holds no duplicates (it may
// hold variables of exponent zero in every term); every term's mono has
// len(vars) bytes, byte i being the exponent of vars[i] (0..255); terms
// are sorted by mono in descending byte order (lexicographic order with
// vars[0] the most significant variable), monos are distinct and no
// coefficient is zero.
type Poly struct {
	vars  []string
	terms []term
}

type term struct {
	mono string
	coef *big.Rat // never mutated once stored
}

// Power is one variable raised to a positive exponent within a monomial.
type Power struct {
	Var string
	Exp int
}

// Term is one term c·Πvar^exp of a Poly, as returned by Poly.Terms.
// Powers are in the Poly's canonical variable order, all with Exp > 0.
type Term struct {
	Coef   *big.Rat
	Powers []Power
}

// Const returns the constant polynomial r (a copy of r is kept).
func Const(r *big.Rat) Poly {
	if r.Sign() == 0 {
		return Poly{}
	}
	return Poly{terms: []term{{mono: "", coef: new(big.Rat).Set(r)}}}
}

// Int returns the constant polynomial n.
func Int(n int64) Poly { return Const(big.NewRat(n, 1)) }

// Var returns the polynomial consisting of the single variable name.
func Var(name string) Poly {
	return Poly{vars: []string{name}, terms: []term{{mono: "\x01", coef: big.NewRat(1, 1)}}}
}

// IsZero reports whether p is the zero polynomial.
func (p Poly) IsZero() bool { return len(p.terms) == 0 }

// Len returns the number of terms of p.
func (p Poly) Len() int { return len(p.terms) }

// IsConst reports whether p has no variables (it may be zero); it returns
// the constant value too.
func (p Poly) IsConst() (*big.Rat, bool) {
	switch {
	case len(p.terms) == 0:
		return new(big.Rat), true
	case len(p.terms) == 1 && isOne(p.terms[0].mono):
		return new(big.Rat).Set(p.terms[0].coef), true
	}
	return nil, false
}

// isOne reports whether the monomial is 1 (all exponents zero).
func isOne(m string) bool {
	for i := 0; i < len(m); i++ {
		if m[i] != 0 {
			return false
		}
	}
	return true
}

// Vars returns the variables that occur in p with a positive exponent, in
// canonical order.
func (p Poly) Vars() []string {
	var out []string
	for i, v := range p.vars {
		for _, t := range p.terms {
			if t.mono[i] != 0 {
				out = append(out, v)
				break
			}
		}
	}
	return out
}

// Terms returns the terms of p in canonical order (descending
// lexicographic). The coefficients are copies.
func (p Poly) Terms() []Term {
	out := make([]Term, len(p.terms))
	for k, t := range p.terms {
		var pw []Power
		for i := 0; i < len(t.mono); i++ {
			if t.mono[i] != 0 {
				pw = append(pw, Power{Var: p.vars[i], Exp: int(t.mono[i])})
			}
		}
		out[k] = Term{Coef: new(big.Rat).Set(t.coef), Powers: pw}
	}
	return out
}

// Degree returns the highest exponent of variable v in p (0 if absent).
func (p Poly) Degree(v string) int {
	i := p.varIndex(v)
	if i < 0 {
		return 0
	}
	d := 0
	for _, t := range p.terms {
		d = max(d, int(t.mono[i]))
	}
	return d
}

func (p Poly) varIndex(v string) int {
	i := sort.Search(len(p.vars), func(i int) bool { return !varLess(p.vars[i], v) })
	if i < len(p.vars) && p.vars[i] == v {
		return i
	}
	return -1
}

// sameVars reports whether a and b are the same variable list.
func sameVars(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	if len(a) == 0 || &a[0] == &b[0] {
		return true
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// unify returns p and q rewritten over one common variable list.
func unify(p, q Poly) (Poly, Poly) {
	if sameVars(p.vars, q.vars) {
		return p, q
	}
	if len(p.terms) == 0 {
		return Poly{vars: q.vars}, q
	}
	if len(q.terms) == 0 {
		return p, Poly{vars: p.vars}
	}
	vars := mergeVars(p.vars, q.vars)
	return p.over(vars), q.over(vars)
}

// mergeVars returns the sorted union of two sorted variable lists.
func mergeVars(a, b []string) []string {
	out := make([]string, 0, len(a)+len(b))
	i, j := 0, 0
	for i < len(a) || j < len(b) {
		switch {
		case j == len(b) || (i < len(a) && varLess(a[i], b[j])):
			out = append(out, a[i])
			i++
		case i == len(a) || varLess(b[j], a[i]):
			out = append(out, b[j])
			j++
		default:
			out = append(out, a[i])
			i++
			j++
		}
	}
	return out
}

// over rewrites p over vars, a sorted superset of p.vars.
func (p Poly) over(vars []string) Poly {
	if sameVars(p.vars, vars) {
		return p
	}
	pos := make([]int, len(p.vars))
	for i, v := range p.vars {
		pos[i] = sort.Search(len(vars), func(k int) bool { return !varLess(vars[k], v) })
	}
	out := Poly{vars: vars, terms: make([]term, len(p.terms))}
	buf := make([]byte, len(vars))
	for k, t := range p.terms {
		clear(buf)
		for i := 0; i < len(t.mono); i++ {
			buf[pos[i]] = t.mono[i]
		}
		out.terms[k] = term{mono: string(buf), coef: t.coef}
	}
	// An order-preserving embedding keeps the lexicographic order.
	return out
}

// Neg returns −p.
func (p Poly) Neg() Poly {
	out := Poly{vars: p.vars, terms: make([]term, len(p.terms))}
	for k, t := range p.terms {
		out.terms[k] = term{mono: t.mono, coef: new(big.Rat).Neg(t.coef)}
	}
	return out
}

// Scale returns r·p.
func (p Poly) Scale(r *big.Rat) Poly {
	if r.Sign() == 0 {
		return Poly{}
	}
	out := Poly{vars: p.vars, terms: make([]term, len(p.terms))}
	for k, t := range p.terms {
		out.terms[k] = term{mono: t.mono, coef: new(big.Rat).Mul(t.coef, r)}
	}
	return out
}

// Add returns p + q.
func (p Poly) Add(q Poly) Poly { return p.addScaled(q, false) }

// Sub returns p − q.
func (p Poly) Sub(q Poly) Poly { return p.addScaled(q, true) }

// addScaled merges the sorted term lists of p and ±q.
func (p Poly) addScaled(q Poly, negate bool) Poly {
	p, q = unify(p, q)
	out := Poly{vars: p.vars, terms: make([]term, 0, len(p.terms)+len(q.terms))}
	if len(q.terms) > 0 {
		out.vars = q.vars
	}
	i, j := 0, 0
	for i < len(p.terms) || j < len(q.terms) {
		switch {
		case j == len(q.terms) || (i < len(p.terms) && p.terms[i].mono > q.terms[j].mono):
			out.terms = append(out.terms, p.terms[i])
			i++
		case i == len(p.terms) || q.terms[j].mono > p.terms[i].mono:
			c := q.terms[j].coef
			if negate {
				c = new(big.Rat).Neg(c)
			}
			out.terms = append(out.terms, term{mono: q.terms[j].mono, coef: c})
			j++
		default:
			c := new(big.Rat)
			if negate {
				c.Sub(p.terms[i].coef, q.terms[j].coef)
			} else {
				c.Add(p.terms[i].coef, q.terms[j].coef)
			}
			if c.Sign() != 0 {
				out.terms = append(out.terms, term{mono: p.terms[i].mono, coef: c})
			}
			i++
			j++
		}
	}
	return out
}

// MaxExponent is the largest exponent of one variable a Poly can hold
// (monomials store one byte per variable).
const MaxExponent = 255

// ErrExponentRange is wrapped by the errors of FromTerms and TryMul when an
// exponent would leave 0..MaxExponent.
var ErrExponentRange = errors.New("exponent out of range 0..255")

// TryMul returns p·q, or an error wrapping ErrExponentRange when the
// product would raise a variable past MaxExponent (checked before any
// expansion). Use it where the factors come from user input.
func (p Poly) TryMul(q Poly) (Poly, error) {
	for _, v := range p.Vars() {
		if d := p.Degree(v) + q.Degree(v); d > MaxExponent {
			return Poly{}, fmt.Errorf("%w: %s would be raised to the power %d", ErrExponentRange, v, d)
		}
	}
	return p.Mul(q), nil
}

// Mul returns p·q. Exponents must stay within MaxExponent (an invariant
// the caller keeps: circuits stop far earlier at the size limit of
// Transfer); TryMul checks it and returns an error instead.
func (p Poly) Mul(q Poly) Poly {
	if len(p.terms) == 0 || len(q.terms) == 0 {
		return Poly{}
	}
	p, q = unify(p, q)
	if len(p.terms) == 1 {
		return q.mulTerm(p.terms[0])
	}
	if len(q.terms) == 1 {
		return p.mulTerm(q.terms[0])
	}
	acc := make(map[string]*big.Rat, len(p.terms)*len(q.terms)/2+1)
	buf := make([]byte, len(p.vars))
	tmp := new(big.Rat)
	for _, a := range p.terms {
		for _, b := range q.terms {
			mulMono(buf, a.mono, b.mono)
			tmp.Mul(a.coef, b.coef)
			if c, ok := acc[string(buf)]; ok {
				c.Add(c, tmp)
			} else {
				acc[string(buf)] = new(big.Rat).Set(tmp)
			}
		}
	}
	return fromMap(p.vars, acc)
}

// mulTerm returns p·t for one term t over p's variables.
func (p Poly) mulTerm(t term) Poly {
	out := Poly{vars: p.vars, terms: make([]term, len(p.terms))}
	buf := make([]byte, len(p.vars))
	for k, a := range p.terms {
		mulMono(buf, a.mono, t.mono)
		out.terms[k] = term{mono: string(buf), coef: new(big.Rat).Mul(a.coef, t.coef)}
	}
	return out
}

// mulMono writes the product of monomials a and b into buf.
func mulMono(buf []byte, a, b string) {
	for i := range buf {
		e := int(a[i]) + int(b[i])
		if e > 255 {
			panic(fmt.Sprintf("symbolic: exponent %d exceeds 255", e))
		}
		buf[i] = byte(e)
	}
}

// fromMap builds a canonical Poly from accumulated terms.
func fromMap(vars []string, acc map[string]*big.Rat) Poly {
	out := Poly{vars: vars, terms: make([]term, 0, len(acc))}
	for m, c := range acc {
		if c.Sign() != 0 {
			out.terms = append(out.terms, term{mono: m, coef: c})
		}
	}
	sort.Slice(out.terms, func(i, j int) bool { return out.terms[i].mono > out.terms[j].mono })
	return out
}

// Equal reports whether p and q are the same polynomial.
func (p Poly) Equal(q Poly) bool { return p.Sub(q).IsZero() }

// divides reports whether monomial d divides m.
func dividesMono(d, m string) bool {
	for i := 0; i < len(d); i++ {
		if d[i] > m[i] {
			return false
		}
	}
	return true
}

// Div returns q with p = q·d when d divides p exactly, and ok = false
// otherwise (or when d is zero). The division runs in the lexicographic
// term order: d divides p exactly only if the leading term of d divides
// the leading term of every remainder.
func (p Poly) Div(d Poly) (q Poly, ok bool) {
	if len(d.terms) == 0 {
		return Poly{}, false
	}
	if len(p.terms) == 0 {
		return Poly{}, true
	}
	p, d = unify(p, d)
	lead := d.terms[0]
	inv := new(big.Rat).Inv(lead.coef)
	if len(d.terms) == 1 {
		out := Poly{vars: p.vars, terms: make([]term, len(p.terms))}
		buf := make([]byte, len(p.vars))
		for k, t := range p.terms {
			if !dividesMono(lead.mono, t.mono) {
				return Poly{}, false
			}
			divMono(buf, t.mono, lead.mono)
			out.terms[k] = term{mono: string(buf), coef: new(big.Rat).Mul(t.coef, inv)}
		}
		return out, true
	}
	// Long division on a max-ordered map: the remainder's leading
	// monomial must be divisible by lead at every step.
	rem := newTermHeap(p)
	var qt []term
	buf := make([]byte, len(p.vars))
	for {
		m, c, any := rem.popMax()
		if !any {
			break
		}
		if !dividesMono(lead.mono, m) {
			return Poly{}, false
		}
		divMono(buf, m, lead.mono)
		t := term{mono: string(buf), coef: new(big.Rat).Mul(c, inv)}
		qt = append(qt, t)
		// rem -= t·(d − lead)
		for _, b := range d.terms[1:] {
			mulMono(buf, t.mono, b.mono)
			rem.add(string(buf), new(big.Rat).Neg(new(big.Rat).Mul(t.coef, b.coef)))
		}
	}
	// Quotient terms come out in descending order.
	return Poly{vars: p.vars, terms: qt}, true
}

// divMono writes a/b into buf; b must divide a.
func divMono(buf []byte, a, b string) {
	for i := range buf {
		buf[i] = a[i] - b[i]
	}
}

// Subst replaces each variable named in values by its rational value.
func (p Poly) Subst(values map[string]*big.Rat) Poly {
	idx := make(map[int]*big.Rat)
	for i, v := range p.vars {
		if r, ok := values[v]; ok {
			idx[i] = r
		}
	}
	if len(idx) == 0 {
		return p
	}
	acc := make(map[string]*big.Rat, len(p.terms))
	buf := make([]byte, len(p.vars))
	for _, t := range p.terms {
		c := new(big.Rat).Set(t.coef)
		copy(buf, t.mono)
		for i, r := range idx {
			for e := 0; e < int(t.mono[i]); e++ {
				c.Mul(c, r)
			}
			buf[i] = 0
		}
		if old, ok := acc[string(buf)]; ok {
			old.Add(old, c)
		} else {
			acc[string(buf)] = c
		}
	}
	return fromMap(p.vars, acc)
}

// CoeffsIn returns p as a polynomial in variable v: out[k] is the
// coefficient of v^k (free of v). A zero p gives an empty slice.
func (p Poly) CoeffsIn(v string) []Poly {
	i := p.varIndex(v)
	if i < 0 {
		if p.IsZero() {
			return nil
		}
		return []Poly{p}
	}
	var out []Poly
	buf := make([]byte, len(p.vars))
	for _, t := range p.terms {
		k := int(t.mono[i])
		for len(out) <= k {
			out = append(out, Poly{vars: p.vars})
		}
		copy(buf, t.mono)
		buf[i] = 0
		// Removing one variable's exponent keeps the relative order of
		// terms that share that exponent.
		out[k].terms = append(out[k].terms, term{mono: string(buf), coef: t.coef})
	}
	for k := range out {
		out[k] = out[k].compact()
	}
	return out
}

// compact drops variables that no term uses.
func (p Poly) compact() Poly {
	var keep []int
	for i := range p.vars {
		for _, t := range p.terms {
			if t.mono[i] != 0 {
				keep = append(keep, i)
				break
			}
		}
	}
	if len(keep) == len(p.vars) {
		return p
	}
	vars := make([]string, len(keep))
	for j, i := range keep {
		vars[j] = p.vars[i]
	}
	out := Poly{vars: vars, terms: make([]term, len(p.terms))}
	buf := make([]byte, len(keep))
	for k, t := range p.terms {
		for j, i := range keep {
			buf[j] = t.mono[i]
		}
		out.terms[k] = term{mono: string(buf), coef: t.coef}
	}
	return out
}

// FromPowers returns s^0·P0 + s^1·P1 + ... for coefficient polynomials in
// ascending order of the variable v.
func FromPowers(v string, coeffs []Poly) Poly {
	var out Poly
	x := Var(v)
	pow := Int(1)
	for k, c := range coeffs {
		if k > 0 {
			pow = pow.Mul(x)
		}
		out = out.Add(c.Mul(pow))
	}
	return out
}
