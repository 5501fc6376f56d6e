package netlist

import (
	"fmt"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"github.com/alecthomas/participle/v2/lexer"
)

// corpusTexts returns the circuit texts of the repository: every .nodal
// file, the committed FuzzParse corpus and the test sources of this
// package.
func corpusTexts(t *testing.T) []string {
	t.Helper()
	texts := []string{allForms, blockSrc, base, string(ladderSource(3))}
	err := filepath.WalkDir("..", func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() || !strings.HasSuffix(path, ".nodal") {
			return nil
		}
		b, err := os.ReadFile(path)
		texts = append(texts, string(b))
		return err
	})
	if err != nil {
		t.Fatal(err)
	}
	seeds, err := filepath.Glob("testdata/fuzz/FuzzParse/*")
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range seeds {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		for _, l := range strings.Split(string(b), "\n") {
			if s, ok := strings.CutPrefix(l, "[]byte("); ok {
				if u, err := strconv.Unquote(strings.TrimSuffix(s, ")")); err == nil {
					texts = append(texts, u)
				}
			}
		}
	}
	if len(texts) < 40 {
		t.Fatalf("corpus has only %d texts", len(texts))
	}
	return texts
}

// corpusLines returns every line of the corpus and, for each, variants
// with its words and numbers replaced by others (grammar words among
// them), so that many lines share a shape with different values, and
// random lines of circuit-language fragments.
func corpusLines(t *testing.T) []string {
	t.Helper()
	rng := rand.New(rand.NewPCG(1, 2))
	words := []string{"a", "R7", "n12", "gnd", "source", "from", "fixed", "normal", "within", "end", "let", "title", "x.y", "_q"}
	numbers := []string{"0", "1k", "4k7", "10n", "2.5e-3", "5%", "1..2", "7"}
	var out []string
	for _, text := range corpusTexts(t) {
		for _, l := range strings.Split(text, "\n") {
			out = append(out, l)
			for range 3 {
				f := strings.Fields(l)
				for i, w := range f {
					switch {
					case rng.IntN(3) > 0:
					case w[0] >= 'a' && w[0] <= 'z' || w[0] >= 'A' && w[0] <= 'Z':
						f[i] = words[rng.IntN(len(words))] + strings.TrimLeft(w, "abcdefghijklmnopqrstuvwxyzABCDEFGHIJKLMNOPQRSTUVWXYZ0123456789_.")
					case w[0] >= '0' && w[0] <= '9':
						f[i] = numbers[rng.IntN(len(numbers))] + strings.TrimLeft(w, "0123456789.eEkKmMnNpPuUµ%")
					}
				}
				out = append(out, strings.Join(f, " "))
			}
		}
	}
	frags := []string{"R1", ":", " ", "resistor", "voltage", "source", "(", ")", ",", "a", "gnd", "1k", "10 n", "=", "±", "+-", "5%", "..", "@", "+", "-", "*", "/", "^", "let", "require", "within", "below", "response", "v", "i", "from", "block", "end", "title", `"t"`, "#c", "x.y", "−", "·", "\t", "2R2", "fixed", "normal", "phase"}
	for range 3000 {
		var b strings.Builder
		for range 1 + rng.IntN(14) {
			b.WriteString(frags[rng.IntN(len(frags))])
			if rng.IntN(2) == 0 {
				b.WriteByte(' ')
			}
		}
		out = append(out, b.String())
	}
	return out
}

// lineTokens lexes one line as Parse does, ending it with EOF (nil for a
// line with no significant token).
func lineTokens(t *testing.T, l string) []lexer.Token {
	t.Helper()
	toks, over, err := lexLine("memo", l, 0, 1, nil)
	if err != nil || over >= 0 {
		t.Fatalf("lexLine(%q): over %d, %v", l, over, err)
	}
	if len(toks) == 0 {
		return nil
	}
	return append(toks, lexer.EOFToken(lexer.Position{Filename: "memo", Offset: len(l), Line: 1, Column: len(l) + 1}))
}

// TestShapeMemoMatchesParticiple checks that the memoised parse of every
// corpus and random line, through one memo so that lines share templates,
// is deep-equal to participle's plain parse and fails exactly when it
// does, with the same error; and that templates were used.
func TestShapeMemoMatchesParticiple(t *testing.T) {
	memo := newShapeMemo()
	hits, parsed := 0, 0
	for _, l := range corpusLines(t) {
		toks := lineTokens(t, l)
		if toks == nil {
			continue
		}
		toks = mergeSpacedUnits(toks)
		want, wantErr := parseTokens(toks)
		_, known := memo.templates[string(shapeKey(memo, toks))]
		tplBefore := known && memo.templates[string(memo.key)] != nil
		got, _, err := memo.parse(toks)
		if (err == nil) != (wantErr == nil) || err != nil && err.Error() != wantErr.Error() {
			t.Fatalf("%q: memo error %v, participle %v", l, err, wantErr)
		}
		if err != nil {
			continue
		}
		parsed++
		if tplBefore {
			hits++
		}
		if !reflect.DeepEqual(got, want) {
			t.Fatalf("%q: memoised tree differs from participle's", l)
		}
	}
	if hits < parsed/4 || hits == 0 {
		t.Fatalf("templates served only %d of %d parsed lines", hits, parsed)
	}
	t.Logf("%d lines parsed, %d from templates, %d shapes", parsed, hits, len(memo.templates))
}

