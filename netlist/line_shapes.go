package netlist

import (
	"reflect"
	"strconv"
	"strings"

	"github.com/alecthomas/participle/v2/lexer"
)

// Line shapes: participle parses each distinct shape of line once; the
// other lines of that shape get a copy of its tree with their own token
// values and positions.
//
// The shape of a line is the sequence of its significant tokens' types,
// with the value of every token whose value the grammar looks at: the
// punctuation (Punct, PlusMinus, Range) and the identifiers that are
// literal words of the grammar (grammarWords, read from the struct tags so
// the set cannot drift from the grammar). Every other token is matched by
// its type alone, so two lines of one shape take the same path through the
// grammar and differ only in the values and positions captured.
//
// The first line of a shape is parsed twice by participle: as written
// (that tree is the result) and with each non-literal token's value
// replaced by a placeholder naming its index, which shows where every
// captured string, position and token of the tree comes from. That
// placeholder tree, the template, is kept only if instantiating it with
// the line's own tokens gives a tree deep-equal to participle's; a shape
// whose template fails that (or that holds a Bad token, or whose parse
// fails) always goes to participle, so diagnostics are participle's own.
// TestShapeMemoMatchesParticiple checks the memoised trees against plain
// parses on the corpus and on random lines.

// maxShapes bounds the templates one Parse keeps (a template is about a
// kilobyte); lines of further new shapes are parsed directly.
const maxShapes = 4096

// maxShapeTokens is the longest line (in significant tokens) that is
// memoised: longer lines are rare and their keys long.
const maxShapeTokens = 64

// grammarWords are the literal strings of the statement grammar ("title",
// "(", "source", ...), collected from the parser tags of every node type.
var grammarWords = collectGrammarWords(reflect.TypeOf(Stmt{}), map[reflect.Type]bool{}, map[string]bool{})

// collectGrammarWords adds to words every quoted literal in the parser
// tags of t and the node types it reaches.
func collectGrammarWords(t reflect.Type, seen map[reflect.Type]bool, words map[string]bool) map[string]bool {
	for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
		t = t.Elem()
	}
	if t.Kind() != reflect.Struct || seen[t] {
		return words
	}
	seen[t] = true
	for i := range t.NumField() {
		f := t.Field(i)
		for _, w := range tagLiterals(f.Tag.Get("parser")) {
			words[w] = true
		}
		collectGrammarWords(f.Type, seen, words)
	}
	return words
}

// tagLiterals returns the quoted literals ("x" or 'x') of a participle
// grammar tag, unquoted.
func tagLiterals(tag string) []string {
	var out []string
	for i := 0; i < len(tag); i++ {
		q := tag[i]
		if q != '"' && q != '\'' {
			continue
		}
		j := i + 1
		for j < len(tag) && tag[j] != q {
			if tag[j] == '\\' {
				j++
			}
			j++
		}
		if j >= len(tag) {
			break
		}
		lit := tag[i : j+1]
		if q == '\'' {
			lit = `"` + strings.ReplaceAll(tag[i+1:j], `"`, `\"`) + `"`
		}
		if s, err := strconv.Unquote(lit); err == nil {
			out = append(out, s)
		}
		i = j
	}
	return out
}

// shapeMemo is the template cache of one Parse.
type shapeMemo struct {
	templates map[string]*shapeTemplate // nil: the shape is parsed directly
	key       []byte
	sig       []lexer.Token // the significant tokens of the line, then EOF
	scratch   []lexer.Token
	deferring bool // element statements of known shapes are left unbuilt (Load)
}

func newShapeMemo() *shapeMemo {
	return &shapeMemo{templates: map[string]*shapeTemplate{}}
}

// Placeholders of the template: a string field holds placeholderMark and
// the token index; a position has Line -(index+1) (0 stays the zero
// position); a Tokens slice holds one token of type tokenMark with such a
// position.
const (
	placeholderMark = "\x01"
	tokenMark       = lexer.TokenType(1 << 30)
)

// parse parses one line (its tokens, spaces included, ending in EOF),
// through the template of its shape when there is one. When the memo
// defers and the line is an element statement of a known shape, st is nil
// and tpl is the template to build it from (see deferredStmt).
func (m *shapeMemo) parse(line []lexer.Token) (st *Stmt, tpl *shapeTemplate, err error) {
	if m == nil || !m.shape(line) {
		st, err = parseTokens(line)
		return st, nil, err
	}
	tpl, known := m.templates[string(m.key)]
	if known {
		if tpl == nil {
			st, err = parseTokens(line)
			return st, nil, err
		}
		if m.deferring && tpl.element {
			return nil, tpl, nil
		}
		return instantiate(tpl, m.sig), nil, nil
	}
	st, err = parseTokens(line)
	if err != nil || len(m.templates) >= maxShapes {
		return st, nil, err
	}
	tpl = m.template(line)
	if tpl != nil && !reflect.DeepEqual(instantiate(tpl, m.sig), st) {
		tpl = nil
	}
	m.templates[string(m.key)] = tpl
	return st, nil, nil
}

