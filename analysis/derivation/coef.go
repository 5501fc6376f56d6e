package derivation

import (
	"math"
	"math/big"
)

// Builders for coefficient expressions. They fold literal arithmetic
// (2*3, x*1, x+0) so that reduced coefficients stay readable, and keep
// every other operation as a node, so a coefficient remains a walk-able
// tree of the user's names. Synthesised nodes carry the position of the
// source operation they come from, or a zero Pos.

func lit(v float64) *Number {
	n := &Number{Value: v}
	if r := new(big.Rat); !math.IsInf(v, 0) && !math.IsNaN(v) {
		n.Exact = r.SetFloat64(v)
	}
	return n
}

// maxExactBits bounds the numerator and denominator of an exactly folded
// constant; past it the fold keeps only the float64 value (Exact nil).
const maxExactBits = 4096

// fold combines two literals: exactly when both are exact (and the result
// stays below maxExactBits), else in float64 by f.
// The result's Tol is tol(a, b), the first-order propagation of the
// operands' written precision.
func fold(a, b *Number, exact func(x, y *big.Rat) *big.Rat, f func(x, y float64) float64, tol func(a, b *Number) float64) *Number {
	t := tol(a, b)
	if a.Exact != nil && b.Exact != nil {
		if r := exact(a.Exact, b.Exact); r != nil && r.Num().BitLen() <= maxExactBits && r.Denom().BitLen() <= maxExactBits {
			v, _ := r.Float64()
			if !math.IsInf(v, 0) {
				return &Number{Value: v, Exact: r, Tol: t}
			}
		}
	}
	return &Number{Value: f(a.Value, b.Value), Tol: t}
}

// First-order propagation of absolute precisions (common practice):
// sums add them, products and quotients add relative precisions, a power
// x^y scales x's by |y·x^(y−1)|.
func sumTol(a, b *Number) float64 { return a.Tol + b.Tol }

func productTol(a, b *Number) float64 {
	return math.Abs(a.Value)*b.Tol + math.Abs(b.Value)*a.Tol
}

func quotientTol(a, b *Number) float64 {
	return (a.Tol + math.Abs(a.Value/b.Value)*b.Tol) / math.Abs(b.Value)
}

func powerTol(a, b *Number) float64 {
	if a.Tol == 0 {
		return 0
	}
	return math.Abs(b.Value*math.Pow(a.Value, b.Value-1)) * a.Tol
}

// folded returns the two literals when a and b are both *Number.
func folded(a, b Expr) (*Number, *Number, bool) {
	x, ok1 := a.(*Number)
	y, ok2 := b.(*Number)
	return x, y, ok1 && ok2
}

// literal reports the value of e when it is a *Number.
func literal(e Expr) (float64, bool) {
	if n, ok := e.(*Number); ok {
		return n.Value, true
	}
	return 0, false
}

// isLit reports whether e is the exact literal v (a rounded one such as
// 1.000 is kept, so its written precision is not lost).
func isLit(e Expr, v float64) bool {
	n, ok := e.(*Number)
	return ok && n.Value == v && n.Tol == 0
}

func add(a, b Expr) Expr {
	switch {
	case isLit(a, 0):
		return b
	case isLit(b, 0):
		return a
	}
	if x, y, ok := folded(a, b); ok {
		return fold(x, y, func(p, q *big.Rat) *big.Rat { return new(big.Rat).Add(p, q) }, func(p, q float64) float64 { return p + q }, sumTol)
	}
	if u, ok := b.(*Unary); ok {
		return &Binary{Op: '-', X: a, Y: u.X}
	}
	return &Binary{Op: '+', X: a, Y: b}
}

func sub(a, b Expr) Expr {
	switch {
	case isLit(b, 0):
		return a
	case isLit(a, 0):
		return neg(b)
	}
	if x, y, ok := folded(a, b); ok {
		return fold(x, y, func(p, q *big.Rat) *big.Rat { return new(big.Rat).Sub(p, q) }, func(p, q float64) float64 { return p - q }, sumTol)
	}
	if u, ok := b.(*Unary); ok {
		return &Binary{Op: '+', X: a, Y: u.X}
	}
	return &Binary{Op: '-', X: a, Y: b}
}