// shapeKey computes the memo key of a line (as memo.parse will).
func shapeKey(m *shapeMemo, toks []lexer.Token) []byte {
	if !m.shape(toks) {
		return []byte("\xff unmemoised")
	}
	return m.key
}

// TestShapeMemoBounded checks that a memo holding maxShapes shapes adds
// no more and still parses a line of a new shape as participle does.
func TestShapeMemoBounded(t *testing.T) {
	full := newShapeMemo()
	for i := range maxShapes {
		full.templates[strconv.Itoa(i)] = nil
	}
	for _, l := range []string{"R1: resistor (a, b) 1k", "R1: resistor (a, b) 1k"} {
		toks := lineTokens(t, l)
		want, _ := parseTokens(toks)
		got, _, err := full.parse(toks)
		if err != nil || !reflect.DeepEqual(got, want) || len(full.templates) != maxShapes {
			t.Fatalf("full memo: %v, %d templates", err, len(full.templates))
		}
	}
}

// TestGrammarWords checks that the literals read from the grammar tags
// hold the statement keywords and the punctuation.
func TestGrammarWords(t *testing.T) {
	for _, w := range []string{"title", "let", "block", "end", "require", "within", "below", "above", "response", "from", "source", "(", ")", ",", "=", ":", "@", "+", "-", "*", "/", "^"} {
		if !grammarWords[w] {
			t.Errorf("grammarWords lacks %q", w)
		}
	}
	if grammarWords["resistor"] || grammarWords["Ident"] {
		t.Errorf("grammarWords holds a non-literal: %v", grammarWords)
	}
}

// TestLexTryOrder checks that lexDef (lexRules in lexTryOrder) tokenises
// every corpus and random line exactly as lexRules in their reading order.
func TestLexTryOrder(t *testing.T) {
	ref := lexer.MustSimple(lexRules)
	name := func(d lexer.Definition, tt lexer.TokenType) string {
		for n, v := range d.Symbols() {
			if v == tt {
				return n
			}
		}
		return "?"
	}
	lines := corpusLines(t)
	rng := rand.New(rand.NewPCG(3, 4))
	alphabet := []rune("aZ_09.e+-±#\"\\ \t\r\f\v\ufeff()*,/:=@^%°µΩk∞−·\n")
	for range 3000 {
		r := make([]rune, 1+rng.IntN(30))
		for i := range r {
			r[i] = alphabet[rng.IntN(len(alphabet))]
		}
		lines = append(lines, string(r))
	}
	lines = append(lines, strings.Join(lines[:200], "\n"))
	for _, l := range lines {
		a, errA := lexer.ConsumeAll(must(lexDef.LexString("x", l)))
		b, errB := lexer.ConsumeAll(must(ref.LexString("x", l)))
		if (errA == nil) != (errB == nil) || len(a) != len(b) {
			t.Fatalf("%q: %d tokens (%v) vs reading order %d (%v)", l, len(a), errA, len(b), errB)
		}
		for i := range a {
			if a[i].Value != b[i].Value || a[i].Pos != b[i].Pos || name(lexDef, a[i].Type) != name(ref, b[i].Type) {
				t.Fatalf("%q: token %d is %v, reading order %v", l, i, a[i], b[i])
			}
		}
	}
}

func must(l lexer.Lexer, err error) lexer.Lexer {
	if err != nil {
		panic(err)
	}
	return l
}

// TestParseParallelMatchesOnePiece checks that a file parsed in pieces
// (blocks and comments across the cuts, lines of several shapes) gives
// the statements of the one-piece parse, and that a file with an error
// is left to the one-piece parse.
func TestParseParallelMatchesOnePiece(t *testing.T) {
	var b strings.Builder
	b.WriteString("title \"pieces\"\nlet Rb = 1k ±1%\nblock cell (a, b) r=1k\nR: resistor (a, b) r\nC: capacitor (b, gnd) 1n\nend\nV: voltage source (n0, gnd) 1\n")
	for i := 1; b.Len() < 3*parallelMinBytes; i++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) Rb*2 # section %d\n\nX%d: cell (n%d, m%d) r=2k\nC%d: capacitor (m%d, 0) 10 n\n", i, i-1, i, i, i, i, i, i, i)
		if i%997 == 0 {
			b.WriteString("block inner (p)\nR: resistor (p, gnd) 1\n# inside\nend\n")
			fmt.Fprintf(&b, "Y%d: inner (n%d)\n", i, i)
		}
	}
	src := []byte(b.String())
	for _, procs := range []int{2, 3} {
		f := newFile("p.nodal", src)
		flat, ok := f.parseParallel(src, string(src), procs)
		if !ok {
			t.Fatalf("procs %d: not parsed in pieces", procs)
		}
		one := f.parseLines(src, string(src), 0, len(src), 1, nil)
		if len(one.diags) > 0 || !reflect.DeepEqual(flat, one.flat) {
			t.Fatalf("procs %d: %d statements in pieces, %d in one piece (diags %v)", procs, len(flat), len(one.flat), one.diags)
		}
	}
	bad := append(append([]byte(nil), src...), "R: resistor (a b) 1\n"...)
	f := newFile("p.nodal", bad)
	if _, ok := f.parseParallel(bad, string(bad), 2); ok {
		t.Fatal("a file with a syntax error was parsed in pieces")
	}
}

