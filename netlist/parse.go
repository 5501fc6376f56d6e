package netlist

import (
	"bytes"
	"errors"
	"fmt"
	"reflect"
	"runtime"
	"sort"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2"
	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// MaxSourceBytes is the largest circuit file Parse accepts (64 MiB: room
// for a circuit of MaxParts parts).
const MaxSourceBytes = 64 << 20

// Parse parses a circuit file. name is used in positions. On failure the
// error is an ErrorList of positioned diagnostics (every syntax error, one
// per statement, up to the whole file); the returned File then holds the
// statements that did parse. Input that is not UTF-8 text (invalid UTF-8
// or NUL bytes) or larger than MaxSourceBytes is refused.
func Parse(name string, src []byte) (*File, error) {
	return parseFile(name, src, false)
}

// parseFile is Parse; with deferring (Load) the top-level element
// statements are left unbuilt in f.entries (see stmtEntry) and f.Stmts is
// nil.
func parseFile(name string, src []byte, deferring bool) (*File, error) {
	f := newFile(name, src)
	f.deferring = deferring
	if len(src) > MaxSourceBytes {
		return f, ErrorList{{Pos: f.posAt(0), Msg: fmt.Sprintf("file is %d bytes; circuit files are limited to %d bytes (64 MiB)", len(src), MaxSourceBytes)}}
	}
	if i := bytes.IndexByte(src, 0); i >= 0 {
		return f, ErrorList{f.diagAt(i, SevError, "file is not text (it contains a NUL byte)", "")}
	}
	if !utf8.Valid(src) {
		i := 0
		for i < len(src) {
			r, size := utf8.DecodeRune(src[i:])
			if r == utf8.RuneError && size <= 1 {
				break
			}
			i += size
		}
		return f, ErrorList{f.diagAt(i, SevError, "file is not UTF-8 text (invalid byte sequence)", "")}
	}
	// Line by line: no token spans a newline, so each line is lexed and
	// parsed on its own (positions shifted to the file's), keeping time
	// and memory linear in the file. A lexer error (none is expected:
	// every character has a rule) falls back to lexing the whole file,
	// for its position.
	// The token buffer is reused from line to line, a line is refused past
	// MaxLineTokens tokens, and parsing stops after syntax.MaxReported
	// errors with a note, so memory stays a small multiple of the file.
	f.str = string(src)
	if flat, ok := f.parseParallel(src, f.str, runtime.GOMAXPROCS(0)); ok {
		return f, f.finish(flat, nil, false)
	}
	p := f.parseLines(src, f.str, 0, len(src), 1, make([]stmtEntry, 0, bytes.Count(src, []byte{'\n'})+1))
	if p.lexFailed {
		return f.parseWhole(name, src)
	}
	return f, f.finish(p.flat, p.diags, p.stopped)
}

// finish nests the statements of the file into f (f.Stmts, or f.entries
// when deferring) and returns the sorted diagnostics, nil for none.
func (f *File) finish(flat []stmtEntry, diags ErrorList, stopped bool) error {
	top, diags := f.nest(flat, diags, stopped)
	if f.deferring {
		f.entries = top
	} else {
		f.Stmts = make([]*Stmt, len(top))
		for i, e := range top {
			f.Stmts[i] = e.st
		}
	}
	diags.Sort()
	return diags.Err()
}

// parallelMinBytes is the smallest file parsed in pieces on several
// processors.
const parallelMinBytes = 1 << 18

// parseParallel parses src in one piece per processor (procs, at most 8), each
// piece whole lines with its own shape memo, and returns the statements
// in order; ok is false, and src must be parsed in one piece, when src is
// small, one processor is available or a piece found anything to report
// (so that diagnostics, and the stop after syntax.MaxReported, are those
// of the one-piece parse).
func (f *File) parseParallel(src []byte, text string, procs int) (flat []stmtEntry, ok bool) {
	n := min(procs, 8, len(src)/parallelMinBytes)
	if n < 2 {
		return nil, false
	}
	pieces := make([]parsedLines, n)
	var wg sync.WaitGroup
	start, lineNo := 0, 1
	// The statements of every piece go to one array with a window per
	// piece as long as its lines (a statement is one line or more), moved
	// together once all are parsed: no copy of the whole, and no growth.
	all := make([]stmtEntry, bytes.Count(src, []byte{'\n'})+1)
	for k := range n {
		stop := len(src) // the last piece takes the line after a final newline
		if k < n-1 {
			stop = start + (len(src)-start)/(n-k)
			if nl := bytes.IndexByte(src[stop:], '\n'); nl >= 0 {
				stop += nl // the piece ends with the line holding stop
			} else {
				stop = len(src)
			}
		}
		lines := bytes.Count(src[start:min(stop+1, len(src))], []byte{'\n'})
		end := lineNo - 1 + lines // the piece's lines end with a newline
		if stop == len(src) {
			end++ // and the last piece has the line after
		}
		window := all[lineNo-1 : lineNo-1 : end]
		wg.Add(1)
		go func(out *parsedLines, start, stop, lineNo int) {
			defer wg.Done()
			*out = f.parseLines(src, text, start, stop, lineNo, window)
		}(&pieces[k], start, stop, lineNo)
		if stop == len(src) {
			pieces = pieces[:k+1]
			break
		}
		lineNo += lines
		start = stop + 1
	}
	wg.Wait()
	flat = all[:0]
	for _, p := range pieces {
		if p.lexFailed || len(p.diags) > 0 {
			return nil, false
		}
		flat = append(flat, p.flat...) // moves down within all (copy allows the overlap)
	}
	clear(all[len(flat):])
	return flat, true
}

// parsedLines is the result of parsing some lines of a file.
type parsedLines struct {
	flat      []stmtEntry // statements in order, blocks not yet nested
	diags     ErrorList   // syntax errors, unsorted
	stopped   bool        // stopped after syntax.MaxReported errors
	lexFailed bool        // a line did not lex: parse the whole file instead
}

// parseLines parses the lines of src that start at byte offsets from
// start to stop (inclusive; stop = len(src) takes the empty line after a
// final newline), the first being line lineNo of the file. text is src as
// a string: the token values of every line are pieces of it, one copy of
// the file shared by the whole tree. The statements are appended to flat.
func (f *File) parseLines(src []byte, text string, start, stop, lineNo int, flat []stmtEntry) parsedLines {
	p := parsedLines{flat: flat}
	var line []lexer.Token
	memo := newShapeMemo()
	memo.deferring = f.deferring
	name := f.Name
	for ; start <= stop && start <= len(src); lineNo++ {
		end := bytes.IndexByte(src[start:], '\n')
		if end < 0 {
			end = len(src)
		} else {
			end += start
		}
		if len(p.diags) >= syntax.MaxReported {
			if len(bytes.TrimSpace(src[start:])) == 0 {
				break // nothing left to check
			}
			last := f.text.Pos(len(src)).Line
			if bytes.HasSuffix(src, []byte{'\n'}) {
				last-- // the empty line after the final newline
			}
			p.diags = append(p.diags, f.diagAt(start, SevError, fmt.Sprintf("stopped after %d errors; lines %d to %d were not checked", len(p.diags), lineNo, last), "fix these and run again"))
			p.stopped = true
			break
		}
		if blankLine(src[start:end]) {
			start = end + 1
			continue
		}
		var err error
		var over int
		if line, over, err = lexLine(name, text[start:end], start, lineNo, line[:0]); err != nil {
			p.lexFailed = true
			return p
		}
		switch {
		case over >= 0:
			if d := f.nestingDiag(line); d != nil {
				p.diags = append(p.diags, d)
				break
			}
			p.diags = append(p.diags, f.diagAt(over, SevError, fmt.Sprintf("line %d has more than %d tokens", lineNo, MaxLineTokens), "split it with let"))
		case len(line) > 0:
			line = append(line, lexer.EOFToken(lexer.Position{Filename: name, Offset: end, Line: lineNo, Column: end - start + 1}))
			st, tpl, d := f.parseLine(line, memo)
			switch {
			case d != nil:
				p.diags = append(p.diags, d)
			case st == nil:
				p.flat = append(p.flat, stmtEntry{deferredStmt: deferredStmt{tpl: tpl, lineNo: int32(lineNo), lineStart: int32(start)}})
			default:
				p.flat = append(p.flat, stmtEntry{st: st})
			}
		}
		start = end + 1
	}
	return p
}

// MaxLineTokens is how many significant tokens (words, numbers,
// operators, brackets; not spaces or comments) one line of a circuit file
// may hold: ample for any statement, and a bound on the work and memory of
// parsing one (a value of 5 million terms is refused, not parsed).
const MaxLineTokens = 10000

// blankLine reports whether a line holds only spaces, tabs and a carriage
// return (lexing it would find no significant token).
func blankLine(text []byte) bool {
	for _, c := range text {
		if c != ' ' && c != '\t' && c != '\r' {
			return false
		}
	}
	return true
}

// lexLine appends to buf the tokens of one line (without its newline),
// the tokens lexDef gives, found with lineRules (lex_rules.go), for a line
// that starts at byte offset start and is line lineNo of the file, or
// returns buf empty when the line has no significant token. over is the
// byte offset of the token past MaxLineTokens significant ones (lexing
// stops there, buf holding the tokens before it), or -1.
func lexLine(name string, text string, start, lineNo int, buf []lexer.Token) (toks []lexer.Token, over int, err error) {
	significant := 0
	col := 1
	for i := 0; i < len(text); {
		typ, end, ok := nextToken(text, i)
		if !ok {
			return nil, -1, lexLineError(name, text, lineNo)
		}
		t := lexer.Token{Type: typ, Value: text[i:end], Pos: lexer.Position{Filename: name, Offset: start + i, Line: lineNo, Column: col}}
		col += utf8.RuneCountInString(t.Value)
		i = end
		if t.Type != symSpace && t.Type != symComment {
			if significant++; significant > MaxLineTokens {
				return buf, t.Pos.Offset, nil
			}
		}
		buf = append(buf, t)
	}
	if significant == 0 {
		return buf[:0], -1, nil
	}
	return buf, -1, nil
}

// lexLineError is participle's error for a line lexLine cannot lex (none
// is expected: the Bad rule matches any character).
func lexLineError(name, text string, lineNo int) error {
	lx, err := lexDef.LexString(name, text)
	if err == nil {
		_, err = lexer.ConsumeAll(lx)
	}
	if err == nil {
		err = fmt.Errorf("%s:%d: the line lexer and participle's disagree", name, lineNo)
	}
	return err
}

// parseWhole is the former whole-file path: lex everything, then parse
// line by line. Only reached on a lexer error, which it reports.
func (f *File) parseWhole(name string, src []byte) (*File, error) {
	toks, err := lexDef.LexString(name, string(src))
	if err != nil {
		return f, ErrorList{f.lexDiag(err)}
	}
	all, err := lexer.ConsumeAll(toks)
	if err != nil {
		return f, ErrorList{f.lexDiag(err)}
	}
	var diags ErrorList
	var flat []stmtEntry
	for _, line := range splitLines(all) {
		st, _, d := f.parseLine(line, nil)
		if d != nil {
			diags = append(diags, d)
			continue
		}
		flat = append(flat, stmtEntry{st: st})
	}
	return f, f.finish(flat, diags, false)
}

var (
	symNewline = lexDef.Symbols()["Newline"]
	symSpace   = lexDef.Symbols()["Space"]
	symComment = lexDef.Symbols()["Comment"]
	symIdent   = lexDef.Symbols()["Ident"]
	symValue   = lexDef.Symbols()["Value"]
	symBad     = lexDef.Symbols()["Bad"]
	symPunct   = lexDef.Symbols()["Punct"]
	symPlusMin = lexDef.Symbols()["PlusMinus"]
	symRange   = lexDef.Symbols()["Range"]
)

// splitLines cuts the token stream at newlines, dropping lines with no
// significant token. Each line ends with an EOF token at its end.
func splitLines(all []lexer.Token) [][]lexer.Token {
	var out [][]lexer.Token
	var cur []lexer.Token
	significant := false
	flush := func(end lexer.Token) {
		if significant {
			out = append(out, append(cur, lexer.EOFToken(end.Pos)))
		}
		cur, significant = nil, false
	}
	for _, t := range all {
		switch {
		case t.Type == symNewline || t.EOF():
			flush(t)
		default:
			cur = append(cur, t)
			if t.Type != symSpace && t.Type != symComment {
				significant = true
			}
		}
	}
	return out
}

// sliceLexer replays tokens already lexed.
type sliceLexer struct {
	toks []lexer.Token
	i    int
}

func (s *sliceLexer) Next() (lexer.Token, error) {
	if s.i >= len(s.toks) {
		return s.toks[len(s.toks)-1], nil
	}
	t := s.toks[s.i]
	s.i++
	return t, nil
}

// parseLine parses the statement on one line, through memo (nil: parse
// directly).
// A deferred element statement (see shapeMemo.parse) comes back as its
// template, st nil.
func (f *File) parseLine(line []lexer.Token, memo *shapeMemo) (*Stmt, *shapeTemplate, *Diagnostic) {
	line = mergeSpacedUnits(line)
	if d := f.nestingDiag(line); d != nil {
		return nil, nil, d
	}
	st, tpl, err := memo.parse(line)
	if err != nil {
		return nil, nil, f.syntaxDiag(line, err)
	}
	return st, tpl, nil
}

// parseTokens is participle's parse of one line's tokens (ending in EOF),
// with its Tokens fields compacted.
func parseTokens(line []lexer.Token) (*Stmt, error) {
	pl, err := lexer.Upgrade(&sliceLexer{toks: line}, symSpace, symComment)
	if err != nil {
		return nil, err
	}
	st, err := stmtParser.ParseFromLexer(pl)
	if err != nil {
		return nil, err
	}
	compactTokens(reflect.ValueOf(st))
	return st, nil
}

// nestingDiag reports a line that nests deeper than syntax.MaxNesting, at the
// token that goes too deep, or returns nil.
func (f *File) nestingDiag(line []lexer.Token) *Diagnostic {
	tok, deep := syntax.TooDeep(line, symSpace, symComment)
	if !deep {
		return nil
	}
	return f.text.NestingDiag(tok, "split it with let")
}

// syntaxDiag turns a participle error into a positioned Diagnostic with a
// hint.
func (f *File) syntaxDiag(line []lexer.Token, err error) *Diagnostic {
	var perr participle.Error
	if !errors.As(err, &perr) {
		return f.diagAt(line[0].Pos.Offset, SevError, "syntax error: "+err.Error(), "")
	}
	pos := perr.Position()
	msg := perr.Message()
	hint := ""
	var ute *participle.UnexpectedTokenError
	if errors.As(err, &ute) {
		tok := ute.Unexpected
		pos = tok.Pos
		switch {
		case tok.EOF():
			msg = "unexpected end of statement"
		case tok.Type == symBad:
			msg = fmt.Sprintf("unexpected character %q", tok.Value)
		default:
			msg = fmt.Sprintf("unexpected %q", tok.Value)
		}
		if ute.Expect != "" {
			hint = "expected " + ute.Expect
		}
		hint = lineHint(line, tok, hint)
	}
	return f.diagAt(pos.Offset, SevError, "syntax error: "+msg, hint)
}

// lineHint improves the hint of a syntax error from the tokens before it.
func lineHint(line []lexer.Token, bad lexer.Token, hint string) string {
	var prev []lexer.Token
	for _, t := range line {
		if t.Pos.Offset >= bad.Pos.Offset || t.EOF() {
			break
		}
		if t.Type != symSpace && t.Type != symComment {
			prev = append(prev, t)
		}
	}
	if len(prev) == 0 {
		return `a statement starts with "NAME:" or with title, let, block, end, require or response`
	}
	if len(prev) == 1 && prev[0].Type == symIdent && bad.Value != ":" {
		switch prev[0].Value {
		case "title", "let", "block", "end", "require", "response":
		default:
			return `expected ":" after the element name`
		}
	}
	if prev[0].Value == "require" && len(prev) >= 2 && bad.Type == symIdent {
		return "expected within LO..HI, below HI or above LO" + suggestSuffix(bad.Value, []string{"within", "below", "above"})
	}
	if len(prev) == 3 && prev[1].Value == ":" && bad.Value != "(" {
		return "expected the terminals in parentheses, as in (a, b)"
	}
	depth := 0
	for _, t := range prev {
		switch t.Value {
		case "(":
			depth++
		case ")":
			depth--
		}
	}
	last := prev[len(prev)-1]
	if depth > 0 && (last.Type == symIdent || last.Type == symValue || last.Value == ")") {
		return `expected "," or ")"`
	}
	if bad.Type == symValue && last.Type == symValue {
		return "write an operator between two values"
	}
	return hint
}

// nest groups block bodies under their headers and reports misplaced
// statements. stopped says parsing ended early, so an open block is not
// reported as lacking its end.
// A deferred statement (an element) stays deferred at the top level and
// is built inside a block.
func (f *File) nest(flat []stmtEntry, diags ErrorList, stopped bool) ([]stmtEntry, ErrorList) {
	top := flat[:0] // filtered in place: top never overtakes the entry read
	var open *Stmt
	dropped := 0
	report := func(d *Diagnostic) {
		if len(diags) < syntax.MaxReported {
			diags = append(diags, d)
		} else {
			dropped++
		}
	}
	for _, e := range flat {
		st := e.st
		switch {
		case st == nil && open == nil:
			top = append(top, e)
			continue
		case st == nil:
			st = e.build(f.Name, f.str, &f.sigBuf)
		}
		switch {
		case st.Block != nil:
			if open != nil {
				report(f.diag(st.Pos, SevError, fmt.Sprintf("block %q starts inside block %q", st.Block.Name, open.Block.Name), "blocks cannot be nested; close the outer block with end first"))
				continue
			}
			open = st
			top = append(top, stmtEntry{st: st})
		case st.End != nil:
			if open == nil {
				report(f.diag(st.Pos, SevError, "end without a block", ""))
				continue
			}
			open.Block.EndPos = st.Pos
			open = nil
		case open != nil:
			if st.Title != nil || st.Require != nil || st.Response != nil {
				report(f.diag(st.Pos, SevError, "title, require and response belong at the top level, not inside a block", ""))
				continue
			}
			open.Block.Body = append(open.Block.Body, st)
		default:
			top = append(top, stmtEntry{st: st})
		}
	}
	if open != nil && !stopped {
		report(f.diag(open.Pos, SevError, fmt.Sprintf("block %q has no end", open.Block.Name), `close it with a line "end"`))
	}
	if dropped > 0 {
		diags = append(diags, &Diagnostic{Pos: Pos{File: f.Name}, Severity: SevError, Msg: fmt.Sprintf("and %d more errors in the block structure, not shown", dropped)})
	}
	return top, diags
}

// Position converts a lexer position into a Pos with a rune column.
func (f *File) Position(p lexer.Position) Pos {
	return f.posAt(p.Offset)
}

// posAt returns the Pos of a byte offset.
func (f *File) posAt(off int) Pos { return f.text.Pos(off) }

// newFile makes a File for src, indexing its lines once.
func newFile(name string, src []byte) *File {
	return &File{Name: name, Source: src, text: syntax.NewText(name, src)}
}

// lineText returns the source line containing the byte offset, without
// its newline ("" when the file is not text).
func (f *File) lineText(off int) string { return f.text.Line(off) }

// diagAt makes a diagnostic at a byte offset, with its source line.
func (f *File) diagAt(off int, sev Severity, msg, hint string) *Diagnostic {
	return f.text.Diag(off, sev, msg, hint)
}

// lexDiag turns a lexer failure into a diagnostic at the lexer's position
// (FILE:LINE:COL with the source line and caret); an error that carries no
// position is reported at the start of the file (1:1). The lexer's Bad rule
// matches any character, so this guards a lexer change rather than a known
// input.
func (f *File) lexDiag(err error) *Diagnostic {
	off := 0
	msg := err.Error()
	var le *lexer.Error
	if errors.As(err, &le) && le.Pos.Offset >= 0 && le.Pos.Offset <= len(f.Source) {
		off, msg = le.Pos.Offset, le.Msg
	}
	return f.diagAt(off, SevError, msg, "")
}

// diag makes a diagnostic at a lexer position.
func (f *File) diag(p lexer.Position, sev Severity, msg, hint string) *Diagnostic {
	return f.diagAt(p.Offset, sev, msg, hint)
}

// suggest returns `did you mean "x"?` for the candidate closest to word
// (see Closest), or "".
func suggest(word string, candidates []string) string {
	best := Closest(word, candidates)
	if best == "" {
		return ""
	}
	return fmt.Sprintf("did you mean %q?", best)
}

// Closest returns the candidate closest to word in edit distance, when
// that distance is at most 2 and less than the word's length (ties: the
// first in sorted order), or "" when none is close.
func Closest(word string, candidates []string) string {
	best, bestD := "", 3
	sorted := append([]string(nil), candidates...)
	sort.Strings(sorted)
	for _, c := range sorted {
		if d := editDistance(word, c); d < bestD && d < utf8.RuneCountInString(word) {
			best, bestD = c, d
		}
	}
	return best
}

// Nearest returns the candidate nearest to word, however far. A candidate
// that word abbreviates (same first letter, the rest of word's letters in
// order: "tf" for "transfer") comes first, the shortest such. Otherwise the
// edit distance to the candidate, to it without spaces, or to the initials of
// its words before the last joined to the last ("csource" for "current
// source"), or to all its initials ("vs"), whichever is least; on a tie a candidate with the same first
// letter wins, then the first in sorted order. It returns "" only for no
// candidates.
func Nearest(word string, candidates []string) string {
	sorted := append([]string(nil), candidates...)
	sort.Strings(sorted)
	abbrev := ""
	for _, c := range sorted {
		if abbreviates(word, c) && (abbrev == "" || len(c) < len(abbrev)) {
			abbrev = c
		}
	}
	if abbrev != "" {
		return abbrev
	}
	best, bestD, bestFirst := "", 1<<30, false
	for _, c := range sorted {
		d := editDistance(word, c)
		if f := strings.Fields(c); len(f) > 1 {
			d = min(d, editDistance(word, strings.Join(f, "")))
			var ini strings.Builder
			for _, w := range f[:len(f)-1] {
				ini.WriteString(w[:1])
			}
			d = min(d, editDistance(word, ini.String()+f[len(f)-1]))
			d = min(d, editDistance(word, ini.String()+f[len(f)-1][:1]))
		}
		first := word != "" && c != "" && word[0] == c[0]
		if d < bestD || d == bestD && first && !bestFirst {
			best, bestD, bestFirst = c, d, first
		}
	}
	return best
}

// abbreviates reports whether word is an abbreviation of c: the same first
// letter and every letter of word in c in order.
func abbreviates(word, c string) bool {
	if word == "" || c == "" || word[0] != c[0] || len(word) >= len(c) {
		return false
	}
	i := 0
	for j := 0; j < len(c) && i < len(word); j++ {
		if c[j] == word[i] {
			i++
		}
	}
	return i == len(word)
}

// editDistance is the Levenshtein distance between a and b (in runes).
func editDistance(a, b string) int {
	ra, rb := []rune(a), []rune(b)
	if len(ra) > 64 || len(rb) > 64 {
		return 99
	}
	prev := make([]int, len(rb)+1)
	cur := make([]int, len(rb)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(ra); i++ {
		cur[0] = i
		for j := 1; j <= len(rb); j++ {
			cost := 1
			if ra[i-1] == rb[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(rb)]
}

// suggestSuffix is ` (did you mean "x"?)`-style text for a hint, or "".
func suggestSuffix(word string, candidates []string) string {
	if h := suggest(word, candidates); h != "" {
		return "; " + h
	}
	return ""
}
