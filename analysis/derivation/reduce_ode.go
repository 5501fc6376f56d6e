package derivation

import (
	"slices"
	"strings"

	"nodal/netlist/syntax"
)

// Signals tells Reduce which names of an ODE are signals. Output and Input
// name them explicitly; when empty they are inferred (see the package
// documentation). Known reports whether a name is a parameter or part
// (typically backed by the circuit's Lookup); a nil Known treats every
// name that is never differentiated as a parameter, so the input must then
// be named or differentiated somewhere.
type Signals struct {
	Output, Input string
	Known         func(name string) bool
}

// sigKey is the Order-th derivative of signal Name (Order 0: the signal).
type sigKey struct {
	name  string
	order int
}

// linear is a side of the ODE during reduction: Σ terms[k]·k + konst.
type linear struct {
	terms    map[sigKey]Expr
	konst    Expr // nil when there is no signal-free part
	konstPos Pos
}

func (l linear) hasSignal() bool { return len(l.terms) > 0 }

// occurrence is one use of a name in the source.
type occurrence struct {
	name  string
	order int // 0 for a bare name
	left  bool
	at    Pos
}

// Reduce turns the ODE into a Rational: with y the output and u the input,
// Σ a_k·y⁽ᵏ⁾ = Σ b_k·u⁽ᵏ⁾ gives Den = (a_0, a_1, ...) and Num = (b_0, ...).
// Errors (positioned): an unknown name, a missing output or input, a
// derivative of the input on the left, a product of signals, a signal in a
// denominator, power or sqrt, a constant term.
func (eq *Equation) Reduce(sig Signals) (*Rational, error) {
	name := eq.At.File
	var errs syntax.ErrorList
	fail := func(at Pos, format string, args ...any) (*Rational, error) {
		errs = append(errs, diagf(name, eq.Src, at, format, args...))
		return nil, errs
	}

	var occ []occurrence
	collect := func(e Expr, left bool) {
		Walk(e, func(n Node) bool {
			switch n := n.(type) {
			case *Name:
				occ = append(occ, occurrence{n.Name, 0, left, n.At})
			case *Deriv:
				occ = append(occ, occurrence{n.Name, n.Order, left, n.At})
			}
			return true
		})
	}
	collect(eq.Left, true)
	collect(eq.Right, false)

	isSignal := func(o occurrence) bool {
		if o.name == sig.Output || o.name == sig.Input {
			return true
		}
		if o.order > 0 {
			return true
		}
		for _, p := range occ {
			if p.name == o.name && p.order > 0 {
				return true
			}
		}
		return sig.Known != nil && !sig.Known(o.name)
	}
	var cands []occurrence // first occurrence of each signal, in source order
	for _, o := range occ {
		if isSignal(o) && !slices.ContainsFunc(cands, func(c occurrence) bool { return c.name == o.name }) {
			cands = append(cands, o)
		}
	}

	out := sig.Output
	if out == "" {
		var ok bool
		if out, ok = pickOutput(occ, sig.Input, isSignal); !ok {
			return fail(start(eq.Left), "cannot tell the output: %s are differentiated to the same order on the left; write the input's terms on the right", out)
		}
	}
	if out == "" {
		return fail(start(eq.Left), "no output signal on the left-hand side (such as y' + y = u)")
	}
	in := sig.Input
	if in == "" {
		for _, c := range cands { // prefer a signal that appears on the right
			if c.name != out && (in == "" || !c.left && appearsLeftOnly(occ, in)) {
				in = c.name
			}
		}
	}
	if in == "" {
		return fail(start(eq.Right), "no input signal: the equation must contain the input (such as u) besides the output %s", out)
	}
	for _, c := range cands {
		if c.name != out && c.name != in {
			if c.order > 0 || (sig.Known == nil || sig.Known(c.name)) {
				errs = append(errs, diagf(name, eq.Src, c.at, "a third signal %s (the output is %s, the input %s)", c.name, out, in))
			} else {
				errs = append(errs, diagf(name, eq.Src, c.at, "unknown name %s: not a parameter or part (the output is %s, the input %s)", c.name, out, in))
			}
		}
	}
	for _, o := range occ {
		if o.left && o.order > 0 && o.name == in {
			errs = append(errs, diagf(name, eq.Src, o.at, "derivative of the input %s on the left-hand side: write input terms on the right", in))
		}
	}
	if len(errs) > 0 {
		return nil, errs
	}

	lr := odeReducer{name: name, src: eq.Src, sig: map[string]bool{out: true, in: true}}
	l, r := lr.expr(eq.Left), lr.expr(eq.Right)
	if err := lr.errs.Err(); err != nil {
		return nil, err
	}
	for _, side := range []linear{l, r} {
		if side.konst != nil && !isLit(side.konst, 0) {
			return fail(side.konstPos, "constant term %s: every term must contain %s or %s", Format(side.konst), out, in)
		}
	}
	den := collectPoly(l, r, out)
	num := collectPoly(r, l, in)
	if den.isZero() {
		return fail(start(eq.Left), "the output %s cancels out of the equation", out)
	}
	return &Rational{Num: num, Den: den, Output: out, Input: in, File: name, Src: eq.Src}, nil
}

