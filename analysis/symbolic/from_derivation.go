package symbolic

import (
	"fmt"
	"math"
	"math/big"
	"strconv"

	"nodal/analysis/derivation"
	"nodal/netlist/syntax"
)

// maxDerivationPower bounds an integer exponent in a hand derivation
// (x^n with |n| ≤ 16); a larger power is far outside what a hand
// derivation of a circuit holds and would only blow up the expansion.
const maxDerivationPower = 16

// FromDerivation converts the coefficient expressions of a hand derivation
// into exact polynomials in its names, ascending in s like r.Num and r.Den,
// so that they can be compared with a symbolic Result by Equivalent.
//
// Numbers are taken from their decimal source text as exact rationals
// ("4.7k" is exactly 4700, "2.2e-7" exactly 22/10⁸); a synthesised number
// without text uses the shortest decimal that round-trips to its float64
// value. Powers need a constant integer exponent of at most 16 in
// magnitude. Division is exact: a coefficient such as 1/(R1*C1) is a
// rational function, and all coefficients of N and D are multiplied by the
// product of the distinct denominators so that every coefficient is a
// polynomial (the transfer function is unchanged; its overall scale may
// change, which Equivalent ignores).
//
// ok is false, with why saying what could not be converted, for sqrt, the
// constant pi (also when folded into another constant), a non-integer or
// symbolic exponent, a division by an expression that is identically
// zero, a name "s" (the Laplace variable must not occur in a coefficient),
// or an expansion past DefaultMaxTerms terms or a power of 64 of a name.
func FromDerivation(r *derivation.Rational) (num, den []Poly, ok bool, why string) {
	if r == nil || len(r.Den) == 0 {
		return nil, nil, false, "no denominator"
	}
	all := make([]ratFunc, 0, len(r.Num)+len(r.Den))
	for _, list := range [][]derivation.Expr{r.Num, r.Den} {
		for _, e := range list {
			f, err := convertExpr(e)
			if err != nil {
				return nil, nil, false, err.Error()
			}
			all = append(all, f)
		}
	}
	// Clear denominators: multiply every coefficient by the product of the
	// distinct denominators.
	var dens []Poly
	for _, f := range all {
		if _, isConst := f.q.IsConst(); isConst {
			continue
		}
		seen := false
		for _, d := range dens {
			if d.Equal(f.q) {
				seen = true
				break
			}
		}
		if !seen {
			dens = append(dens, f.q)
		}
	}
	lcm := Int(1)
	for _, d := range dens {
		var err error
		if lcm, err = lcm.TryMul(d); err != nil {
			return nil, nil, false, "clearing the denominators: " + err.Error()
		}
	}
	out := make([]Poly, len(all))
	for i, f := range all {
		m, exact := lcm.Div(f.q)
		if !exact {
			// Cannot happen: f.q is a constant or one of the factors.
			return nil, nil, false, fmt.Sprintf("internal: denominator %s does not divide %s", f.q, lcm)
		}
		var err error
		if out[i], err = f.p.TryMul(m); err != nil {
			return nil, nil, false, "clearing the denominators: " + err.Error()
		}
	}
	num, den = trimZeroCoeffs(out[:len(r.Num)]), trimZeroCoeffs(out[len(r.Num):])
	if len(den) == 1 && den[0].IsZero() {
		return nil, nil, false, "the denominator is identically zero"
	}
	return num, den, true, ""
}

// trimZeroCoeffs drops trailing zero coefficients, keeping at least one entry.
func trimZeroCoeffs(ps []Poly) []Poly {
	n := len(ps)
	for n > 1 && ps[n-1].IsZero() {
		n--
	}
	return append([]Poly(nil), ps[:n]...)
}

// ratFunc is p/q with q non-zero.
type ratFunc struct{ p, q Poly }

func (a ratFunc) add(b ratFunc, sign int64) ratFunc {
	bp := b.p
	if sign < 0 {
		bp = bp.Neg()
	}
	if a.q.Equal(b.q) {
		return ratFunc{a.p.Add(bp), a.q}
	}
	return ratFunc{a.p.Mul(b.q).Add(bp.Mul(a.q)), a.q.Mul(b.q)}
}

func (a ratFunc) mul(b ratFunc) ratFunc {
	return ratFunc{a.p.Mul(b.p), a.q.Mul(b.q)}.reduce()
}