// shape computes the key and the significant tokens of a line; false when
// the line is not memoised (a Bad token, or too long).
func (m *shapeMemo) shape(line []lexer.Token) bool {
	m.key, m.sig = m.key[:0], m.sig[:0]
	for _, t := range line {
		switch {
		case t.Type == symSpace || t.Type == symComment:
			continue
		case t.Type == symBad || len(m.sig) >= maxShapeTokens:
			return false
		}
		m.sig = append(m.sig, t)
		m.key = strconv.AppendInt(m.key, int64(t.Type), 10)
		if literalToken(t) {
			m.key = append(m.key, ' ')
			m.key = append(m.key, t.Value...)
		}
		m.key = append(m.key, 0)
	}
	return true
}

// literalToken reports whether the grammar looks at the token's value.
func literalToken(t lexer.Token) bool {
	return t.Type == symPunct || t.Type == symPlusMin || t.Type == symRange || grammarWords[t.Value]
}

// template parses the line with placeholders for its non-literal values
// and returns the tree with every captured value, position and token
// replaced by its placeholder, or nil when a capture cannot be traced to
// one token.
func (m *shapeMemo) template(line []lexer.Token) *shapeTemplate {
	m.scratch = m.scratch[:0]
	index := map[int]int{} // byte offset → index in m.sig
	for i, t := range m.sig {
		index[t.Pos.Offset] = i
	}
	for _, t := range line {
		if i, ok := index[t.Pos.Offset]; ok && t.Type != symSpace && t.Type != symComment && !literalToken(t) && !t.EOF() {
			t.Value = placeholderMark + strconv.Itoa(i)
		}
		m.scratch = append(m.scratch, t)
	}
	st, err := parseTokens(m.scratch)
	if err != nil {
		return nil
	}
	ok := true
	markTemplate(reflect.ValueOf(st), index, &ok)
	if !ok {
		return nil
	}
	tpl := compileTemplate(st)
	tpl.element = st.Element != nil
	for _, t := range m.sig {
		tpl.types = append(tpl.types, t.Type)
	}
	return tpl
}

// markTemplate replaces, in place, every position and Tokens slice under
// v by its placeholder; ok turns false on one that maps to no token.
func markTemplate(v reflect.Value, index map[int]int, ok *bool) {
	switch v.Kind() {
	case reflect.Pointer:
		if !v.IsNil() {
			markTemplate(v.Elem(), index, ok)
		}
	case reflect.Slice:
		if v.Type() == tokenSlice {
			toks := v.Interface().([]lexer.Token)
			if len(toks) > 1 {
				*ok = false
			}
			for i := range toks {
				toks[i] = lexer.Token{Type: tokenMark, Pos: markPos(toks[i].Pos, index, ok)}
			}
			return
		}
		if v.Type().Elem().Kind() != reflect.Pointer {
			*ok = false // compileNode copies slices of nodes only
		}
		for i := range v.Len() {
			markTemplate(v.Index(i), index, ok)
		}
	case reflect.Struct:
		if v.Type() == positionType {
			v.Set(reflect.ValueOf(markPos(v.Interface().(lexer.Position), index, ok)))
			return
		}
		for i := range v.NumField() {
			markTemplate(v.Field(i), index, ok)
		}
	case reflect.String:
		s := v.String()
		if strings.Contains(s, placeholderMark) {
			if _, err := strconv.Atoi(strings.TrimPrefix(s, placeholderMark)); err != nil || !strings.HasPrefix(s, placeholderMark) {
				*ok = false // a capture that joins a placeholder with more text
			}
		}
	case reflect.Interface, reflect.Map, reflect.Chan, reflect.Func:
		*ok = false
	}
}

var positionType = reflect.TypeOf(lexer.Position{})

// markPos is the placeholder of a position: the index of the significant
// token at its offset.
func markPos(p lexer.Position, index map[int]int, ok *bool) lexer.Position {
	if p == (lexer.Position{}) {
		return p
	}
	i, found := index[p.Offset]
	if !found {
		*ok = false
	}
	return lexer.Position{Line: -(i + 1)}
}

// instantiate returns a fresh copy of a template with the values and
// positions of the tokens sig.
func instantiate(tpl *shapeTemplate, sig []lexer.Token) *Stmt {
	return tpl.build(sig)
}

// shapeTemplate is a template tree compiled for copying. All the nodes of
// a line live in one arena, a struct with one field per node, one array
// per slice of nodes and one per Tokens slice (reflect.StructOf): a line
// costs one allocation, a copy of the template arena, and then only its
// placeholders and links are set.
type shapeTemplate struct {
	types   []lexer.TokenType // the types of the significant tokens, then EOF
	element bool              // the statement is an element statement
	arena   reflect.Value     // the template arena, placeholders in place
	pos     []tplPatch        // lexer.Position fields ← the token's position
	strs    []tplPatch        // string fields ← the token's value
	toks    []tplTokens       // Tokens fields
	ptrs    []tplPatch        // pointer fields ← the node at arg
	lists   []tplList         // slices of nodes ← the arena array at arg
}

// tplPatch sets field of the node in arena field node from arg (a token
// index or an arena field).
type tplPatch struct{ node, field, arg int }

