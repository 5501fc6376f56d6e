package signal

import (
	"errors"
	"fmt"
	"strings"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// The grammar (EBNF):
//
//	sum     = [sign] product { sign product } .
//	sign    = "+" | "-" | "−" .
//	product = factor { ("*" | "·" | "/") factor } .
//	factor  = Number | Ident [ "(" sum ")" ] .
//
// Number is the number token every nodal grammar shares
// (syntax.NumberPattern: SI prefixes, IEC 60062 codes, attached units;
// deg, ° and rad mark a phase); Ident is a name (sin, cos, pi, π, t).
// The grammar has no powers and no parentheses other than a call's, so
// it keeps its own two levels rather than syntax.Sum. Meaning is checked
// after parsing, in build.go.

type sumAST struct {
	Lead  string     `parser:"@('+' | '-' | '−')?"`
	First *prodAST   `parser:"@@"`
	Rest  []*restAST `parser:"@@*"`
}

type restAST struct {
	Op   string   `parser:"@('+' | '-' | '−')"`
	Prod *prodAST `parser:"@@"`
}

type prodAST struct {
	Pos    lexer.Position
	EndPos lexer.Position
	First  *factorAST `parser:"@@"`
	Rest   []*mulAST  `parser:"@@*"`
}

type mulAST struct {
	Op     string     `parser:"@('*' | '·' | '/')"`
	Factor *factorAST `parser:"@@"`
}

type factorAST struct {
	Pos    lexer.Position
	Number *string `parser:"  @Number"`
	Name   string  `parser:"| @Ident"`
	Args   *sumAST `parser:"  ( '(' @@ ')' )?"`
}

var signalLexer = lexer.MustSimple([]lexer.SimpleRule{
	{Name: "Number", Pattern: syntax.NumberPattern},
	{Name: "Ident", Pattern: `[a-zA-Zπ_][a-zA-Z0-9_]*`},
	{Name: "Op", Pattern: `[-+*/()]|−|·`},
	{Name: "Whitespace", Pattern: `\s+`},
})

// parser is immutable after construction and safe for concurrent use.
var parser = participle.MustBuild[sumAST](
	participle.Lexer(signalLexer),
	participle.Elide("Whitespace"),
	participle.UseLookahead(2),
)

// Parse parses a drive-signal expression. name labels positions in errors
// (for example "--signal"). Errors are a syntax.ErrorList positioned as
// NAME:LINE:COL with the line and a caret; Parse never panics.
func Parse(name, src string) (*Signal, error) {
	text := syntax.NewText(name, []byte(src))
	if d := text.Admit("signal", MaxSourceBytes, signalLexer, "Whitespace"); d != nil {
		return nil, syntax.ErrorList{d}
	}
	ast, err := parser.ParseString(name, src)
	if err != nil {
		var pe participle.Error
		if errors.As(err, &pe) {
			return nil, syntax.ErrorList{text.Errorf(pe.Position().Offset, "%s", friendly(pe.Message()))}
		}
		return nil, syntax.ErrorList{text.Errorf(0, "%v", err)}
	}
	b := builder{text: text}
	return b.signal(ast)
}

// MaxSourceBytes is the longest signal text Parse accepts (4 KiB, far
// more than a sum of sinusoids written by hand).
const MaxSourceBytes = 4 << 10

// friendly replaces participle's grammar-node names in a message by words.
func friendly(msg string) string {
	const operand = "(expected a number, pi, t, sin(...) or cos(...))"
	msg = strings.Replace(msg, "(expected ProdAST RestAST*)", operand, 1)
	msg = strings.Replace(msg, "(expected ProdAST)", operand, 1)
	if rest, ok := strings.CutPrefix(msg, "lexer: invalid input text "); ok {
		// Name the character instead of the lexer's remainder of the line.
		r, _ := utf8.DecodeRuneInString(strings.Trim(rest, `"`))
		return fmt.Sprintf("unexpected character %q: a signal is a sum of A*sin(w*t + phi), A*cos(...) and constants", r)
	}
	if strings.HasPrefix(msg, "unexpected token") && !strings.Contains(msg, "(expected") {
		msg += " (expected an operator + - * / or the end)"
	}
	return msg
}

// number is a parsed numeric literal.
type number struct {
	value float64
	angle string // "", "deg" or "rad"
}

// number decodes a Number token with the number token every nodal grammar
// shares (syntax.ParseNumber: SI prefixes, IEC 60062 codes such as 1k5,
// attached units such as 1kHz), so a value reads the same here as in a
// circuit file. The angle units deg (or °) and rad mark a phase; other
// units document the value and do not change it.
func (b *builder) number(tok string, pos lexer.Position) (number, error) {
	n, err := syntax.ParseNumber(tok)
	if err != nil {
		hint := ""
		if suffix := strings.TrimLeft(tok, "0123456789."); strings.HasPrefix(suffix, "pi") || strings.HasPrefix(suffix, "π") || strings.HasPrefix(suffix, "t") || strings.HasPrefix(suffix, "sin") || strings.HasPrefix(suffix, "cos") {
			hint = " (write the multiplication with *)"
		}
		return number{}, b.errAt(pos, "number %v%s", err, hint)
	}
	switch n.Unit {
	case syntax.UnitDegree:
		return number{value: n.Value, angle: "deg"}, nil
	case syntax.UnitRadian:
		return number{value: n.Value, angle: "rad"}, nil
	}
	return number{value: n.Value}, nil
}