// maxDerivationDegree bounds the exponent of any name in a converted hand
// derivation, well inside Poly's 255 and far beyond any circuit's.
const maxDerivationDegree = 64

// checkSize refuses an operation on a and b whose result would grow past
// what a hand derivation holds: an exponent above maxDerivationDegree or
// more than DefaultMaxTerms terms (bounds computed before expanding;
// Poly.Mul itself would panic past an exponent of 255).
func checkSize(at derivation.Pos, op byte, a, b ratFunc) error {
	// The products an operation forms: p·p' and q·q' for * and /, the
	// cross products for + and −.
	pairs := [][2]Poly{{a.p, b.p}, {a.q, b.q}}
	if op == '+' || op == '-' {
		pairs = [][2]Poly{{a.p, b.q}, {b.p, a.q}, {a.q, b.q}}
	}
	if op == '/' {
		pairs = [][2]Poly{{a.p, b.q}, {a.q, b.p}}
	}
	terms := 0
	for _, pr := range pairs {
		for _, v := range append(pr[0].Vars(), pr[1].Vars()...) {
			if d := pr[0].Degree(v) + pr[1].Degree(v); d > maxDerivationDegree {
				return fmt.Errorf("%s: %s would be raised past the power %d", posText(at), v, maxDerivationDegree)
			}
		}
		terms += max(pr[0].Len(), 1) * max(pr[1].Len(), 1)
	}
	if terms > 2*DefaultMaxTerms {
		return fmt.Errorf("%s: the expression expands past %d terms", posText(at), DefaultMaxTerms)
	}
	return nil
}

// reduce divides out a constant denominator so constants stay polynomial.
func (a ratFunc) reduce() ratFunc {
	if c, isConst := a.q.IsConst(); isConst && c.Sign() != 0 {
		return ratFunc{a.p.Scale(new(big.Rat).Inv(c)), Int(1)}
	}
	return a
}

// convertExpr turns one coefficient expression into an exact rational
// function of its names.
func convertExpr(e derivation.Expr) (ratFunc, error) {
	switch n := e.(type) {
	case *derivation.Number:
		r, err := numberRat(n)
		if err != nil {
			return ratFunc{}, err
		}
		return ratFunc{Const(r), Int(1)}, nil
	case *derivation.Name:
		if n.Name == LaplaceVar {
			return ratFunc{}, fmt.Errorf("%s: the Laplace variable s inside a coefficient", posText(n.At))
		}
		return ratFunc{Var(n.Name), Int(1)}, nil
	case *derivation.Unary:
		x, err := convertExpr(n.X)
		if err != nil {
			return ratFunc{}, err
		}
		return ratFunc{x.p.Neg(), x.q}, nil
	case *derivation.Call:
		return ratFunc{}, fmt.Errorf("%s: %s(%s) is not a polynomial in the part values", posText(n.At), n.Fun, derivation.Format(n.Arg))
	case *derivation.Binary:
		x, err := convertExpr(n.X)
		if err != nil {
			return ratFunc{}, err
		}
		if n.Op == '^' {
			return power(x, n)
		}
		y, err := convertExpr(n.Y)
		if err != nil {
			return ratFunc{}, err
		}
		if err := checkSize(n.At, n.Op, x, y); err != nil {
			return ratFunc{}, err
		}
		switch n.Op {
		case '+':
			return x.add(y, 1).reduce(), nil
		case '-':
			return x.add(y, -1).reduce(), nil
		case '*':
			return x.mul(y), nil
		case '/':
			if y.p.IsZero() {
				return ratFunc{}, fmt.Errorf("%s: division by %s, which is zero", posText(n.At), derivation.Format(n.Y))
			}
			return x.mul(ratFunc{y.q, y.p}), nil
		}
		return ratFunc{}, fmt.Errorf("%s: unknown operator %q", posText(n.At), n.Op)
	}
	return ratFunc{}, fmt.Errorf("unexpected expression %T in a coefficient", e)
}

