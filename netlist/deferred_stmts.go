package netlist

import (
	"fmt"
	"strings"

	"github.com/alecthomas/participle/v2/lexer"
)

// Deferred statements: Load builds the tree of a top-level element
// statement only when the elaborator comes to it, and drops it right
// after, so the syntax tree of a large file (about a kilobyte a line) is
// never all in memory at once. Until then the statement is its line's
// template (whose shape fixes the token types) and where the line starts:
// building it lexes the line again (a small part of the cost of parsing
// it), so nothing is kept per token. Parse builds every statement as
// before; Load's trees are the same (TestDeferredStmts).

// stmtEntry is one statement in order: st, or a deferred one (st nil).
type stmtEntry struct {
	st *Stmt
	deferredStmt
}

// deferredStmt is what builds a deferred statement.
type deferredStmt struct {
	tpl       *shapeTemplate
	lineNo    int32
	lineStart int32 // byte offset of the line's start
}

// build makes the statement of a deferred line. buf is scratch for the
// tokens, reused from call to call.
func (d *deferredStmt) build(name, text string, buf *[]lexer.Token) *Stmt {
	sig, st := d.tokens(name, text, buf)
	if st != nil {
		return st
	}
	return instantiate(d.tpl, sig)
}

// tokens returns the significant tokens of a deferred line, then EOF, as
// parseLines gave them to the template (the line lexed, its spaced units
// merged), in buf. Lexing is deterministic, so they have the template's
// types; if they had not, st is the line parsed by participle instead.
func (d *deferredStmt) tokens(name, text string, buf *[]lexer.Token) (sig []lexer.Token, st *Stmt) {
	start := int(d.lineStart)
	end := strings.IndexByte(text[start:], '\n')
	if end < 0 {
		end = len(text)
	} else {
		end += start
	}
	line, _, err := lexLine(name, text[start:end], start, int(d.lineNo), (*buf)[:0])
	line = append(line, lexer.EOFToken(lexer.Position{Filename: name, Offset: end, Line: int(d.lineNo), Column: end - start + 1}))
	line = mergeSpacedUnits(line)
	*buf = line
	sig = line[:0]
	for _, t := range line {
		if t.Type != symSpace && t.Type != symComment {
			sig = append(sig, t) // in place: sig never overtakes the token read
		}
	}
	if err == nil && len(sig) == len(d.tpl.types) {
		same := true
		for i, t := range sig {
			same = same && t.Type == d.tpl.types[i]
		}
		if same {
			return sig, nil
		}
	}
	st, err = parseTokens(line)
	if err != nil {
		panic(fmt.Sprintf("netlist: deferred line %d no longer parses: %v", d.lineNo, err))
	}
	return nil, st
}

// stmtCount is the number of top-level statements of the file.
func (f *File) stmtCount() int {
	if f.deferring {
		return len(f.entries)
	}
	return len(f.Stmts)
}

// peek returns top-level statement i, nil when it is deferred (an element
// statement not built yet).
func (f *File) peek(i int) *Stmt {
	if f.deferring {
		return f.entries[i].st
	}
	return f.Stmts[i]
}

// stmt returns top-level statement i, building a deferred one (each call
// builds a new tree: the caller keeps it as long as it needs).
func (f *File) stmt(i int) *Stmt {
	if !f.deferring {
		return f.Stmts[i]
	}
	if e := &f.entries[i]; e.st == nil {
		return e.build(f.Name, f.str, &f.sigBuf)
	}
	return f.entries[i].st
}

// scratchStmt returns top-level statement i like stmt, except that a
// deferred statement is built in its template's scratch tree: it is valid
// only until the next call, and nothing may keep a pointer into it (Load's
// elaboration, which keeps values and strings only, and drops each
// top-level statement once elaborated). A syntax tree is about a kilobyte,
// so building each one anew would be most of what Load allocates.
func (f *File) scratchStmt(i int) *Stmt {
	e := &f.entries[i]
	if !f.deferring || e.st != nil {
		return f.stmt(i)
	}
	if f.scratch == nil {
		f.scratch = map[*shapeTemplate]*scratchTree{}
	}
	s := f.scratch[e.tpl]
	if s == nil {
		s = &scratchTree{}
		f.scratch[e.tpl] = s
	}
	sig, st := e.tokens(f.Name, f.str, &f.sigBuf)
	if st != nil {
		return st
	}
	return e.tpl.buildIn(s, sig)
}

// drop forgets top-level statement i (Load, once it is elaborated).
func (f *File) drop(i int) {
	if f.deferring {
		f.entries[i] = stmtEntry{}
	} else {
		f.Stmts[i] = nil
	}
}