// collectPoly returns the coefficients of the derivatives of sig, those of
// side plus minus those of other, ascending by order.
func collectPoly(side, other linear, sig string) poly {
	p := poly{lit(0)}
	for _, part := range []struct {
		l    linear
		sign bool
	}{{side, false}, {other, true}} {
		for k, c := range part.l.terms {
			if k.name != sig {
				continue
			}
			for len(p) <= k.order {
				p = append(p, lit(0))
			}
			if part.sign {
				p[k.order] = sub(p[k.order], c)
			} else {
				p[k.order] = add(p[k.order], c)
			}
		}
	}
	return p.trim()
}

type odeReducer struct {
	name, src string
	sig       map[string]bool
	errs      syntax.ErrorList
}

func (r *odeReducer) errorf(at Pos, format string, args ...any) {
	r.errs = append(r.errs, diagf(r.name, r.src, at, format, args...))
}

func pure(e Expr, at Pos) linear { return linear{konst: e, konstPos: at} }

func (r *odeReducer) expr(e Expr) linear {
	switch e := e.(type) {
	case *Number:
		return pure(e, e.At)
	case *Name:
		if r.sig[e.Name] {
			return linear{terms: map[sigKey]Expr{{e.Name, 0}: lit(1)}}
		}
		return pure(e, e.At)
	case *Deriv:
		return linear{terms: map[sigKey]Expr{{e.Name, e.Order}: lit(1)}}
	case *Unary:
		return scale(r.expr(e.X), lit(-1))
	case *Call:
		a := r.expr(e.Arg)
		if a.hasSignal() {
			r.errorf(e.At, "%s of a signal (%s): the equation must be linear", e.Fun, signalList(a))
			return pure(lit(1), e.At)
		}
		return pure(&Call{At: e.At, Fun: e.Fun, Arg: a.konst}, e.At)
	case *Binary:
		a, b := r.expr(e.X), r.expr(e.Y)
		switch e.Op {
		case '+':
			return sum(a, b, false)
		case '-':
			return sum(a, b, true)
		case '*':
			switch {
			case a.hasSignal() && b.hasSignal():
				r.errorf(e.At, "product of signals (%s times %s): the equation must be linear", signalList(a), signalList(b))
				return a
			case a.hasSignal():
				return r.scaleChecked(a, b.konst, e.At)
			case b.hasSignal():
				return r.scaleChecked(b, a.konst, e.At)
			}
			return pure(mul(a.konst, b.konst), e.At)
		case '/':
			if b.hasSignal() {
				r.errorf(e.At, "signal %s in a denominator: the equation must be linear", signalList(b))
				return a
			}
			if isLit(b.konst, 0) {
				r.errorf(e.At, "division by zero")
				return a
			}
			if a.hasSignal() {
				if a.konst != nil && !isLit(a.konst, 0) {
					r.errorf(a.konstPos, "constant term %s: every term must contain a signal", Format(a.konst))
				}
				t := make(map[sigKey]Expr, len(a.terms))
				for k, c := range a.terms {
					t[k] = div(e.At, c, b.konst)
				}
				return linear{terms: t}
			}
			return pure(div(e.At, a.konst, b.konst), e.At)
		case '^':
			if a.hasSignal() || b.hasSignal() {
				r.errorf(e.At, "power of a signal (%s): the equation must be linear", signalList(a, b))
				return a
			}
			return pure(pow(e.At, a.konst, b.konst), e.At)
		}
	}
	r.errorf(e.Position(), "unsupported expression")
	return pure(lit(0), e.Position())
}

