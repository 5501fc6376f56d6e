package netlist

import (
	"math/rand/v2"
	"regexp"
	resyntax "regexp/syntax"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// lexLine must give participle's tokens (lexDef, the same rules tried one
// after another by regular expression): types, values and positions, on
// every line of the corpus and on random lines, with the same failures.
func TestLineLexer(t *testing.T) {
	lines := corpusLines(t)
	rng := rand.New(rand.NewPCG(5, 6))
	alphabet := []rune("aZ_09.e+-±#\"\\ \t\r\f\v\ufeff()*,/:=@^%°µΩk∞−·E5x\x01")
	for range 20000 {
		r := make([]rune, 1+rng.IntN(40))
		for i := range r {
			r[i] = alphabet[rng.IntN(len(alphabet))]
		}
		lines = append(lines, string(r))
	}
	lines = append(lines, "a.b.c a. a.1 a..b 1..2 1e 1e+ 1e+5k 4k7 .5 5. \"x\\\"y\" \"open \\", "\xff\xfe bad", "R1: resistor (n0, n1) 1k ±5% # note")
	for _, l := range lines {
		checkLineLexer(t, l)
	}
	// The frequent tokens are the ones matched without regexp.
	for _, name := range []string{"Ident", "Space", "Punct", "Comment", "PlusMinus", "Range", "Value", "String", "Newline", "Bad"} {
		for _, r := range lineRules {
			if r.typ == lexDef.Symbols()[name] && r.simple == nil {
				t.Errorf("rule %s is matched by regexp", name)
			}
		}
	}
}

// compileSimple takes a pattern only when walking it without backtracking
// finds regexp's match (leftmost-first, greedy): patterns that need
// backtracking are refused, and the accepted ones agree with regexp on
// random text.
func TestSimplePatterns(t *testing.T) {
	for _, c := range []struct {
		pattern string
		simple  bool // from the rule: disjoint starts, nothing empty
	}{
		{`[a-z]+`, true},
		{`#[^\n]*`, true},
		{`[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_0-9]+)*`, true},
		{`±|\+-`, true},
		{`\.\.`, true},
		{`"(\\.|[^"\\\n])*"`, true},
		{`[ab]c|a`, true}, // the whole pattern: the first alternative that matches
		{`a*a`, false},
		{`[a-z]*[0-9a]`, false},
		{`(ab|[ab]c)d`, false},
		{`(ab|ac)d`, true}, // read as a[bc]d
		{`(a|)b`, false},
		{`(a*)*`, false},
		{`a{2,3}`, false},
		{`(?i)ab`, true},
		{`(?i)k+`, true},
		{`a?ab`, false},
		{`(a\.b?)*\.`, true},
		{`(a\.?)*\.`, false},
		{`(a\.b?)*c`, true},
		{`x(a|b)+y`, true},
		{`[ab]+a*`, true}, // the rest may be empty: greedy is leftmost-first
		{`(ab)?a*`, true},
		{`(ab)?a`, false},
		{`[a.]+\.?b`, false},
		{syntax.NumberPattern, true},
		{`(\d+(\.\d+)?|\.\d+)([eE][+-]?\d+)?x`, true},
		{`\d+([eE][+-]?\d+)?e`, false},
	} {
		tree, err := resyntax.Parse(c.pattern, resyntax.Perl)
		if err != nil {
			t.Fatal(err)
		}
		n, ok := compileSimple(tree, byteSet{}, true, true)
		if ok != c.simple {
			t.Errorf("%s: simple %v, want %v", c.pattern, ok, c.simple)
			continue
		}
		if !ok {
			continue
		}
		re := regexp.MustCompile("^(?:" + c.pattern + ")")
		rng := rand.New(rand.NewPCG(7, uint64(len(c.pattern))))
		alphabet := []rune("ab.xyzc09_\"\\\n#A+-±deEkK\u212a%°µΩ5")
		for range 5000 {
			var b strings.Builder
			for range rng.IntN(12) {
				b.WriteRune(alphabet[rng.IntN(len(alphabet))])
			}
			s := b.String()
			loc := re.FindStringIndex(s)
			end, matched := n.match(s, 0)
			if matched != (loc != nil) || matched && end != loc[1] {
				t.Fatalf("%s on %q: simple (%d, %v), regexp %v", c.pattern, s, end, matched, loc)
			}
		}
	}
}

// checkLineLexer fails t when lexLine's tokens of one line (no newline)
// differ from participle's (lexDef), or one fails where the other does
// not.
func checkLineLexer(t *testing.T, l string) {
	t.Helper()
	want, wantErr := lexer.ConsumeAll(must(lexDef.LexString("x", l)))
	got, _, err := lexLine("x", l, 100, 7, nil)
	if (err == nil) != (wantErr == nil) {
		t.Fatalf("%q: error %v, participle's %v", l, err, wantErr)
	}
	if err != nil {
		return
	}
	want = want[:len(want)-1] // participle's EOF
	significant := 0
	for _, w := range want {
		if w.Type != symSpace && w.Type != symComment {
			significant++
		}
	}
	if significant == 0 {
		want = nil
	}
	if len(got) != len(want) {
		t.Fatalf("%q: %d tokens, participle's %d", l, len(got), len(want))
	}
	for i, w := range want {
		w.Pos.Offset += 100
		w.Pos.Line = 7
		if got[i] != w {
			t.Fatalf("%q: token %d is %v, participle's %v", l, i, got[i], w)
		}
	}
}

// FuzzLineLexer: lexLine gives participle's tokens on any line of UTF-8
// text (lines hold no newline and files are checked to be UTF-8 first).
func FuzzLineLexer(f *testing.F) {
	f.Add("R1: resistor (n0, n1) 1k ±5% # note")
	f.Add("let x = 1e-3*sqrt(2)/(4k7 + .5) \"s\\\"\" 1..2 a.b.c a. 10 kΩ")
	f.Fuzz(func(t *testing.T, l string) {
		if strings.Contains(l, "\n") || !utf8.ValidString(l) || len(l) > 1<<12 {
			t.Skip()
		}
		checkLineLexer(t, l)
	})
}