func neg(a Expr) Expr {
	switch a := a.(type) {
	case *Number:
		n := &Number{Value: -a.Value, Tol: a.Tol}
		if a.Exact != nil {
			n.Exact = new(big.Rat).Neg(a.Exact)
		}
		return n
	case *Unary:
		return a.X
	}
	return &Unary{Op: '-', X: a}
}

func mul(a, b Expr) Expr {
	switch {
	case isLit(a, 0) || isLit(b, 0):
		return lit(0)
	case isLit(a, 1):
		return b
	case isLit(b, 1):
		return a
	case isLit(a, -1):
		return neg(b)
	case isLit(b, -1):
		return neg(a)
	}
	if x, y, ok := folded(a, b); ok {
		return fold(x, y, func(p, q *big.Rat) *big.Rat { return new(big.Rat).Mul(p, q) }, func(p, q float64) float64 { return p * q }, productTol)
	}
	// Pull negations out so that sums print as a - b rather than a + -b.
	if u, ok := a.(*Unary); ok {
		return neg(mul(u.X, b))
	}
	if u, ok := b.(*Unary); ok {
		return neg(mul(a, u.X))
	}
	return &Binary{Op: '*', X: a, Y: b}
}

// div keeps a division by a literal zero as a node so that evaluation
// reports it at the source position at.
func div(at Pos, a, b Expr) Expr {
	switch {
	case isLit(b, 1):
		return a
	case isLit(a, 0) && !isLit(b, 0):
		return lit(0)
	}
	if x, y, ok := folded(a, b); ok && y.Value != 0 {
		return fold(x, y, func(p, q *big.Rat) *big.Rat {
			if q.Sign() == 0 {
				return nil
			}
			return new(big.Rat).Quo(p, q)
		}, func(p, q float64) float64 { return p / q }, quotientTol)
	}
	if u, ok := a.(*Unary); ok {
		return neg(div(at, u.X, b))
	}
	return &Binary{At: at, Op: '/', X: a, Y: b}
}

func pow(at Pos, a, b Expr) Expr {
	if isLit(b, 1) {
		return a
	}
	if x, y, ok := folded(a, b); ok {
		if v := math.Pow(x.Value, y.Value); !math.IsNaN(v) && !math.IsInf(v, 0) {
			return fold(x, y, exactPow, func(float64, float64) float64 { return v }, powerTol)
		}
	}
	return &Binary{At: at, Op: '^', X: a, Y: b}
}

// Equal reports whether a and b are the same tree (positions and source
// spellings ignored).
func Equal(a, b Expr) bool {
	switch a := a.(type) {
	case *Number:
		b, ok := b.(*Number)
		return ok && a.Value == b.Value
	case *Name:
		b, ok := b.(*Name)
		return ok && a.Name == b.Name
	case *Deriv:
		b, ok := b.(*Deriv)
		return ok && a.Name == b.Name && a.Order == b.Order
	case *Unary:
		b, ok := b.(*Unary)
		return ok && a.Op == b.Op && Equal(a.X, b.X)
	case *Binary:
		b, ok := b.(*Binary)
		return ok && a.Op == b.Op && Equal(a.X, b.X) && Equal(a.Y, b.Y)
	case *Call:
		b, ok := b.(*Call)
		return ok && a.Fun == b.Fun && Equal(a.Arg, b.Arg)
	}
	return false
}

// exactPow is x^y for an integer y of at most maxOrder in magnitude, nil
// otherwise (a fractional power is not rational in general).
func exactPow(x, y *big.Rat) *big.Rat {
	if !y.IsInt() || !y.Num().IsInt64() {
		return nil
	}
	k := y.Num().Int64()
	if k > maxOrder || k < -maxOrder || (k < 0 && x.Sign() == 0) {
		return nil
	}
	base := new(big.Rat).Set(x)
	if k < 0 {
		base.Inv(base)
		k = -k
	}
	out := big.NewRat(1, 1)
	for ; k > 0; k-- {
		out.Mul(out, base)
		if out.Num().BitLen() > maxExactBits || out.Denom().BitLen() > maxExactBits {
			return nil
		}
	}
	return out
}
