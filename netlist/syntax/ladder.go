package syntax

import "github.com/alecthomas/participle/v2/lexer"

// The expression precedence ladder shared by the circuit language and the
// derivation grammar, as participle grammar nodes generic in the primary
// P (the literals and names a grammar has, including its parenthesised
// group, which refers back to Sum[P]). From loosest to tightest:
//
//	Sum     = Product { ("+" | "-") Product } .
//	Product = Unary { ("*" | "/") Unary } .
//	Unary   = "-" Unary | "+" Unary | Power .
//	Power   = P [ "^" Unary ] .
//
// so ^ binds tighter than a sign and is right-associative (-2^2 = -4,
// 2^3^2 = 2^9), as in common mathematical practice. Every node records
// the lexer position of its first token; Sum also keeps its tokens, for
// spans. The drive-signal grammar is a smaller language (sums of
// products, no powers or groups) and keeps its own two-level grammar on
// the same number token.

// Sum is Left followed by `+`/`-` terms.
type Sum[P any] struct {
	Pos    lexer.Position
	Tokens []lexer.Token
	Left   *Product[P] `parser:"@@"`
	Rest   []*SumOp[P] `parser:"@@*"`
}

// SumOp is one `+ TERM` or `- TERM` of a sum.
type SumOp[P any] struct {
	Pos  lexer.Position
	Op   string      `parser:"@(\"+\" | \"-\")"`
	Term *Product[P] `parser:"@@"`
}

// Product is Left followed by `*`/`/` factors.
type Product[P any] struct {
	Pos  lexer.Position
	Left *Unary[P]       `parser:"@@"`
	Rest []*ProductOp[P] `parser:"@@*"`
}

// ProductOp is one `* FACTOR` or `/ FACTOR` of a product.
type ProductOp[P any] struct {
	Pos   lexer.Position
	Op    string    `parser:"@(\"*\" | \"/\")"`
	Unary *Unary[P] `parser:"@@"`
}

// Unary is a negation (Neg), a unary plus (Plus, which changes nothing)
// or a power; exactly one field is set.
type Unary[P any] struct {
	Pos   lexer.Position
	Neg   *Unary[P] `parser:"  \"-\" @@"`
	Plus  *Unary[P] `parser:"| \"+\" @@"`
	Power *Power[P] `parser:"| @@"`
}

// Power is Base [^ Exp].
type Power[P any] struct {
	Pos  lexer.Position
	Base *P        `parser:"@@"`
	Exp  *Unary[P] `parser:"(\"^\" @@)?"`
}
