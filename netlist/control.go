package netlist

import (
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// ControlForms are the four ways of writing a controlled source, for
// messages.
const ControlForms = "a controlled source is a gain times one control: " +
	"voltage source (p, n) 10*v(c, d), current source (a, b) 2mS*v(c), " +
	"voltage source (p, n) 1kΩ*i(Rs), current source (a, b) 4*i(Rref)"

// control is the one control term of a controlled source's value.
type control struct {
	ref   *Ref
	gain  *Expr      // the value with the control replaced by 1
	nodes []*NodeRef // v(c[, d]): the sensed node(s)
	part  string     // i(PART): the sensed part
}

// isControl reports whether r is a control call v(...) or i(...).
func isControl(r *Ref) bool {
	return r != nil && r.Open != "" && (r.Name == "v" || r.Name == "i")
}

// controlRefs returns every control call in x, in source order.
func controlRefs(x *Expr) []*Ref {
	var out []*Ref
	var sum func(*Expr)
	var unary func(*Unary)
	prod := func(p *Term) {
		unary(p.Left)
		for _, o := range p.Rest {
			unary(o.Unary)
		}
	}
	sum = func(x *Expr) {
		prod(x.Left)
		for _, o := range x.Rest {
			prod(o.Term)
		}
	}
	unary = func(u *Unary) {
		switch {
		case u.Neg != nil:
			unary(u.Neg)
		case u.Plus != nil:
			unary(u.Plus)
		case u.Power != nil:
			b := u.Power.Base
			if b.Ref != nil {
				if isControl(b.Ref) {
					out = append(out, b.Ref)
				}
				for _, a := range b.Ref.Args {
					sum(a)
				}
			}
			for _, g := range b.Group {
				sum(g)
			}
			if u.Power.Exp != nil {
				unary(u.Power.Exp)
			}
		}
	}
	sum(x)
	return out
}

// splitControl separates the value of a source into its gain and its one
// control. It returns nil, "" for a value without a control, or the
// position and message of what is wrong.
func splitControl(x *Expr) (*control, lexer.Position, string) {
	refs := controlRefs(x)
	if len(refs) == 0 {
		return nil, lexer.Position{}, ""
	}
	if len(refs) > 1 {
		return nil, refs[1].Pos, "a second control term"
	}
	ref := refs[0]
	if len(x.Rest) > 0 {
		return nil, x.Rest[0].Pos, "a control term cannot be added to anything"
	}
	p := x.Left
	gainProd := &Term{Pos: p.Pos, Left: p.Left, Rest: append([]*OpUnary(nil), p.Rest...)}
	found := false
	if u, ok := replaceControl(p.Left, ref); ok {
		gainProd.Left, found = u, true
	}
	for i, o := range p.Rest {
		if u, ok := replaceControl(o.Unary, ref); ok {
			if o.Op == "/" {
				return nil, ref.Pos, "a control cannot divide"
			}
			gainProd.Rest[i] = &OpUnary{Pos: o.Pos, Op: o.Op, Unary: u}
			found = true
		}
	}
	if !found {
		return nil, ref.Pos, "a control must be a factor of the value, not inside a function, a power or parentheses"
	}
	c := &control{ref: ref, gain: &Expr{Pos: x.Pos, Tokens: x.Tokens, Left: gainProd}}
	switch ref.Name {
	case "v":
		if len(ref.Args) < 1 || len(ref.Args) > 2 {
			return nil, ref.Pos, "v( ) takes one node or two: v(c) or v(c, d)"
		}
		for _, a := range ref.Args {
			n := nodeName(a)
			if n == "" {
				return nil, a.Pos, "v( ) takes node names"
			}
			c.nodes = append(c.nodes, &NodeRef{Pos: a.Pos, Name: n})
		}
	case "i":
		if len(ref.Args) != 1 || bareName(ref.Args[0]) == "" {
			return nil, ref.Pos, "i( ) takes the name of one part: i(Rs)"
		}
		c.part = bareName(ref.Args[0])
	}
	return c, lexer.Position{}, ""
}

// replaceControl returns a copy of u with the control ref replaced by the
// number 1, when u is the control itself, possibly negated.
func replaceControl(u *Unary, ref *Ref) (*Unary, bool) {
	switch {
	case u.Neg != nil:
		if in, ok := replaceControl(u.Neg, ref); ok {
			return &Unary{Pos: u.Pos, Neg: in}, true
		}
	case u.Plus != nil:
		if in, ok := replaceControl(u.Plus, ref); ok {
			return &Unary{Pos: u.Pos, Plus: in}, true
		}
	case u.Power != nil && u.Power.Exp == nil && u.Power.Base.Ref == ref:
		one := &Primary{Pos: ref.Pos, Number: "1"}
		return &Unary{Pos: u.Pos, Power: &Power{Pos: u.Power.Pos, Base: one}}, true
	}
	return nil, false
}

// nodeName returns the node named by x (an identifier or a non-negative
// integer), or "".
func nodeName(x *Expr) string {
	if n := bareName(x); n != "" {
		return n
	}
	if len(x.Rest) > 0 || len(x.Left.Rest) > 0 || x.Left.Left.Power == nil || x.Left.Left.Power.Exp != nil || !syntax.IsDigits(x.Left.Left.Power.Base.Number) {
		return ""
	}
	return x.Left.Left.Power.Base.Number
}
