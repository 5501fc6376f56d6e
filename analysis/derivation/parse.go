package derivation

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist"
)

// ParseODE parses a hand-written ODE such as `R1*C1*y' + y = u`. name
// labels positions in errors (for example "ode"). Errors are a
// netlist.ErrorList.
func ParseODE(name, src string) (*Equation, error) {
	g, err := parseGrammar(name, src)
	if err != nil {
		return nil, err
	}
	c := converter{name: name, src: src}
	if !g.Eq {
		c.errorf(endPos(name, src), `expected "=": an equation has a left and a right side`)
		return nil, c.errs
	}
	eq := &Equation{At: c.pos(g.Pos), Left: c.expr(g.Left), Right: c.expr(g.Right), Src: src}
	if err := c.errs.Err(); err != nil {
		return nil, err
	}
	return eq, nil
}

// ParseTF parses a transfer function in s such as `1/(1 + s*R1*C1)`,
// optionally written `H(s) = ...`. Derivative notations are rejected.
func ParseTF(name, src string) (*TF, error) {
	g, err := parseGrammar(name, src)
	if err != nil {
		return nil, err
	}
	c := converter{name: name, src: src, inS: true}
	body := g.Left
	if g.Eq {
		if !isCallOfS(g.Left) {
			c.errorf(c.pos(g.Left.Pos), `the left of "=" must name the function of s, as in H(s) = ...`)
			return nil, c.errs
		}
		body = g.Right
	}
	tf := &TF{At: c.pos(body.Pos), Expr: c.expr(body), Src: src}
	Walk(tf, func(n Node) bool {
		if d, ok := n.(*Deriv); ok {
			c.errorf(d.At, "derivative of %s in a transfer function: write it in s (s·Y for y')", d.Name)
		}
		return true
	})
	if err := c.errs.Err(); err != nil {
		return nil, err
	}
	return tf, nil
}

// isCallOfS reports whether e is exactly NAME(s).
func isCallOfS(e *gExpr) bool {
	if len(e.Rest) > 0 || len(e.Head.Rest) > 0 || e.Head.Head.Power == nil || e.Head.Head.Power.Tail != nil {
		return false
	}
	p := e.Head.Head.Power.Base
	if p.Ident == "" || p.Args == nil || len(p.Args.Rest) > 0 || len(p.Args.Head.Rest) > 0 {
		return false
	}
	a := p.Args.Head.Head.Power
	return a != nil && a.Tail == nil && a.Base.Ident == "s" && a.Base.Args == nil
}

