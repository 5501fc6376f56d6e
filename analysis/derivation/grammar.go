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
var lex = lexer.MustSimple([]lexer.SimpleRule{
	{Name: "Whitespace", Pattern: `[ \t\r\n]+`},
	{Name: "Leibniz", Pattern: `d(?:\^?[0-9]+)?[ \t]*` + identRE + `[ \t]*/[ \t]*dt(?:\^?[0-9]+)?\b`},
	{Name: "Primed", Pattern: identRE + `'+`},
	{Name: "ParenOrder", Pattern: identRE + `\^\([0-9]+\)`},
	{Name: "Number", Pattern: syntax.NumberPattern},
	{Name: "Ident", Pattern: identRE},
	{Name: "Op", Pattern: `[-+*/^()=]`},
})

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
	Number  string `parser:"  @Number"`
	Leibniz string `parser:"| @Leibniz"`
	Primed  string `parser:"| @Primed"`
	Paren   string `parser:"| @ParenOrder"`
	Ident   string `parser:"| @Ident"`
	Args    *gExpr `parser:"  ( '(' @@ ')' )?"`
	Group   *gExpr `parser:"| '(' @@ ')'"`
}

// parser parses either form; ParseODE requires the "=", ParseTF accepts an
// optional "H(s) =" prefix. It is built once and never mutated.
var parser = participle.MustBuild[gEquation](
	participle.Lexer(lex),
	participle.Elide("Whitespace"),
)
