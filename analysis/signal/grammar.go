package signal

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist"
)

const piValue = math.Pi

// The grammar (EBNF):
//
//	sum     = [sign] product { sign product } .
//	sign    = "+" | "-" | "−" .
//	product = factor { ("*" | "·" | "/") factor } .
//	factor  = Number | Ident [ "(" sum ")" ] .
//
// Number is a decimal with optional exponent and an optional suffix of
// letters (an SI prefix, deg, ° or rad); Ident is a name (sin, cos, pi, π,
// t). Meaning is checked after parsing, in build.go.

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
	{Name: "Number", Pattern: `(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?[a-zA-Zµ°]*`},
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

// Parse parses a drive-signal expression. Errors are *Error values
// positioned as "signal:LINE:COL: ..."; Parse never panics.
func Parse(src string) (*Signal, error) {
	if !utf8.ValidString(src) {
		return nil, &Error{Pos: Position{Line: 1, Column: 1}, Msg: "signal is not valid UTF-8"}
	}
	if len(src) > MaxSourceBytes {
		return nil, &Error{Pos: Position{Line: 1, Column: 1}, Msg: fmt.Sprintf("signal is %d bytes; at most %d are accepted", len(src), MaxSourceBytes)}
	}
	if e := nestingError(src); e != nil {
		return nil, e
	}
	ast, err := parser.ParseString("signal", src)
	if err != nil {
		var pe participle.Error
		if errors.As(err, &pe) {
			return nil, &Error{Pos: toPosition(pe.Position()), Msg: friendly(pe.Message())}
		}
		return nil, &Error{Pos: Position{Line: 1, Column: 1}, Msg: err.Error()}
	}
	b := builder{src: src}
	return b.signal(ast)
}

// MaxSourceBytes is the longest signal text Parse accepts (4 KiB, far
// more than a sum of sinusoids written by hand).
const MaxSourceBytes = 4 << 10

// nestingError reports text nesting deeper than netlist.MaxNesting at the
// token that goes too deep, or returns nil. Text that does not lex is left
// to the parser, which reports it.
func nestingError(src string) *Error {
	tok, deep := netlist.TooDeepText(signalLexer, "signal", src, "Whitespace")
	if !deep {
		return nil
	}
	return &Error{Pos: toPosition(tok.Pos), Msg: fmt.Sprintf("signal nested too deeply (more than %d levels of parentheses and signs)", netlist.MaxNesting)}
}

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

func toPosition(p lexer.Position) Position {
	return Position{Offset: p.Offset, Line: p.Line, Column: p.Column}
}

// number is a parsed numeric literal.
type number struct {
	value float64
	angle string // "", "deg" or "rad"
}

// parseNumber splits a Number token into digits and suffix and applies it.
func parseNumber(tok string, pos lexer.Position) (number, error) {
	i := 0
	for i < len(tok) {
		c := tok[i]
		if c >= '0' && c <= '9' || c == '.' {
			i++
			continue
		}
		if (c == 'e' || c == 'E') && i+1 < len(tok) {
			j := i + 1
			if tok[j] == '+' || tok[j] == '-' {
				j++
			}
			if j < len(tok) && tok[j] >= '0' && tok[j] <= '9' {
				i = j
				continue
			}
		}
		break
	}
	digits, suffix := tok[:i], tok[i:]
	v, err := strconv.ParseFloat(digits, 64)
	if err != nil || math.IsInf(v, 0) {
		return number{}, &Error{Pos: toPosition(pos), Msg: fmt.Sprintf("number %q out of range", tok)}
	}
	n := number{value: v}
	switch {
	case suffix == "":
	case suffix == "deg" || suffix == "°":
		n.angle = "deg"
	case suffix == "rad":
		n.angle = "rad"
	default:
		if scale, ok := netlist.PrefixScale(suffix); ok {
			n.value *= scale
			break
		}
		hint := ""
		if strings.HasPrefix(suffix, "pi") || strings.HasPrefix(suffix, "t") || strings.HasPrefix(suffix, "sin") || strings.HasPrefix(suffix, "cos") {
			hint = " (write the multiplication with *)"
		}
		return number{}, &Error{Pos: toPosition(pos), Msg: fmt.Sprintf("unknown suffix %q on %q: expected an SI prefix (T G M k m u n p f), deg or rad%s", suffix, tok, hint)}
	}
	return n, nil
}
