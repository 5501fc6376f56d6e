package netlist

import (
	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// The syntax tree of a circuit file. Every node carries the lexer position
// of its first token (Pos); an expression and a require statement also
// keep Tokens, cut after parsing to their last significant token
// (compactTokens), so diagnostics and spans can point back into the source;
// File.Position turns a lexer position into a Pos with a rune column.

// lexRules are the token rules of circuit files, in their reading
// order: a character starts the token of the first rule that matches
// there. Newlines separate statements; Space and Comment are elided; Bad
// catches any other character so that lexing never fails and the parser
// reports it with its position.
var lexRules = []lexer.SimpleRule{
	{Name: "Comment", Pattern: `#[^\n]*`},
	{Name: "Newline", Pattern: `\n`},
	{Name: "Space", Pattern: `[ \t\r\f\v\x{FEFF}]+`},
	{Name: "String", Pattern: `"(\\.|[^"\\\n])*"`},
	{Name: "PlusMinus", Pattern: `±|\+-`},
	{Name: "Range", Pattern: `\.\.`},
	{Name: "Value", Pattern: syntax.NumberPattern},
	{Name: "Ident", Pattern: `[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_0-9]+)*`},
	{Name: "Punct", Pattern: `[-+*/^(),:=@]`},
	{Name: "Bad", Pattern: `.`},
}

// lexTryOrder is the order in which lexDef tries lexRules (indexes into
// it), the most frequent tokens of a circuit line first: participle's
// lexer tries one regular expression per rule until one matches, so the
// order is most of the cost of lexing. It tokenises exactly as the reading
// order does because two rules change places only when no character can
// start both (Ident [A-Za-z_], Space, Punct, Comment #, String ", Newline
// are pairwise disjoint); the rules that share a first character keep
// their order: PlusMinus before Punct ("+"), Range before Value ("."),
// Bad last. TestLexTryOrder checks it on the corpus and on random text.
var lexTryOrder = []int{7, 2, 4, 8, 5, 6, 0, 3, 1, 9}

// lexDef tokenises circuit files: lexRules tried in lexTryOrder.
var lexDef = lexer.MustSimple(reorderRules(lexRules, lexTryOrder))

// reorderRules returns rules in the given order of their indexes.
func reorderRules(rules []lexer.SimpleRule, order []int) []lexer.SimpleRule {
	out := make([]lexer.SimpleRule, len(order))
	for i, j := range order {
		out[i] = rules[j]
	}
	return out
}

// stmtParser parses one statement (one line of the file).
var stmtParser = participle.MustBuild[Stmt](
	participle.Lexer(lexDef),
	participle.Elide("Space", "Comment"),
	participle.UseLookahead(4),
)

// exprParser parses a lone expression (for FuzzExpr and ParseExpr).
var exprParser = participle.MustBuild[Expr](
	participle.Lexer(lexDef),
	participle.Elide("Space", "Comment"),
	participle.UseLookahead(4),
)

// File is a parsed circuit file.
type File struct {
	Name   string  // file name as given to Parse
	Source []byte  // the source text
	Stmts  []*Stmt // top-level statements in order; a block statement holds its body

	text *syntax.Text // positions and source lines of diagnostics

	// Load's parse (parseFile with deferring) leaves Stmts nil and holds
	// the top-level statements here instead, element statements deferred
	// (see stmtEntry); str is Source as the string their tokens are
	// pieces of.
	deferring bool
	entries   []stmtEntry
	str       string
	sigBuf    []lexer.Token // scratch of deferredStmt.build
	scratch   map[*shapeTemplate]*scratchTree
}

// Stmt is one statement: exactly one of its pointer fields is set.
type Stmt struct {
	Pos      lexer.Position
	Title    *TitleStmt    `parser:"  @@"`
	Let      *LetStmt      `parser:"| @@"`
	Block    *BlockStmt    `parser:"| @@"`
	End      *EndStmt      `parser:"| @@"`
	Require  *RequireStmt  `parser:"| @@"`
	Response *ResponseStmt `parser:"| @@"`
	Element  *ElementStmt  `parser:"| @@"`
}

// TitleStmt is `title "text"`; Text is the quoted string as written.
type TitleStmt struct {
	Pos  lexer.Position
	Text string `parser:"\"title\" @String"`
}

// LetStmt is `let NAME = EXPR [tolerance]`; Items may hold a tolerance
// (`±5%`, with a trailing `normal` for a normal spread).
type LetStmt struct {
	Pos   lexer.Position
	Name  string  `parser:"\"let\" @Ident \"=\""`
	Value *Expr   `parser:"@@"`
	Items []*Item `parser:"@@*"`
}

// BlockStmt is the header `block NAME (PORTS) [NAME=DEFAULT ...]`. Body
// holds the statements up to the matching `end` (filled by Parse).
type BlockStmt struct {
	Pos      lexer.Position
	Name     string     `parser:"\"block\" @Ident"`
	Ports    []*NodeRef `parser:"\"(\" (@@ (\",\" @@)*)? \")\""`
	Defaults []*Option  `parser:"@@*"`

	Body   []*Stmt
	EndPos lexer.Position // position of the closing `parser:"end"`
}

// EndStmt closes a block.
type EndStmt struct {
	Pos lexer.Position
	Kw  string `parser:"@\"end\""`
}

// RequireStmt is `require METRIC[@FREQ|@PART] within LO..HI | below HI |
// above LO`, or a metric that takes no limit (`require stable`).
type RequireStmt struct {
	Pos    lexer.Position
	Tokens []lexer.Token
	Metric *NameRef `parser:"\"require\" @@"`
	AtPart *NameRef `parser:"(\"@\" (@@"`
	At     *Limit   `parser:"| @@"`
	AtHi   *Limit   `parser:"  (Range @@)?))?"` // the upper end of a band: noise_rms@20Hz..20kHz
	Op     string   `parser:"(@(\"within\" | \"below\" | \"above\")"`
	Lo     *Limit   `parser:"@@"`
	Hi     *Limit   `parser:"(Range @@)?)?"`
}

// ResponseStmt is `response NAME = v(NODE) | v(NODE, REF) | i(PART)
// [from SOURCE]`: a named transfer from SOURCE (default: the circuit's
// only source) to a node voltage, a node pair or a part current.
type ResponseStmt struct {
	Pos   lexer.Position
	Name  *NameRef   `parser:"\"response\" @@ \"=\""`
	Probe *ProbeCall `parser:"@@"`
	From  *NameRef   `parser:"(\"from\" @@)?"`
}

// ProbeCall is `v(NODE)`, `v(NODE, REF)` or `i(PART)` in a response
// statement; Fn is "v" or "i" as written.
type ProbeCall struct {
	Pos  lexer.Position
	Fn   string     `parser:"@Ident \"(\""`
	Args []*NodeRef `parser:"(@@ (\",\" @@)*)? \")\""`
}

// Limit is a signed literal value in a requirement ("-0.5dB", "2.1kHz"),
// or a ratio of a dB metric written with its units ("0.5V/V": Value
// "0.5V", Per "V").
type Limit struct {
	Pos   lexer.Position
	Sign  string `parser:"@(\"-\" | \"+\")?"`
	Value string `parser:"@Value"`
	Per   string `parser:"(\"/\" @Ident)?"`
}

// ElementStmt is `NAME: KIND (TERMINALS) [VALUE] [OPTIONS] [TOLERANCE]`;
// KIND is an element keyword or a block name. Items holds, in order, the
// value expression, options, flags (a bare `fixed`) and the tolerance.
type ElementStmt struct {
	Pos   lexer.Position
	Name  string     `parser:"@Ident \":\""`
	Kind  *KindRef   `parser:"@@"`
	Terms []*NodeRef `parser:"\"(\" (@@ (\",\" @@)*)? \")\""`
	Items []*Item    `parser:"@@*"`
}

// KindRef is the kind of an element: one word, or the two words of a
// source (`voltage source`, `current source`).
type KindRef struct {
	Pos    lexer.Position
	First  string `parser:"@Ident"`
	Source string `parser:"@\"source\"?"`
}

// Word is the kind as one string: First, or First and "source" with one
// space.
func (k *KindRef) Word() string {
	if k.Source != "" {
		return k.First + " " + k.Source
	}
	return k.First
}

// NameRef is a name with its position.
type NameRef struct {
	Pos  lexer.Position
	Name string `parser:"@Ident"`
}

// NodeRef names a node (an identifier or a non-negative integer).
type NodeRef struct {
	Pos  lexer.Position
	Name string `parser:"@(Ident | Value)"`
}

// Item is one trailing item of an element or let: an option, a tolerance
// or a bare expression (the value, or a flag such as `fixed`).
type Item struct {
	Pos    lexer.Position
	Option *Option  `parser:"  @@"`
	Tol    *TolSpec `parser:"| @@"`
	Expr   *Expr    `parser:"| @@"`
}

// Option is `KEY=EXPR`.
type Option struct {
	Pos   lexer.Position
	Key   string `parser:"@Ident \"=\""`
	Value *Expr  `parser:"@@"`
}

// TolSpec is `±EXPR` or `+-EXPR`.
type TolSpec struct {
	Pos   lexer.Position
	Value *Expr `parser:"PlusMinus @@"`
}

// The expression ladder (sum, product, sign, power) is the one every
// grammar with powers shares (syntax.Sum and its parts), over this
// language's Primary.

// Expr is a sum: Left followed by `+`/`-` terms.
type Expr = syntax.Sum[Primary]

// OpTerm is one `+ TERM` or `- TERM` of a sum.
type OpTerm = syntax.SumOp[Primary]

// Term is a product: Left followed by `*`/`/` factors.
type Term = syntax.Product[Primary]

// OpUnary is one `* FACTOR` or `/ FACTOR` of a product.
type OpUnary = syntax.ProductOp[Primary]

// Unary is a negation, a unary plus or a power.
type Unary = syntax.Unary[Primary]

// Power is Base [^ Exp]; `^` is right-associative and binds tighter than
// unary minus (-2^2 = -4).
type Power = syntax.Power[Primary]

// Primary is a literal, a name or call, or a parenthesised expression
// (a list of several is a tuple, which no value accepts).
type Primary struct {
	Pos    lexer.Position
	Number string  `parser:"  @Value"`
	Ref    *Ref    `parser:"| @@"`
	Group  []*Expr `parser:"| \"(\" @@ (\",\" @@)* \")\""`
}

// Ref is a parameter name, or a function call when Open is set.
type Ref struct {
	Pos  lexer.Position
	Name string  `parser:"@Ident"`
	Open string  `parser:"( @\"(\""`
	Args []*Expr `parser:"  (@@ (\",\" @@)*)? \")\" )?"`
}
