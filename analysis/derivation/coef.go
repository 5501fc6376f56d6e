package derivation

import "math"

// Builders for coefficient expressions. They fold literal arithmetic
// (2*3, x*1, x+0) so that reduced coefficients stay readable, and keep
// every other operation as a node, so a coefficient remains a walk-able
// tree of the user's names. Synthesised nodes carry the position of the
// source operation they come from, or a zero Pos.

func lit(v float64) *Number { return &Number{Value: v} }

// literal reports the value of e when it is a *Number.
func literal(e Expr) (float64, bool) {
	if n, ok := e.(*Number); ok {
		return n.Value, true
	}
	return 0, false
}

func isLit(e Expr, v float64) bool {
	x, ok := literal(e)
	return ok && x == v
}

func add(a, b Expr) Expr {
	switch {
	case isLit(a, 0):
		return b
	case isLit(b, 0):
		return a
	}
	if x, ok := literal(a); ok {
		if y, ok := literal(b); ok {
			return lit(x + y)
		}
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
	if x, ok := literal(a); ok {
		if y, ok := literal(b); ok {
			return lit(x - y)
		}
	}
	if u, ok := b.(*Unary); ok {
		return &Binary{Op: '+', X: a, Y: u.X}
	}
	return &Binary{Op: '-', X: a, Y: b}
}

func neg(a Expr) Expr {
	switch a := a.(type) {
	case *Number:
		return lit(-a.Value)
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
	if x, ok := literal(a); ok {
		if y, ok := literal(b); ok {
			return lit(x * y)
		}
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
	if x, ok := literal(a); ok {
		if y, ok := literal(b); ok && y != 0 {
			return lit(x / y)
		}
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
	if x, ok := literal(a); ok {
		if y, ok := literal(b); ok {
			if v := math.Pow(x, y); !math.IsNaN(v) && !math.IsInf(v, 0) {
				return lit(v)
			}
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