// parseGrammar runs participle and turns its errors into positioned
// diagnostics with messages written for engineers.
func parseGrammar(name, src string) (*gEquation, error) {
	if strings.TrimSpace(src) == "" {
		return nil, netlist.ErrorList{diag(name, src, Pos{File: name, Line: 1, Col: 1}, "empty expression")}
	}
	if len(src) > MaxSourceBytes {
		return nil, netlist.ErrorList{diagf(name, src, Pos{File: name, Line: 1, Col: 1}, "expression is %d bytes; at most %d are accepted", len(src), MaxSourceBytes)}
	}
	if d := nestingDiag(name, src); d != nil {
		return nil, netlist.ErrorList{d}
	}
	g, err := parser.ParseString(name, src)
	if err == nil {
		return g, nil
	}
	var perr participle.Error
	if !errors.As(err, &perr) {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	lp := perr.Position()
	pos := Pos{File: name, Line: lp.Line, Col: lp.Column, Offset: lp.Offset}
	if lp.Line == 0 {
		pos = endPos(name, src)
	}
	var msg string
	var lerr *lexer.Error
	var uerr *participle.UnexpectedTokenError
	switch {
	case errors.As(err, &lerr):
		r := []rune(src[min(lp.Offset, len(src)):])
		if len(r) > 0 {
			msg = fmt.Sprintf("unexpected character %q", r[0])
		} else {
			msg = "unexpected end of input"
		}
	case errors.As(err, &uerr):
		pos = Pos{File: name, Line: uerr.Unexpected.Pos.Line, Col: uerr.Unexpected.Pos.Column, Offset: uerr.Unexpected.Pos.Offset}
		if uerr.Unexpected.EOF() {
			pos = endPos(name, src)
		}
		msg = unexpectedMessage(src, pos.Offset, uerr.Unexpected)
	default:
		msg = perr.Message()
	}
	return nil, netlist.ErrorList{diag(name, src, pos, msg)}
}

// MaxSourceBytes is the longest text ParseODE and ParseTF accept (64 KiB,
// far more than any hand derivation).
const MaxSourceBytes = 64 << 10

// nestingDiag reports text nesting deeper than netlist.MaxNesting at the
// token that goes too deep, or returns nil. Text that does not lex is left
// to the parser, which reports it.
func nestingDiag(name, src string) *netlist.Diagnostic {
	tok, deep := netlist.TooDeepText(lex, name, src, "Whitespace")
	if !deep {
		return nil
	}
	p := tok.Pos
	return diagf(name, src, Pos{File: name, Line: p.Line, Col: p.Column, Offset: p.Offset}, "expression nested too deeply (more than %d levels of parentheses, signs and powers)", netlist.MaxNesting)
}

// unexpectedMessage explains an unexpected token at byte offset off.
func unexpectedMessage(src string, off int, tok lexer.Token) string {
	prev := strings.TrimRight(src[:min(off, len(src))], " \t\r\n")
	var last byte
	if prev != "" {
		last = prev[len(prev)-1]
	}
	what := fmt.Sprintf("%q", tok.Value)
	if tok.EOF() {
		what = "the end"
	}
	open := strings.Count(prev, "(") - strings.Count(prev, ")")
	switch {
	case last != 0 && strings.IndexByte("+-*/^(=", last) >= 0:
		return fmt.Sprintf("expected a term after %q", string(last))
	case prev == "":
		return fmt.Sprintf("expected a term, found %s", what)
	case tok.EOF() && open > 0:
		return `missing ")"`
	case tok.Value == ")":
		return `unmatched ")"`
	case tok.Value == "=":
		return `only one "=" is allowed`
	case tok.Value == "(":
		return `expected an operator before "(" (write * between factors)`
	default:
		return fmt.Sprintf("expected an operator before %s (write * between factors)", what)
	}
}

// endPos is the position just past the last character of src.
func endPos(name, src string) Pos {
	p := lexer.Position{Line: 1, Column: 1}
	p.Advance(src)
	return Pos{File: name, Line: p.Line, Col: p.Column, Offset: p.Offset}
}

// diag builds a diagnostic with the source line for the caret display.
func diag(name, src string, pos Pos, msg string) *netlist.Diagnostic {
	line := ""
	lines := strings.Split(src, "\n")
	if pos.Line >= 1 && pos.Line <= len(lines) {
		line = strings.TrimRight(lines[pos.Line-1], "\r")
	}
	pos.File = name
	return &netlist.Diagnostic{Pos: pos, Msg: msg, Line: line}
}

// diagf is diag with a formatted message.
func diagf(name, src string, pos Pos, format string, args ...any) *netlist.Diagnostic {
	return diag(name, src, pos, fmt.Sprintf(format, args...))
}

// converter turns the participle tree into the public AST, collecting
// errors for tokens whose content is invalid (bad number suffix, unknown
// function, mismatched derivative orders).
type converter struct {
	name, src string
	// inS is set for a transfer function, where NAME^(n) is a power.
	inS  bool
	errs netlist.ErrorList
}

func (c *converter) pos(p lexer.Position) Pos {
	return Pos{File: c.name, Line: p.Line, Col: p.Column, Offset: p.Offset}
}

func (c *converter) errorf(p Pos, format string, args ...any) {
	c.errs = append(c.errs, diagf(c.name, c.src, p, format, args...))
}

func (c *converter) expr(g *gExpr) Expr {
	x := c.term(g.Head)
	for _, r := range g.Rest {
		x = &Binary{At: c.pos(r.Pos), Op: r.Op[0], X: x, Y: c.term(r.Term)}
	}
	return x
}

func (c *converter) term(g *gTerm) Expr {
	x := c.unary(g.Head)
	for _, r := range g.Rest {
		x = &Binary{At: c.pos(r.Pos), Op: r.Op[0], X: x, Y: c.unary(r.Fact)}
	}
	return x
}

func (c *converter) unary(g *gUnary) Expr {
	if g.Power != nil {
		return c.power(g.Power)
	}
	x := c.unary(g.Inner)
	if g.Op == "+" {
		return x
	}
	return &Unary{At: c.pos(g.Pos), Op: '-', X: x}
}

func (c *converter) power(g *gPower) Expr {
	x := c.primary(g.Base)
	if g.Tail == nil {
		return x
	}
	return &Binary{At: c.pos(g.Tail.Pos), Op: '^', X: x, Y: c.unary(g.Tail.Exp)}
}

func (c *converter) primary(g *gPrimary) Expr {
	at := c.pos(g.Pos)
	switch {
	case g.Group != nil:
		return c.expr(g.Group)
	case g.Number != "":
		v, err := parseNumber(g.Number)
		if err != nil {
			c.errorf(at, "%v", err)
		}
		return &Number{At: at, Value: v, Text: g.Number}
	case g.Primed != "":
		n := strings.IndexByte(g.Primed, '\'')
		return &Deriv{At: at, Name: g.Primed[:n], Order: len(g.Primed) - n}
	case g.Paren != "":
		n := strings.IndexByte(g.Paren, '^')
		k, err := strconv.Atoi(g.Paren[n+2 : len(g.Paren)-1])
		if err != nil || k > maxOrder {
			c.errorf(at, "derivative order in %q is too large (at most %d)", g.Paren, maxOrder)
			k = 1
		}
		if c.inS {
			caret := at
			caret.Col += n
			caret.Offset += n
			return &Binary{At: caret, Op: '^', X: &Name{At: at, Name: g.Paren[:n]}, Y: &Number{Value: float64(k), Text: strconv.Itoa(k)}}
		}
		if k == 0 {
			return &Name{At: at, Name: g.Paren[:n]}
		}
		return &Deriv{At: at, Name: g.Paren[:n], Order: k}
	case g.Leibniz != "":
		return c.leibniz(at, g.Leibniz)
	}
	if g.Args != nil {
		arg := c.expr(g.Args)
		if g.Ident != "sqrt" {
			c.errorf(at, "%s is not a function: the only function is sqrt (write %s*(...) for a product)", g.Ident, g.Ident)
		}
		return &Call{At: at, Fun: g.Ident, Arg: arg}
	}
	if g.Ident == "pi" {
		return &Number{At: at, Value: math.Pi, Text: "pi"}
	}
	return &Name{At: at, Name: g.Ident}
}

// maxOrder bounds derivative orders and integer powers of s; a circuit of
// higher order is far outside what a hand derivation holds.
const maxOrder = 64

// leibniz decodes d[^]Ny/dt[^]N.
func (c *converter) leibniz(at Pos, tok string) Expr {
	slash := strings.IndexByte(tok, '/')
	top := strings.TrimSpace(tok[1:slash])
	bottom := strings.TrimSpace(tok[slash+1:])[2:] // after "dt"
	order := func(s string) (int, string) {
		s = strings.TrimPrefix(s, "^")
		i := 0
		for i < len(s) && s[i] >= '0' && s[i] <= '9' {
			i++
		}
		if i == 0 {
			return 1, s
		}
		k, err := strconv.Atoi(s[:i])
		if err != nil || k > maxOrder {
			k = maxOrder + 1
		}
		return k, strings.TrimSpace(s[i:])
	}
	kTop, name := order(top)
	kBottom, _ := order(bottom)
	if kTop != kBottom {
		c.errorf(at, "derivative %q has order %d above and %d below", tok, kTop, kBottom)
	} else if kTop > maxOrder || kTop == 0 {
		c.errorf(at, "derivative order in %q must be between 1 and %d", tok, maxOrder)
	}
	return &Deriv{At: at, Name: name, Order: max(kTop, 1)}
}