// TestDeferredStmts checks that Load's parse, with element statements
// deferred and built on demand, gives the statements and the diagnostics
// of Parse, for every corpus text and a large file parsed in pieces.
func TestDeferredStmts(t *testing.T) {
	deferred := 0
	for _, text := range append(corpusTexts(t), bigDeferredText()) {
		want, wantErr := Parse("d.nodal", []byte(text))
		got, err := parseFile("d.nodal", []byte(text), true)
		if (err == nil) != (wantErr == nil) || err != nil && err.Error() != wantErr.Error() {
			t.Fatalf("deferred parse error %v, Parse %v", err, wantErr)
		}
		if got.Stmts != nil || got.stmtCount() != len(want.Stmts) {
			t.Fatalf("%d deferred statements, Parse %d", got.stmtCount(), len(want.Stmts))
		}
		for i, st := range want.Stmts {
			if got.peek(i) == nil {
				deferred++
			}
			if b := got.stmt(i); !reflect.DeepEqual(b, st) {
				t.Fatalf("statement %d at %v differs from Parse's", i, st.Pos)
			}
		}
	}
	if deferred < 1000 {
		t.Fatalf("only %d statements were deferred", deferred)
	}
}

// bigDeferredText is a file over three parallel pieces long whose element
// lines are deferred by Load, with block instances among them.
func bigDeferredText() string {
	var big strings.Builder
	big.WriteString("V: voltage source (n0, gnd) 1\nblock cell (a, b)\nR: resistor (a, b) 1k\nend\n")
	for i := 1; big.Len() < 3*parallelMinBytes; i++ {
		fmt.Fprintf(&big, "R%d: resistor (n%d, n%d) 1kΩ # é %d\nX%d: cell (n%d, m%d)\n\tC%d: capacitor (m%d, 0) 10 n\n", i, i-1, i, i, i, i, i, i, i)
	}
	return big.String()
}

// Load builds each deferred statement in one reused tree per line shape
// (File.scratchStmt); its circuit, diagnostics and Vary must be those of
// Elaborate over Parse, which builds every tree anew. A value kept from a
// reused tree would be overwritten by the lines after it and differ here.
func TestLoadMatchesElaborate(t *testing.T) {
	texts := append(corpusTexts(t), bigDeferredText(), strings.TrimSuffix(bigDeferredText(), "\n"), strings.ReplaceAll(bigDeferredText(), "\n", "\r\n"),
		"let K = 2\nV: voltage source (a, gnd) 1 phase=10\nR1: resistor (a, b) K*1k ±1%\nR2: resistor (b, gnd) 2k ±2% normal\nE1: voltage source (c, gnd) 3*v(a, b)\nF1: current source (c, gnd) 2*i(V)\nR3: resistor (c, gnd) 1k\n")
	compared := 0
	for _, text := range texts {
		got, err := Load("m.nodal", []byte(text), nil)
		f, perr := Parse("m.nodal", []byte(text))
		var want *Circuit
		wantErr := perr
		if perr == nil {
			want, wantErr = Elaborate(f, nil)
		}
		if (err == nil) != (wantErr == nil) || err != nil && err.Error() != wantErr.Error() {
			t.Fatalf("Load error %v, Elaborate %v", err, wantErr)
		}
		if err != nil {
			continue
		}
		compared++
		factors := make([]float64, len(want.Variations))
		for i := range factors {
			factors[i] = 1 + 0.01*float64(i%7)
		}
		vg, errG := got.Vary(factors)
		vw, errW := want.Vary(factors)
		if (errG == nil) != (errW == nil) {
			t.Fatalf("Vary: %v vs %v", errG, errW)
		}
		for _, c := range []*Circuit{got, want, vg, vw} {
			if c != nil {
				c.model = nil
			}
		}
		if !reflect.DeepEqual(got, want) || !reflect.DeepEqual(vg, vw) {
			t.Fatalf("%.60q: Load's circuit differs from Elaborate's", text)
		}
	}
	if compared < 10 {
		t.Fatalf("only %d circuits compared", compared)
	}
}
