package derivation

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/big"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// ParseODE parses a hand-written ODE such as `R1*C1*y' + y = u`. name
// labels positions in errors (for example "ode"). Errors are a
// syntax.ErrorList.
func ParseODE(name, src string) (*Equation, error) {
	g, err := parseGrammar(name, src)
	if err != nil {
		return nil, err
	}
	c := converter{text: syntax.NewText(name, []byte(src))}
	if !g.Eq {
		c.errorf(c.text.End(), `expected "=": an equation has a left and a right side`)
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
	c := converter{text: syntax.NewText(name, []byte(src)), inS: true}
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
	if len(e.Rest) > 0 || len(e.Left.Rest) > 0 || e.Left.Left.Power == nil || e.Left.Left.Power.Exp != nil {
		return false
	}
	p := e.Left.Left.Power.Base
	if p.Ident == "" || p.Args == nil || len(p.Args.Rest) > 0 || len(p.Args.Left.Rest) > 0 {
		return false
	}
	a := p.Args.Left.Left.Power
	return a != nil && a.Exp == nil && a.Base.Ident == "s" && a.Base.Args == nil && a.Base.Sup == nil && p.Sup == nil
}

// parseGrammar runs participle and turns its errors into positioned
// diagnostics with messages written for engineers.
func parseGrammar(name, src string) (*gEquation, error) {
	text := syntax.NewText(name, []byte(src))
	if strings.TrimSpace(src) == "" {
		return nil, syntax.ErrorList{text.Errorf(0, "empty expression")}
	}
	if d := text.Admit("expression", MaxSourceBytes, lex, "Whitespace"); d != nil {
		return nil, syntax.ErrorList{d}
	}
	g, err := parser.ParseString(name, src)
	if err == nil {
		return g, nil
	}
	var perr participle.Error
	if !errors.As(err, &perr) {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	off := perr.Position().Offset
	if perr.Position().Line == 0 {
		off = len(src)
	}
	var msg string
	var lerr *lexer.Error
	var uerr *participle.UnexpectedTokenError
	switch {
	case errors.As(err, &lerr):
		r := []rune(src[min(off, len(src)):])
		if len(r) > 0 {
			msg = fmt.Sprintf("unexpected character %q", r[0])
		} else {
			msg = "unexpected end of input"
		}
	case errors.As(err, &uerr):
		off = uerr.Unexpected.Pos.Offset
		if uerr.Unexpected.EOF() {
			off = len(src)
		}
		msg = unexpectedMessage(src, off, uerr.Unexpected)
	default:
		msg = perr.Message()
	}
	return nil, syntax.ErrorList{text.Errorf(off, "%s", msg)}
}

// MaxSourceBytes is the longest text ParseODE and ParseTF accept (64 KiB,
// far more than any hand derivation).
const MaxSourceBytes = 64 << 10

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

// diagf builds a diagnostic at pos in the text src named name, with the
// source line for the caret display.
func diagf(name, src string, pos Pos, format string, args ...any) *syntax.Diagnostic {
	return syntax.NewText(name, []byte(src)).Errorf(pos.Offset, format, args...)
}

// converter turns the participle tree into the public AST, collecting
// errors for tokens whose content is invalid (bad number suffix, unknown
// function, mismatched derivative orders).
type converter struct {
	text *syntax.Text
	// inS is set for a transfer function, where NAME^(n) is a power.
	inS  bool
	errs syntax.ErrorList
}

func (c *converter) pos(p lexer.Position) Pos { return c.text.At(p) }

func (c *converter) errorf(p Pos, format string, args ...any) {
	c.errs = append(c.errs, c.text.Errorf(p.Offset, format, args...))
}

func (c *converter) expr(g *gExpr) Expr {
	x := c.term(g.Left)
	for _, r := range g.Rest {
		x = &Binary{At: c.pos(r.Pos), Op: r.Op[0], X: x, Y: c.term(r.Term)}
	}
	return x
}

func (c *converter) term(g *gTerm) Expr {
	x := c.unary(g.Left)
	for _, r := range g.Rest {
		x = &Binary{At: c.pos(r.Pos), Op: r.Op[0], X: x, Y: c.unary(r.Unary)}
	}
	return x
}

func (c *converter) unary(g *gUnary) Expr {
	switch {
	case g.Power != nil:
		return c.power(g.Power)
	case g.Plus != nil:
		return c.unary(g.Plus)
	}
	return &Unary{At: c.pos(g.Pos), Op: '-', X: c.unary(g.Neg)}
}

func (c *converter) power(g *gPower) Expr {
	x := c.primary(g.Base)
	if g.Exp == nil {
		return x
	}
	// The "^" is the last one before the exponent (only blanks between).
	caret := bytes.LastIndexByte(c.text.Source[:g.Exp.Pos.Offset], '^')
	return &Binary{At: c.text.Pos(caret), Op: '^', X: x, Y: c.unary(g.Exp)}
}

func (c *converter) primary(g *gPrimary) Expr {
	x := c.atom(g)
	if g.Sup == nil {
		return x
	}
	at := c.pos(g.Sup.Pos)
	k, ok := superscriptInt(g.Sup.Text)
	if !ok {
		c.errorf(at, "the power %q is too large (at most %d)", g.Sup.Text, maxOrder)
		k = 1
	}
	return &Binary{At: at, Op: '^', X: x, Y: intLit(k, strconv.Itoa(k))}
}

// intLit is the exact integer k as a literal spelt text.
func intLit(k int, text string) *Number {
	return &Number{Value: float64(k), Text: text, Exact: new(big.Rat).SetInt64(int64(k))}
}

// superscriptInt decodes a superscript integer such as ⁻³ or ⁴⁵; false
// when its magnitude exceeds maxOrder.
func superscriptInt(s string) (int, bool) {
	k, sign := 0, 1
	for _, r := range s {
		switch r {
		case '⁻':
			sign = -1
		case '⁺':
		default:
			d := slices.Index([]rune("⁰¹²³⁴⁵⁶⁷⁸⁹"), r)
			if d < 0 {
				return 0, false
			}
			k = 10*k + d
			if k > maxOrder {
				return 0, false
			}
		}
	}
	return sign * k, true
}

// primeOrder is the derivative order of a run of primes: ' and ′ count
// 1, ″ 2, ‴ 3 and ⁗ 4.
func primeOrder(s string) int {
	n := 0
	for _, r := range s {
		switch r {
		case '″':
			n += 2
		case '‴':
			n += 3
		case '⁗':
			n += 4
		default:
			n++
		}
	}
	return n
}

func (c *converter) atom(g *gPrimary) Expr {
	at := c.pos(g.Pos)
	switch {
	case g.Group != nil:
		return c.expr(g.Group)
	case g.Bracket != nil:
		return c.expr(g.Bracket)
	case g.Number != "":
		v, exact, tol, err := parseNumber(g.Number, c.inS)
		if err != nil {
			c.errorf(at, "%v", err)
		}
		return &Number{At: at, Value: v, Text: g.Number, Exact: exact, Tol: tol}
	case g.Primed != "":
		n := strings.IndexAny(g.Primed, "'′″‴⁗")
		return &Deriv{At: at, Name: g.Primed[:n], Order: primeOrder(g.Primed[n:])}
	case g.Paren != "":
		return c.parenOrder(at, g.Paren)
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

// parenOrder decodes NAME^(k) or NAME⁽ᵏ⁾: a derivative order in an ODE, a
// power in a transfer function.
func (c *converter) parenOrder(at Pos, tok string) Expr {
	n := strings.IndexAny(tok, "^⁽")
	name := tok[:n]
	var k int
	var err error
	if tok[n] == '^' {
		k, err = strconv.Atoi(tok[n+2 : len(tok)-1])
	} else {
		var ok bool
		if k, ok = superscriptInt(strings.TrimSuffix(tok[n+len("⁽"):], "⁾")); !ok {
			err = strconv.ErrRange
		}
	}
	if err != nil || k > maxOrder {
		c.errorf(at, "derivative order in %q is too large (at most %d)", tok, maxOrder)
		k = 1
	}
	if c.inS {
		caret := at
		caret.Col += utf8.RuneCountInString(name)
		caret.Offset += n
		return &Binary{At: caret, Op: '^', X: &Name{At: at, Name: name}, Y: intLit(k, strconv.Itoa(k))}
	}
	if k == 0 {
		return &Name{At: at, Name: name}
	}
	return &Deriv{At: at, Name: name, Order: k}
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
