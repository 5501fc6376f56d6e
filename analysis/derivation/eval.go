package derivation

import (
	"math"

	"nodal/netlist/syntax"
)

// Lookup returns the SI value of a parameter or part by name, and whether
// the name is known (for example syntax.Circuit.Lookup).
type Lookup func(name string) (float64, bool)

// Evaluate substitutes values into every coefficient and returns the
// numeric coefficient lists, ascending (index k is the coefficient of
// s^k), with trailing zero coefficients trimmed (at least one entry each).
// The scale is the one written (Den is not normalised). Errors are a
// syntax.ErrorList: each unknown name once at its first use, a division
// by zero, sqrt of a negative value, a result that is not finite, a
// denominator that is zero.
func (r *Rational) Evaluate(lookup Lookup) (num, den []float64, err error) {
	ev := evaluator{lookup: lookup, file: r.File, src: r.Src, seen: map[string]bool{}}
	num = ev.list(r.Num)
	den = ev.list(r.Den)
	if len(ev.errs) > 0 {
		ev.errs.Sort()
		return nil, nil, ev.errs
	}
	num, den = trimZeros(num), trimZeros(den)
	if len(den) == 1 && den[0] == 0 {
		var at Pos
		if len(r.Den) > 0 {
			at = r.Den[0].Position()
		}
		ev.errorf(at, "the denominator evaluates to zero for these values")
		return nil, nil, ev.errs
	}
	return num, den, nil
}

// EvalExpr evaluates one coefficient expression. src, when not empty, is
// the source text for the caret display in errors.
func EvalExpr(e Expr, lookup Lookup, src string) (float64, error) {
	ev := evaluator{lookup: lookup, src: src, seen: map[string]bool{}}
	v := ev.eval(e)
	if len(ev.errs) > 0 {
		ev.errs.Sort()
		return 0, ev.errs
	}
	return v, nil
}

type evaluator struct {
	lookup    Lookup
	file, src string
	seen      map[string]bool // unknown names already reported
	errs      syntax.ErrorList
}

func (ev *evaluator) errorf(at Pos, format string, args ...any) {
	name := at.File
	if name == "" {
		name = ev.file
	}
	if at.Line < 1 { // a node made by the reduction, not read from the text
		at = Pos{File: name, Line: 1, Col: 1}
	}
	ev.errs = append(ev.errs, diagf(name, ev.src, at, format, args...))
}

func (ev *evaluator) list(es []Expr) []float64 {
	v := make([]float64, len(es))
	for k, e := range es {
		v[k] = ev.eval(e)
		if !math.IsNaN(v[k]) && math.IsInf(v[k], 0) {
			ev.errorf(e.Position(), "coefficient of s^%d is not finite", k)
		}
	}
	return v
}

// eval returns NaN after reporting an error, so one error does not cascade.
func (ev *evaluator) eval(e Expr) float64 {
	switch e := e.(type) {
	case *Number:
		return e.Value
	case *Name:
		if ev.lookup != nil {
			if v, ok := ev.lookup(e.Name); ok {
				return v
			}
		}
		if !ev.seen[e.Name] {
			ev.seen[e.Name] = true
			ev.errorf(e.At, "unknown name %s: not a parameter or part", e.Name)
		}
		return math.NaN()
	case *Unary:
		return -ev.eval(e.X)
	case *Call:
		x := ev.eval(e.Arg)
		if x < 0 {
			ev.errorf(e.At, "sqrt of a negative value (%g)", x)
			return math.NaN()
		}
		return math.Sqrt(x)
	case *Binary:
		x, y := ev.eval(e.X), ev.eval(e.Y)
		if math.IsNaN(x) || math.IsNaN(y) {
			return math.NaN()
		}
		switch e.Op {
		case '+':
			return x + y
		case '-':
			return x - y
		case '*':
			return x * y
		case '/':
			if y == 0 {
				ev.errorf(e.At, "division by zero (%s is 0)", Format(e.Y))
				return math.NaN()
			}
			return x / y
		case '^':
			v := math.Pow(x, y)
			if math.IsNaN(v) {
				ev.errorf(e.At, "power %g^%g is not a real number", x, y)
			}
			return v
		}
	case *Deriv:
		ev.errorf(e.At, "derivative of %s inside a coefficient", e.Name)
		return math.NaN()
	}
	if e != nil {
		ev.errorf(e.Position(), "cannot evaluate %T", e)
	}
	return math.NaN()
}

// trimZeros drops trailing zero coefficients, keeping at least one.
func trimZeros(c []float64) []float64 {
	for len(c) > 1 && c[len(c)-1] == 0 {
		c = c[:len(c)-1]
	}
	return c
}

// Precision returns, for every coefficient of Evaluate's lists (same
// length before trimming: one per entry of Num and Den), the absolute
// precision it carries from the literals as written (Number.Tol),
// propagated to first order through the arithmetic; names are exact.
// A coefficient with no rounded literal has precision 0. Call it after
// Evaluate succeeded; values it cannot evaluate give precision 0.
func (r *Rational) Precision(lookup Lookup) (num, den []float64) {
	ev := evaluator{lookup: lookup, file: r.File, src: r.Src, seen: map[string]bool{}}
	list := func(es []Expr) []float64 {
		out := make([]float64, len(es))
		for k, e := range es {
			if _, t := ev.withTol(e); !math.IsNaN(t) && !math.IsInf(t, 0) {
				out[k] = t
			}
		}
		return out
	}
	return list(r.Num), list(r.Den)
}

// withTol evaluates e and its first-order absolute precision.
func (ev *evaluator) withTol(e Expr) (v, tol float64) {
	switch e := e.(type) {
	case *Number:
		return e.Value, e.Tol
	case *Unary:
		v, t := ev.withTol(e.X)
		return -v, t
	case *Call:
		x, t := ev.withTol(e.Arg)
		if x <= 0 {
			return math.Sqrt(x), 0
		}
		return math.Sqrt(x), t / (2 * math.Sqrt(x))
	case *Binary:
		x, tx := ev.withTol(e.X)
		y, ty := ev.withTol(e.Y)
		a, b := &Number{Value: x, Tol: tx}, &Number{Value: y, Tol: ty}
		switch e.Op {
		case '+':
			return x + y, sumTol(a, b)
		case '-':
			return x - y, sumTol(a, b)
		case '*':
			return x * y, productTol(a, b)
		case '/':
			if y == 0 {
				return math.NaN(), 0
			}
			return x / y, quotientTol(a, b)
		case '^':
			return math.Pow(x, y), powerTol(a, b)
		}
	}
	ev.errs = nil
	return ev.eval(e), 0
}
