package syntax

import (
	"fmt"
	"slices"
	"strings"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"
)

// MaxNesting is the deepest nesting an expression may have. Open
// parentheses, unary signs and chained powers each add a level (the parsers
// recurse once per level); deeper input is refused with a positioned error
// instead of exhausting time or stack. No hand-written circuit value comes
// near it.
const MaxNesting = 64

// TooDeep returns the first token at which an expression, given as its
// tokens in order, nests deeper than MaxNesting; ok is false when it does
// not. EOF tokens and tokens of the types in skip (blanks, comments) are
// ignored. Only token texts count: "(" opens a level and ")" closes
// one; "^" and a sign ("+", "-", "−") that follows an operator, "(" or
// "," or starts the expression add a level that lasts until the next
// binary operator at the same parenthesis depth.
func TooDeep(toks []lexer.Token, skip ...lexer.TokenType) (tok lexer.Token, ok bool) {
	var stack [16]int
	chains := append(stack[:0], 0) // chained signs and powers per open parenthesis
	depth := 0                     // open parentheses plus every chain
	prevOperand := false
	for _, tok := range toks {
		if tok.EOF() || slices.Contains(skip, tok.Type) {
			continue
		}
		top := len(chains) - 1
		switch tok.Value {
		case "(":
			chains = append(chains, 0)
			depth++
			prevOperand = false
		case ")":
			if top > 0 {
				depth -= chains[top] + 1
				chains = chains[:top]
			}
			prevOperand = true
		case "^":
			chains[top]++
			depth++
			prevOperand = false
		case "+", "-", "−":
			if prevOperand {
				depth -= chains[top]
				chains[top] = 0
			} else {
				chains[top]++
				depth++
			}
			prevOperand = false
		case "*", "/", "·", ",", "=", ":", "±", "+-", "@", "..":
			depth -= chains[top]
			chains[top] = 0
			prevOperand = false
		default:
			prevOperand = true
		}
		if depth > MaxNesting {
			return tok, true
		}
	}
	return lexer.Token{}, false
}

// TooDeepText lexes src with def and applies TooDeep to its tokens, skipping
// the token types named in skip (blanks). Text that does not lex gives
// ok false: it is left to the parser, which reports it.
func TooDeepText(def lexer.Definition, name, src string, skip ...string) (tok lexer.Token, ok bool) {
	lx, err := def.Lex(name, strings.NewReader(src))
	if err != nil {
		return lexer.Token{}, false
	}
	all, err := lexer.ConsumeAll(lx)
	if err != nil {
		return lexer.Token{}, false
	}
	types := make([]lexer.TokenType, len(skip))
	for i, n := range skip {
		types[i] = def.Symbols()[n]
	}
	return TooDeep(all, types...)
}

// NestingDiag is the diagnostic for text that nests deeper than
// MaxNesting, at the token TooDeep returned.
func (t *Text) NestingDiag(tok lexer.Token, hint string) *Diagnostic {
	return t.Diag(tok.Pos.Offset, SevError, fmt.Sprintf("expression nested too deeply (more than %d levels of parentheses, signs and powers)", MaxNesting), hint)
}

// Admit checks a one-piece text (an expression given on the command line)
// before it is parsed: what names it in messages ("signal",
// "expression"); the text must be UTF-8, at most maxBytes long, and nest
// no deeper than MaxNesting when lexed with def (skipping the token types
// named in blank). It returns nil when the text may be parsed.
func (t *Text) Admit(what string, maxBytes int, def lexer.Definition, blank ...string) *Diagnostic {
	switch {
	case !utf8.Valid(t.Source):
		return t.Errorf(0, "%s is not valid UTF-8", what)
	case len(t.Source) > maxBytes:
		return t.Errorf(0, "%s is %d bytes; at most %d are accepted", what, len(t.Source), maxBytes)
	}
	if tok, deep := TooDeepText(def, t.Name, string(t.Source), blank...); deep {
		return t.NestingDiag(tok, "")
	}
	return nil
}
