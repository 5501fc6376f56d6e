package netlist

import (
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"
)

// Deferred statements: Load builds the tree of a top-level element
// statement only when the elaborator comes to it, and drops it right
// after, so the syntax tree of a large file (about a kilobyte a line) is
// never all in memory at once. Until then the statement is its line's
// template (whose shape fixes the token types) and, per significant token,
// its byte offset and length in the source (8 bytes a token). Parse builds
// every statement as before; Load's trees are the same (TestDeferredStmts).

// stmtEntry is one statement in order: st, or a deferred one (st nil).
type stmtEntry struct {
	st *Stmt
	deferredStmt
}

// deferredStmt is what builds a deferred statement.
type deferredStmt struct {
	tpl       *shapeTemplate
	toks      []int32 // offset and length of each token the template reads (tpl.used)
	lineNo    int32
	lineStart int32 // byte offset of the line's start
}

// deferLine records the tokens of a line (its significant tokens sig)
// that tpl reads, appending their extents to pool; ok is false when one
// is not a piece of the source as it stands (then the statement is built
// at once).
func deferLine(text string, sig []lexer.Token, tpl *shapeTemplate, lineStart int, pool []int32) (d deferredStmt, out []int32, ok bool) {
	from := len(pool)
	for _, i := range tpl.used {
		t := sig[i]
		off := t.Pos.Offset
		if off < 0 || off+len(t.Value) > len(text) || text[off:off+len(t.Value)] != t.Value || off > 1<<31-1 {
			return deferredStmt{}, pool[:from], false
		}
		pool = append(pool, int32(off), int32(len(t.Value)))
	}
	return deferredStmt{tpl: tpl, toks: pool[from:len(pool):len(pool)], lineNo: int32(sig[0].Pos.Line), lineStart: int32(lineStart)}, pool, true
}

// build makes the statement of a deferred line: the tokens as the line's
// lexer gave them (columns in runes from the line's start, the EOF's in
// bytes, as Parse sets it), then the template filled with them. buf is
// scratch for the tokens, reused from call to call.
func (d *deferredStmt) build(name, text string, buf *[]lexer.Token) *Stmt {
	return instantiate(d.tpl, d.tokens(name, text, buf))
}

// tokens returns the significant tokens of a deferred line as the line's
// lexer gave them (those the template does not read left zero), in buf.
func (d *deferredStmt) tokens(name, text string, buf *[]lexer.Token) []lexer.Token {
	sig := append((*buf)[:0], make([]lexer.Token, len(d.tpl.types))...)
	*buf = sig
	start := int(d.lineStart)
	col, at := 1, start
	for k, i := range d.tpl.used {
		typ := d.tpl.types[i]
		off, n := int(d.toks[2*k]), int(d.toks[2*k+1])
		if typ == lexer.EOF {
			sig[i] = lexer.EOFToken(lexer.Position{Filename: name, Offset: off, Line: int(d.lineNo), Column: off - start + 1})
			continue
		}
		col += utf8.RuneCountInString(text[at:off])
		at = off
		sig[i] = lexer.Token{Type: typ, Value: text[off : off+n], Pos: lexer.Position{Filename: name, Offset: off, Line: int(d.lineNo), Column: col}}
	}
	return sig
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
	return e.tpl.buildIn(s, e.tokens(f.Name, f.str, &f.sigBuf))
}

// drop forgets top-level statement i (Load, once it is elaborated).
func (f *File) drop(i int) {
	if f.deferring {
		f.entries[i] = stmtEntry{}
	} else {
		f.Stmts[i] = nil
	}
}
