package derivation

import (
	"math"

	"nodal/netlist/syntax"
)

// Reduce turns the transfer function into a Rational by polynomial
// arithmetic on coefficient expressions: a/b + c/d = (ad + cb)/(bd) (with
// equal denominators kept once), products multiply out, s^n needs a whole
// literal n (negative n inverts). No common factors are cancelled. Errors:
// s inside sqrt, a non-whole or name-dependent power of an expression in s,
// a division by an expression that is literally zero.
func (tf *TF) Reduce() (*Rational, error) {
	r := tfReducer{src: tf.Src, name: tf.At.File}
	x := r.expr(tf.Expr)
	if err := r.errs.Err(); err != nil {
		return nil, err
	}
	return &Rational{Num: x.num.trim(), Den: x.den.trim(), File: tf.At.File, Src: tf.Src}, nil
}

type tfReducer struct {
	src, name string
	errs      syntax.ErrorList
	sizes     map[Expr]int // tree sizes of coefficient nodes, memoised
	tooBig    bool         // reported once
}

// maxCoefNodes bounds the tree size of one coefficient: multiplying out
// powers of polynomials grows the trees combinatorially.
const maxCoefNodes = 20000

// size returns the number of nodes of e as a tree (shared subtrees count
// once per use), memoised so the cost is linear in distinct nodes.
func (r *tfReducer) size(e Expr) int {
	if n, ok := r.sizes[e]; ok {
		return n
	}
	n := 1
	switch e := e.(type) {
	case *Unary:
		n += r.size(e.X)
	case *Binary:
		n += r.size(e.X) + r.size(e.Y)
	case *Call:
		n += r.size(e.Arg)
	}
	if r.sizes == nil {
		r.sizes = map[Expr]int{}
	}
	r.sizes[e] = n
	return n
}

// check reports when a coefficient of x grows past maxCoefNodes and then
// returns 1 in its place, so the reduction stops growing.
func (r *tfReducer) check(at Pos, x ratio) ratio {
	for _, p := range []poly{x.num, x.den} {
		for _, c := range p {
			if r.size(c) > maxCoefNodes {
				if !r.tooBig {
					r.tooBig = true
					r.errorf(at, "the multiplied-out coefficients exceed %d terms: simplify the expression", maxCoefNodes)
				}
				return one
			}
		}
	}
	return x
}

func (r *tfReducer) errorf(at Pos, format string, args ...any) {
	r.errs = append(r.errs, diagf(r.name, r.src, at, format, args...))
}

var one = ratio{poly{lit(1)}, poly{lit(1)}}

func (r *tfReducer) expr(e Expr) ratio {
	switch e := e.(type) {
	case *Number:
		return ratio{constPoly(e), poly{lit(1)}}
	case *Name:
		if e.Name == "s" {
			return ratio{poly{lit(0), lit(1)}, poly{lit(1)}}
		}
		return ratio{constPoly(e), poly{lit(1)}}
	case *Unary:
		return ratNeg(r.expr(e.X))
	case *Call:
		a := r.expr(e.Arg)
		if !a.num.isConst() || !a.den.isConst() {
			r.errorf(e.At, "s inside %s: the transfer function must be rational in s", e.Fun)
			return one
		}
		return ratio{constPoly(&Call{At: e.At, Fun: e.Fun, Arg: div(e.At, a.num[0], a.den[0])}), poly{lit(1)}}
	case *Binary:
		return r.check(e.At, r.binary(e))
	case *Deriv:
		r.errorf(e.At, "derivative of %s in a transfer function: write it in s", e.Name)
		return one
	}
	return one
}

// binary reduces a two-operand node; the caller checks the size.
func (r *tfReducer) binary(e *Binary) ratio {
	a, b := r.expr(e.X), r.expr(e.Y)
	switch e.Op {
	case '+':
		return ratAdd(a, b)
	case '-':
		return ratAdd(a, ratNeg(b))
	case '*':
		return ratMul(a, b)
	case '/':
		if b.num.isZero() {
			r.errorf(e.At, "division by zero")
			return one
		}
		if b.num.isConst() && b.den.isConst() {
			// A factor free of s divides the coefficients, so the
			// polynomial denominators hold only what depends on s (and
			// constants such as 1/3141592653589793 are not multiplied
			// together across terms until they overflow).
			return ratScale(a, e.At, b.den[0], b.num[0])
		}
		return ratMul(a, ratInv(b))
	case '^':
		return r.power(e, a, b)
	}
	return one
}

func (r *tfReducer) power(e *Binary, a, b ratio) ratio {
	if !b.num.isConst() || !b.den.isConst() {
		r.errorf(e.At, "s in an exponent: the transfer function must be rational in s")
		return one
	}
	if a.num.isConst() && a.den.isConst() {
		return ratio{constPoly(pow(e.At, div(e.At, a.num[0], a.den[0]), div(e.At, b.num[0], b.den[0]))), poly{lit(1)}}
	}
	n, ok := wholeLiteral(b)
	if !ok {
		r.errorf(e.At, "the power of an expression in s must be a whole number written as a literal (such as s^2)")
		return one
	}
	if n < 0 {
		a, n = ratInv(a), -n
	}
	if deg := max(len(a.num.trim()), len(a.den.trim())) - 1; deg*n > maxOrder {
		r.errorf(e.At, "power gives order %d in s, more than %d", deg*n, maxOrder)
		return one
	}
	x := one
	for range n {
		if x = r.check(e.At, ratMul(x, a)); r.tooBig {
			return one
		}
	}
	return x
}

// wholeLiteral returns the exponent when it is a literal whole number no
// larger in magnitude than maxOrder.
func wholeLiteral(b ratio) (int, bool) {
	x, ok1 := literal(b.num[0])
	y, ok2 := literal(b.den[0])
	if !ok1 || !ok2 || y == 0 {
		return 0, false
	}
	v := x / y
	if v != math.Trunc(v) || math.Abs(v) > maxOrder {
		return 0, false
	}
	return int(v), true
}