// power raises x to the constant integer exponent of n.Y.
func power(x ratFunc, n *derivation.Binary) (ratFunc, error) {
	y, err := convertExpr(n.Y)
	if err != nil {
		return ratFunc{}, err
	}
	y = y.reduce()
	c, isConst := y.p.IsConst()
	if _, qc := y.q.IsConst(); !isConst || !qc || !c.IsInt() {
		return ratFunc{}, fmt.Errorf("%s: the exponent %s is not a constant integer", posText(n.At), derivation.Format(n.Y))
	}
	if !c.Num().IsInt64() || c.Num().Int64() > maxDerivationPower || c.Num().Int64() < -maxDerivationPower {
		return ratFunc{}, fmt.Errorf("%s: the exponent %s is larger than %d", posText(n.At), derivation.Format(n.Y), maxDerivationPower)
	}
	k := c.Num().Int64()
	base := x
	if k < 0 {
		if x.p.IsZero() {
			return ratFunc{}, fmt.Errorf("%s: zero to a negative power", posText(n.At))
		}
		base, k = ratFunc{x.q, x.p}, -k
	}
	out := ratFunc{Int(1), Int(1)}
	for ; k > 0; k-- {
		if err := checkSize(n.At, '*', out, base); err != nil {
			return ratFunc{}, err
		}
		out = out.mul(base)
	}
	return out, nil
}

// numberRat returns the exact value of a literal from its source text.
func numberRat(n *derivation.Number) (*big.Rat, error) {
	if n.Text == "pi" {
		return nil, fmt.Errorf("%s: pi is not a rational number", posText(n.At))
	}
	if n.Exact != nil {
		return new(big.Rat).Set(n.Exact), nil
	}
	if n.Text == "" {
		return foldedRat(n.Value)
	}
	// The shared number token (the one analysis/derivation reads) gives
	// the literal as a decimal mantissa and an exact power of ten.
	num, err := syntax.ParseNumber(n.Text)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", posText(n.At), err)
	}
	r := num.Rat()
	if r == nil {
		return nil, fmt.Errorf("%s: malformed number %q", posText(n.At), n.Text)
	}
	return r, nil
}

// foldedRat recovers the exact value of a constant that the reduction of
// the derivation folded in float64 arithmetic (2*3, 0.1*3, 1/3, 4.7k*2):
// the fraction p/q with q ≤ 1000 within 1e-15 relative (continued
// fractions), else the shortest decimal of at most 12 significant digits
// within 1e-14 relative. Products and quotients of a few short literals
// land on one of these; a value with neither form (a multiple of pi) is
// refused rather than guessed.
func foldedRat(v float64) (*big.Rat, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("the constant %g is not finite", v)
	}
	if v == 0 {
		return new(big.Rat), nil
	}
	if r := smallFraction(v, 1000, 1e-15); r != nil {
		return r, nil
	}
	for digits := 1; digits <= 12; digits++ {
		txt := strconv.FormatFloat(v, 'g', digits, 64)
		w, _ := strconv.ParseFloat(txt, 64)
		if math.Abs(w-v) <= 1e-14*math.Abs(v) {
			r, _ := new(big.Rat).SetString(txt)
			return r, nil
		}
	}
	return nil, fmt.Errorf("the constant %s (folded from the numbers of your expression) has no short exact form; write it without pi or with fewer digits", strconv.FormatFloat(v, 'g', -1, 64))
}

// smallFraction returns p/q with 1 ≤ q ≤ maxQ and |p/q − v| ≤ tol·|v| from
// the continued-fraction convergents of v, or nil.
func smallFraction(v float64, maxQ int64, tol float64) *big.Rat {
	x := math.Abs(v)
	h0, h1 := int64(0), int64(1) // numerators p(k-2), p(k-1)
	k0, k1 := int64(1), int64(0) // denominators q(k-2), q(k-1)
	for i := 0; i < 40; i++ {
		a := math.Floor(x)
		if a > 1e15 {
			return nil
		}
		ai := int64(a)
		h0, h1 = h1, ai*h1+h0
		k0, k1 = k1, ai*k1+k0
		if k1 > maxQ {
			return nil
		}
		if math.Abs(float64(h1)/float64(k1)-math.Abs(v)) <= tol*math.Abs(v) {
			r := big.NewRat(h1, k1)
			if v < 0 {
				r.Neg(r)
			}
			return r
		}
		if x-a == 0 {
			return nil
		}
		x = 1 / (x - a)
	}
	return nil
}

// pow10 returns 10^e exactly.

// posText writes a position as FILE:LINE:COL, or "" parts left out when
// the node was synthesised.
func posText(p derivation.Pos) string {
	if p.Line == 0 {
		return "(derived)"
	}
	return fmt.Sprintf("%s:%d:%d", p.File, p.Line, p.Col)
}
