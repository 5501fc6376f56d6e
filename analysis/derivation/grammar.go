package derivation

import (
	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// The participle grammar below is private: it is converted into the public
// AST (ast.go) by convert.go, so the grammar can change without touching
// the node set other packages walk.

// identRE is a (possibly dotted) name.
const identRE = `[A-Za-z_][A-Za-z0-9_]*(?:\.[A-Za-z_][A-Za-z0-9_]*)*`

// lex is the token set shared by both grammars. Order matters: the
// derivative forms must win over a plain name.
//
// Besides ASCII it reads every notation nodal prints (so a printed ODE or
// H(s) pastes back): the primes ′ ″ ‴ ⁗ (1 to 4 derivatives, also mixed
// with '), the order y⁽⁴⁾, a superscript power s² or s⁻³ (token Super),
// the product dot · and ×, the minus sign − (U+2212) and square brackets
// as parentheses. opMap turns · × − into their ASCII operators.
var lex = lexer.MustSimple([]lexer.SimpleRule{
	{Name: "Whitespace", Pattern: `[ \t\r\n]+`},
	{Name: "Leibniz", Pattern: `d(?:\^?[0-9]+)?[ \t]*` + identRE + `[ \t]*/[ \t]*dt(?:\^?[0-9]+)?\b`},
	{Name: "Primed", Pattern: identRE + `['′″‴⁗]+`},
	{Name: "ParenOrder", Pattern: identRE + `(?:\^\([0-9]+\)|⁽` + superDigits + `+⁾)`},
	{Name: "Super", Pattern: `[⁻⁺]?` + superDigits + `+`},
	{Name: "Number", Pattern: syntax.NumberPattern},
	{Name: "Ident", Pattern: identRE},
	{Name: "Op", Pattern: `[-+*/^()=\[\]·×−]`},
})

// superDigits is the character class of the superscript digits.
const superDigits = `[⁰¹²³⁴⁵⁶⁷⁸⁹]`

// opMap gives the printed operators · × (product) and − (minus) their
// ASCII meaning; positions stay those of the source characters.
func opMap(t lexer.Token) (lexer.Token, error) {
	switch t.Value {
	case "·", "×":
		t.Value = "*"
	case "−":
		t.Value = "-"
	}
	return t, nil
}

type gEquation struct {
	Pos   lexer.Position
	Left  *gExpr `parser:"@@"`
	Eq    bool   `parser:"( @'='"`
	Right *gExpr `parser:"  @@ )?"`
}

// The expression ladder (sum, product, sign, power) is the one the
// circuit language shares (syntax.Sum and its parts), over gPrimary.
type (
	gExpr  = syntax.Sum[gPrimary]
	gTerm  = syntax.Product[gPrimary]
	gUnary = syntax.Unary[gPrimary]
	gPower = syntax.Power[gPrimary]
)

type gPrimary struct {
	Pos     lexer.Position
	Number  string `parser:"( @Number"`
	Leibniz string `parser:"| @Leibniz"`
	Primed  string `parser:"| @Primed"`
	Paren   string `parser:"| @ParenOrder"`
	Ident   string `parser:"| @Ident"`
	Args    *gExpr `parser:"  ( '(' @@ ')' )?"`
	Group   *gExpr `parser:"| '(' @@ ')'"`
	Bracket *gExpr `parser:"| '[' @@ ']' )"`
	Sup     *gSup  `parser:"@@?"`
}

// gSup is a superscript power written after a primary (s², s⁻³).
type gSup struct {
	Pos  lexer.Position
	Text string `parser:"@Super"`
}

// parser parses either form; ParseODE requires the "=", ParseTF accepts an
// optional "H(s) =" prefix. It is built once and never mutated.
var parser = participle.MustBuild[gEquation](
	participle.Lexer(lex),
	participle.Map(opMap, "Op"),
	participle.Elide("Whitespace"),
)
