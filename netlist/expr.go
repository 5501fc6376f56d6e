package netlist

import (
	"fmt"
	"math"
	"strings"
	"unicode"

	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// Expressions are compiled once into closures over a slot vector holding
// the values of parameters (top-level lets, block parameters and block
// lets, one slot per instance). Re-evaluating with other slot values is
// how Vary follows toleranced parameters without re-parsing.

// evalFn evaluates a compiled expression from parameter slots.
type evalFn func(slots []float64) float64

// dim is the statically inferred unit of an expression. known with unit ""
// means a plain number; !known means a compound or unknown unit that is
// not checked.
type dim struct {
	unit  string
	known bool
}

var (
	dimPlain   = dim{known: true}
	dimUnknown = dim{}
)

// compiled is a compiled expression.
type compiled struct {
	fn    evalFn
	d     dim
	konst bool    // fn ignores slots
	val   float64 // the value when konst
}

func konst(v float64, d dim) compiled {
	return compiled{fn: func([]float64) float64 { return v }, d: d, konst: true, val: v}
}

// varInfo is a parameter visible in a scope.
type varInfo struct {
	slot int
	d    dim
}

// lookuper resolves parameter names for the expression compiler.
type lookuper interface {
	lookup(name string) (varInfo, bool)
	visibleNames() []string
}

// reporter receives compile errors.
type reporter func(p lexer.Position, msg, hint string)

// exprCompiler compiles expressions in one scope.
type exprCompiler struct {
	sc     lookuper
	report reporter
}

// unaryFuncs are the one-argument functions; trig functions take radians.
var unaryFuncs = map[string]func(float64) float64{
	"sqrt": math.Sqrt, "exp": math.Exp, "ln": math.Log, "log10": math.Log10,
	"abs": math.Abs, "sin": math.Sin, "cos": math.Cos, "tan": math.Tan, "atan": math.Atan,
}

// FunctionNames lists the functions expressions may call.
func FunctionNames() []string {
	return []string{"abs", "atan", "cos", "exp", "ln", "log10", "max", "min", "sin", "sqrt", "tan"}
}

// reservedNames cannot be defined as parameters.
var reservedNames = map[string]bool{"pi": true, "fixed": true}

func (c *exprCompiler) expr(x *Expr) (compiled, bool) {
	acc, ok := c.term(x.Left)
	for _, r := range x.Rest {
		b, ok2 := c.term(r.Term)
		ok = ok && ok2
		if !ok {
			continue
		}
		if acc.d.known && b.d.known && acc.d.unit != "" && b.d.unit != "" && acc.d.unit != b.d.unit {
			c.report(r.Pos, fmt.Sprintf("cannot %s %s and %s", map[string]string{"+": "add", "-": "subtract"}[r.Op], acc.d.unit, b.d.unit), "")
			ok = false
			continue
		}
		d := acc.d
		switch {
		case !acc.d.known || !b.d.known:
			d = dimUnknown
		case acc.d.unit == "":
			d = b.d
		}
		acc = binary(acc, b, r.Op, d)
	}
	return acc, ok
}

func (c *exprCompiler) term(t *Term) (compiled, bool) {
	acc, ok := c.unary(t.Left)
	for _, r := range t.Rest {
		b, ok2 := c.unary(r.Unary)
		ok = ok && ok2
		if !ok {
			continue
		}
		d := dimUnknown
		switch {
		case r.Op == "*" && acc.d == dimPlain:
			d = b.d
		case b.d == dimPlain:
			d = acc.d
		}
		acc = binary(acc, b, r.Op, d)
	}
	return acc, ok
}

func (c *exprCompiler) unary(u *Unary) (compiled, bool) {
	if u.Neg != nil {
		a, ok := c.unary(u.Neg)
		if !ok {
			return a, false
		}
		if a.konst {
			return konst(-a.val, a.d), true
		}
		f := a.fn
		return compiled{fn: func(s []float64) float64 { return -f(s) }, d: a.d}, true
	}
	if u.Plus != nil {
		return c.unary(u.Plus)
	}
	base, ok := c.primary(u.Power.Base)
	if u.Power.Exp == nil || !ok {
		return base, ok
	}
	exp, ok := c.unary(u.Power.Exp)
	if !ok {
		return exp, false
	}
	d := dimUnknown
	if base.d == dimPlain && exp.d == dimPlain {
		d = dimPlain
	}
	return binary(base, exp, "^", d), true
}

// binary combines two compiled operands, folding constants.
func binary(a, b compiled, op string, d dim) compiled {
	var f func(x, y float64) float64
	switch op {
	case "+":
		f = func(x, y float64) float64 { return x + y }
	case "-":
		f = func(x, y float64) float64 { return x - y }
	case "*":
		f = func(x, y float64) float64 { return x * y }
	case "/":
		f = func(x, y float64) float64 { return x / y }
	default:
		f = math.Pow
	}
	if a.konst && b.konst {
		return konst(f(a.val, b.val), d)
	}
	fa, fb := a.fn, b.fn
	switch op {
	case "+":
		return compiled{fn: func(s []float64) float64 { return fa(s) + fb(s) }, d: d}
	case "-":
		return compiled{fn: func(s []float64) float64 { return fa(s) - fb(s) }, d: d}
	case "*":
		return compiled{fn: func(s []float64) float64 { return fa(s) * fb(s) }, d: d}
	case "/":
		return compiled{fn: func(s []float64) float64 { return fa(s) / fb(s) }, d: d}
	}
	return compiled{fn: func(s []float64) float64 { return f(fa(s), fb(s)) }, d: d}
}

func (c *exprCompiler) primary(p *Primary) (compiled, bool) {
	switch {
	case p.Ref != nil:
		return c.ref(p.Ref)
	case len(p.Group) == 1:
		return c.expr(p.Group[0])
	case len(p.Group) > 1:
		c.report(p.Pos, "unexpected list of values", "a list (c, d) is no value; the voltage of c with respect to d is v(c, d)")
		return compiled{}, false
	}
	// A value written SI style with a space ("10 kΩ") arrives as one
	// token (mergeSpacedUnits); the number is read without the blanks.
	num := p.Number
	if strings.IndexFunc(num, unicode.IsSpace) >= 0 {
		num = strings.Join(strings.Fields(num), "")
	}
	lit, err := syntax.ParseNumber(num)
	if err != nil {
		hint := ""
		if strings.HasSuffix(p.Number, "pi") {
			hint = "write " + strings.TrimSuffix(p.Number, "pi") + "*pi"
		}
		c.report(p.Pos, err.Error(), hint)
		return compiled{}, false
	}
	return konst(lit.Value, dim{unit: lit.Unit, known: true}), true
}

func (c *exprCompiler) ref(r *Ref) (compiled, bool) {
	if r.Open != "" {
		return c.call(r)
	}
	if v, ok := c.sc.lookup(r.Name); ok {
		slot := v.slot
		return compiled{fn: func(s []float64) float64 { return s[slot] }, d: v.d}, true
	}
	if r.Name == "pi" {
		return konst(math.Pi, dimPlain), true
	}
	if lit, ok := syntax.LeadingCode(r.Name); ok {
		return konst(lit.Value, dim{unit: lit.Unit, known: true}), true
	}
	c.report(r.Pos, fmt.Sprintf("undefined parameter %q", r.Name), suggest(r.Name, c.sc.visibleNames()))
	return compiled{}, false
}

func (c *exprCompiler) call(r *Ref) (compiled, bool) {
	if isControl(r) {
		c.report(r.Pos, fmt.Sprintf("a control %s( ) is not a value here", r.Name), ControlForms+"; nothing else takes a control")
		return compiled{}, false
	}
	args := make([]compiled, 0, len(r.Args))
	ok := true
	for _, a := range r.Args {
		v, ok2 := c.expr(a)
		ok = ok && ok2
		args = append(args, v)
	}
	if f, isUnary := unaryFuncs[r.Name]; isUnary {
		if len(args) != 1 {
			c.report(r.Pos, fmt.Sprintf("%s takes one argument, not %d", r.Name, len(args)), "")
			return compiled{}, false
		}
		if !ok {
			return compiled{}, false
		}
		a := args[0]
		d := dimUnknown
		switch r.Name {
		case "abs":
			d = a.d
		case "sin", "cos", "tan":
			if a.d.known && a.d.unit == UnitDegree {
				c.report(r.Pos, r.Name+" takes radians, not degrees", "multiply by pi/180")
				return compiled{}, false
			}
			d = dimPlain
		}
		if a.konst {
			return konst(f(a.val), d), true
		}
		fa := a.fn
		return compiled{fn: func(s []float64) float64 { return f(fa(s)) }, d: d}, true
	}
	if r.Name != "min" && r.Name != "max" {
		c.report(r.Pos, fmt.Sprintf("unknown function %q", r.Name), suggest(r.Name, FunctionNames()))
		return compiled{}, false
	}
	if len(args) < 2 {
		c.report(r.Pos, r.Name+" takes two or more arguments", "")
		return compiled{}, false
	}
	if !ok {
		return compiled{}, false
	}
	pick := math.Min
	if r.Name == "max" {
		pick = math.Max
	}
	acc := args[0]
	for _, b := range args[1:] {
		d := dimUnknown
		if acc.d == b.d {
			d = acc.d
		}
		acc = binaryFunc(acc, b, pick, d)
	}
	return acc, true
}

func binaryFunc(a, b compiled, f func(x, y float64) float64, d dim) compiled {
	if a.konst && b.konst {
		return konst(f(a.val, b.val), d)
	}
	fa, fb := a.fn, b.fn
	return compiled{fn: func(s []float64) float64 { return f(fa(s), fb(s)) }, d: d}
}

// noScope is the scope of a lone expression: no parameters.
type noScope struct{}

func (noScope) lookup(string) (varInfo, bool) { return varInfo{}, false }
func (noScope) visibleNames() []string        { return nil }

// maxExprBytes bounds the text EvalExpr accepts.
const maxExprBytes = 4096

// EvalExpr parses and evaluates a constant expression ("2*pi*1kHz",
// "sqrt(2)/2", "4k7") with no parameters, returning its SI value and the
// unit it was written in ("" when plain or compound). Errors are an
// ErrorList positioned in a pseudo-file named "expression".
func EvalExpr(text string) (float64, string, error) {
	f := newFile("expression", []byte(text))
	if len(text) > maxExprBytes {
		return 0, "", ErrorList{f.diagAt(0, SevError, fmt.Sprintf("expression longer than %d bytes", maxExprBytes), "")}
	}
	toks, lerr := lexDef.LexString("expression", text)
	var line []lexer.Token
	if lerr == nil {
		line, _ = lexer.ConsumeAll(toks)
	}
	if len(line) == 0 {
		line = []lexer.Token{lexer.EOFToken(lexer.Position{})}
	}
	if d := f.nestingDiag(line); d != nil {
		return 0, "", ErrorList{d}
	}
	x, err := exprParser.ParseString("expression", text)
	if err != nil {
		return 0, "", ErrorList{f.syntaxDiag(line, err)}
	}
	var diags ErrorList
	c := exprCompiler{sc: noScope{}, report: func(p lexer.Position, msg, hint string) {
		diags = append(diags, f.diag(p, SevError, msg, hint))
	}}
	v, ok := c.expr(x)
	if !ok {
		return 0, "", diags
	}
	return v.fn(nil), v.d.unit, nil
}