// tplTokens is a Tokens field holding token tok, through the arena array
// at arr.
type tplTokens struct{ node, field, arr, tok int }

// tplList is a slice field holding the nodes elems, through the arena
// array at arr.
type tplList struct {
	node, field, arr int
	elems            []int
}

// compileTemplate compiles a marked template tree (see markTemplate).
func compileTemplate(st *Stmt) *shapeTemplate {
	t := &shapeTemplate{}
	var fields []reflect.StructField
	var vals []reflect.Value
	add := func(typ reflect.Type, v reflect.Value) int {
		fields = append(fields, reflect.StructField{Name: "F" + strconv.Itoa(len(fields)), Type: typ})
		vals = append(vals, v)
		return len(fields) - 1
	}
	var node func(v reflect.Value) int
	node = func(v reflect.Value) int {
		n := add(v.Type(), v)
		for i := range v.NumField() {
			f := v.Field(i)
			switch {
			case f.Type() == positionType:
				if p := f.Interface().(lexer.Position); p.Line < 0 {
					t.pos = append(t.pos, tplPatch{n, i, -p.Line - 1})
				}
			case f.Type() == tokenSlice:
				if toks := f.Interface().([]lexer.Token); len(toks) == 1 {
					arr := add(reflect.ArrayOf(1, positionTokenType), reflect.Value{})
					t.toks = append(t.toks, tplTokens{n, i, arr, -toks[0].Pos.Line - 1})
				}
			case f.Kind() == reflect.String:
				if s := f.String(); strings.HasPrefix(s, placeholderMark) {
					j, _ := strconv.Atoi(s[len(placeholderMark):])
					t.strs = append(t.strs, tplPatch{n, i, j})
				}
			case f.Kind() == reflect.Pointer && !f.IsNil():
				t.ptrs = append(t.ptrs, tplPatch{n, i, node(f.Elem())})
			case f.Kind() == reflect.Slice && !f.IsNil():
				l := tplList{node: n, field: i}
				for j := range f.Len() {
					l.elems = append(l.elems, node(f.Index(j).Elem()))
				}
				l.arr = add(reflect.ArrayOf(f.Len(), f.Type().Elem()), reflect.Value{})
				t.lists = append(t.lists, l)
			}
		}
		return n
	}
	node(reflect.ValueOf(st).Elem())
	t.arena = reflect.New(reflect.StructOf(fields)).Elem()
	for i, v := range vals {
		if v.IsValid() {
			t.arena.Field(i).Set(v)
		}
	}
	return t
}

var positionTokenType = reflect.TypeOf(lexer.Token{})

// build returns a new copy of the template's statement.
func (t *shapeTemplate) build(sig []lexer.Token) *Stmt {
	a := reflect.New(t.arena.Type()).Elem()
	a.Set(t.arena)
	t.link(a)
	t.fill(a, sig)
	return a.Field(0).Addr().Interface().(*Stmt)
}

// link sets the pointers and slices of arena a to a's own nodes and
// arrays.
func (t *shapeTemplate) link(a reflect.Value) {
	for _, p := range t.toks {
		a.Field(p.node).Field(p.field).Set(a.Field(p.arr).Slice3(0, 1, 1))
	}
	for _, p := range t.ptrs {
		a.Field(p.node).Field(p.field).Set(a.Field(p.arg).Addr())
	}
	for _, l := range t.lists {
		arr := a.Field(l.arr)
		for j, e := range l.elems {
			arr.Index(j).Set(a.Field(e).Addr())
		}
		a.Field(l.node).Field(l.field).Set(arr.Slice3(0, len(l.elems), len(l.elems)))
	}
}

// fill sets the placeholders of a linked arena a from the tokens sig.
func (t *shapeTemplate) fill(a reflect.Value, sig []lexer.Token) {
	for _, p := range t.pos {
		*a.Field(p.node).Field(p.field).Addr().Interface().(*lexer.Position) = sig[p.arg].Pos
	}
	for _, p := range t.strs {
		*a.Field(p.node).Field(p.field).Addr().Interface().(*string) = sig[p.arg].Value
	}
	for _, p := range t.toks {
		*a.Field(p.arr).Addr().Interface().(*[1]lexer.Token) = [1]lexer.Token{sig[p.tok]}
	}
}

// scratchTree is one reusable tree of a template (see File.scratchStmt):
// arena, rewritten for every statement built in it, and linked, a copy of
// the template linked to arena's own nodes, which restores it first.
type scratchTree struct {
	arena, linked reflect.Value
}

// buildIn builds the template's statement in the scratch tree s (made on
// first use), overwriting the statement built there before.
func (t *shapeTemplate) buildIn(s *scratchTree, sig []lexer.Token) *Stmt {
	if !s.arena.IsValid() {
		s.arena = reflect.New(t.arena.Type()).Elem()
		s.arena.Set(t.arena)
		t.link(s.arena)
		s.linked = reflect.New(t.arena.Type()).Elem()
		s.linked.Set(s.arena)
	} else {
		s.arena.Set(s.linked)
	}
	t.fill(s.arena, sig)
	return s.arena.Field(0).Addr().Interface().(*Stmt)
}