// scaleChecked multiplies a linear form by a signal-free factor; a
// signal-free part of a (as in (y + 1)*R) is a constant term.
func (r *odeReducer) scaleChecked(a linear, f Expr, at Pos) linear {
	if a.konst != nil && !isLit(a.konst, 0) {
		r.errorf(a.konstPos, "constant term %s: every term must contain a signal", Format(a.konst))
	}
	return scale(linear{terms: a.terms}, f)
}

func scale(a linear, f Expr) linear {
	r := linear{konstPos: a.konstPos}
	if a.konst != nil {
		r.konst = mul(f, a.konst)
	}
	if len(a.terms) > 0 {
		r.terms = make(map[sigKey]Expr, len(a.terms))
		for k, c := range a.terms {
			r.terms[k] = mul(f, c)
		}
	}
	return r
}

func sum(a, b linear, minus bool) linear {
	r := linear{terms: make(map[sigKey]Expr, len(a.terms)+len(b.terms))}
	for k, c := range a.terms {
		r.terms[k] = c
	}
	for k, c := range b.terms {
		if minus {
			c = neg(c)
		}
		if old, ok := r.terms[k]; ok {
			r.terms[k] = add(old, c)
		} else {
			r.terms[k] = c
		}
	}
	switch {
	case a.konst != nil && b.konst != nil:
		if minus {
			r.konst = sub(a.konst, b.konst)
		} else {
			r.konst = add(a.konst, b.konst)
		}
		r.konstPos = a.konstPos
	case a.konst != nil:
		r.konst, r.konstPos = a.konst, a.konstPos
	case b.konst != nil:
		r.konst, r.konstPos = b.konst, b.konstPos
		if minus {
			r.konst = neg(b.konst)
		}
	}
	return r
}

// signalList names the signals in the forms, for messages.
func signalList(ls ...linear) string {
	var names []string
	for _, l := range ls {
		for k := range l.terms {
			names = append(names, k.name+strings.Repeat("'", k.order))
		}
	}
	slices.Sort(names)
	names = slices.Compact(names)
	if len(names) == 0 {
		return "none"
	}
	return strings.Join(names, ", ")
}

// pickOutput chooses the output: the signal with the highest derivative
// order on the left; among equals, the one that does not appear on the
// right. Without derivatives on the left, the first signal there. ok is
// false when the choice is ambiguous (out then lists the rivals).
func pickOutput(occ []occurrence, input string, isSignal func(occurrence) bool) (out string, ok bool) {
	best := 0
	var rivals []string
	for _, o := range occ {
		if !o.left || o.name == input || !isSignal(o) {
			continue
		}
		switch {
		case o.order > best || rivals == nil:
			best, rivals = o.order, []string{o.name}
		case o.order == best && !slices.Contains(rivals, o.name):
			rivals = append(rivals, o.name)
		}
	}
	if len(rivals) == 0 {
		return "", true
	}
	if best == 0 || len(rivals) == 1 {
		return rivals[0], true
	}
	var leftOnly []string
	for _, r := range rivals {
		if appearsLeftOnly(occ, r) {
			leftOnly = append(leftOnly, r)
		}
	}
	if len(leftOnly) == 1 {
		return leftOnly[0], true
	}
	return strings.Join(rivals, " and "), false
}

// appearsLeftOnly reports whether name never appears on the right.
func appearsLeftOnly(occ []occurrence, name string) bool {
	for _, o := range occ {
		if o.name == name && !o.left {
			return false
		}
	}
	return true
}

// start is the position of the leftmost token of e (a Binary's own
// position is its operator's).
func start(e Expr) Pos {
	for {
		b, ok := e.(*Binary)
		if !ok {
			return e.Position()
		}
		e = b.X
	}
}
