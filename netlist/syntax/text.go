// Package syntax is the text toolkit every nodal grammar shares: the
// circuit language (netlist), hand derivations (analysis/derivation) and
// drive signals (analysis/signal), and the values typed on the command
// line (--set, --at and the like).
//
// It owns positions (Pos, Text), positioned diagnostics and the error list
// (Diagnostic, ErrorList; one message form, SOURCE:LINE:COL: message with
// the source line and a caret), the nesting limit (MaxNesting, TooDeep),
// and the number token: one lexer pattern (NumberPattern) and one decoder
// (ParseNumber) for decimals, exponents, SI prefixes, IEC 60062 value
// codes (4k7, 1k5, 4n7, 2R2) and attached units (2kHz, 10kΩ), with the one
// SI prefix table of the program (PrefixScale, PrefixExponent,
// PrefixSymbol), and the expression precedence ladder (Sum, Product,
// Unary, Power) as participle nodes generic in a grammar's primary.
// Diagnostic.Error shows at most MaxEcho characters of a line and escapes
// control and bidirectional characters (Echo, EscapeText); Text.Admit is
// the check a one-piece expression passes before it is parsed. It imports
// nothing of nodal.
package syntax

import (
	"bytes"
	"fmt"
	"math"
	"sort"
	"strings"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"
)

// Pos is a position in a source text. Line and Col count from 1; Col
// counts characters (runes), not bytes. Offset is the byte offset. File
// names the source: a file name, or a flag such as "--ode".
type Pos struct {
	File   string
	Line   int
	Col    int
	Offset int
}

// String formats the position as FILE:LINE:COL (FILE alone when the line
// is unknown).
func (p Pos) String() string {
	if p.Line == 0 {
		return p.File
	}
	return fmt.Sprintf("%s:%d:%d", p.File, p.Line, p.Col)
}

// Text is a named source text with its lines indexed once, so positions
// and source lines of many diagnostics cost no rescans. A Text that is not
// UTF-8 or holds a NUL byte gives diagnostics without the source line.
type Text struct {
	Name   string // the source name used in positions
	Source []byte // the text

	lineStarts []int32 // byte offset of each line start (4 bytes a line: a file of blank lines costs 4× its size)
	notText    bool
}

// NewText indexes src, named name in positions. Lines are indexed in the
// first 2 GiB only (every grammar caps its input far below that); an offset
// past them is placed on the last line indexed.
func NewText(name string, src []byte) *Text {
	indexed := src[:min(len(src), math.MaxInt32-1)]
	starts := make([]int32, 1, bytes.Count(indexed, []byte{'\n'})+1)
	for i, c := range indexed {
		if c == '\n' {
			starts = append(starts, int32(i+1))
		}
	}
	return &Text{Name: name, Source: src, lineStarts: starts, notText: !utf8.Valid(src) || bytes.IndexByte(src, 0) >= 0}
}

// Pos returns the position of a byte offset (clamped to the text).
func (t *Text) Pos(off int) Pos {
	off = min(max(off, 0), len(t.Source))
	line := sort.Search(len(t.lineStarts), func(i int) bool { return int(t.lineStarts[i]) > off }) // lineStarts[line-1] <= off
	start := int(t.lineStarts[line-1])
	return Pos{File: t.Name, Line: line, Col: utf8.RuneCount(t.Source[start:off]) + 1, Offset: off}
}

// At returns the position of a participle lexer position (by its offset).
func (t *Text) At(p lexer.Position) Pos { return t.Pos(p.Offset) }

// End returns the position just past the last character.
func (t *Text) End() Pos { return t.Pos(len(t.Source)) }

// Line returns the source line holding the byte offset, without its line
// end; "" when the text is not UTF-8 text.
func (t *Text) Line(off int) string {
	if t.notText {
		return ""
	}
	off = min(max(off, 0), len(t.Source))
	start := bytes.LastIndexByte(t.Source[:off], '\n') + 1
	end := bytes.IndexByte(t.Source[start:], '\n')
	if end < 0 {
		end = len(t.Source) - start
	}
	return strings.TrimRight(string(t.Source[start:start+end]), "\r")
}

// Diag makes a diagnostic at a byte offset, with its source line.
func (t *Text) Diag(off int, sev Severity, msg, hint string) *Diagnostic {
	return &Diagnostic{Pos: t.Pos(off), Severity: sev, Msg: msg, Hint: hint, Line: t.Line(off)}
}

// Errorf makes an error diagnostic at a byte offset with a formatted
// message and no hint.
func (t *Text) Errorf(off int, format string, args ...any) *Diagnostic {
	return t.Diag(off, SevError, fmt.Sprintf(format, args...), "")
}
