package netlist

import (
	"regexp"
	"regexp/syntax"
	"slices"
	"unicode"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"
)

// The line lexer of Parse: the rules of lexDef (lexRules in lexTryOrder,
// the same patterns), applied as participle's lexer applies them — at
// each position the first rule in order whose pattern matches there gives
// the token — with two savings that change no token:
//
//   - only the rules that can match at the character found are tried:
//     each rule's possible first bytes are read from its pattern's syntax
//     tree (firstSet, an over-approximation: an unknown construct allows
//     every byte), so a skipped rule is one that could not have matched;
//   - a pattern made of character classes, literals, greedy repetitions
//     and alternatives that never need backtracking (compileSimple checks
//     it) is matched by walking its syntax tree (simpleNode), without the
//     regexp engine and its allocations; any other pattern goes through
//     regexp as participle would, on the text up to the first character
//     no match can hold (lineRule.chars). Every rule of circuit files is
//     of the first kind, syntax.NumberPattern included.
//
// TestLineLexer checks that the tokens are lexDef's on the corpus and on
// random text.

// lineRule is one lexer rule compiled for lexLine.
type lineRule struct {
	typ    lexer.TokenType
	re     *regexp.Regexp // the anchored pattern, as participle compiles it
	simple simpleNode     // nil: match with re
	// chars are the bytes a match of re can hold (128: any non-ASCII
	// character), valid when cut: re is then run on the text up to the
	// first byte outside them, where every match ends anyway (regexp's
	// cost grows with the length of the text it is given).
	chars byteSet
	cut   bool
}

// lineRules are lexDef's rules in its order; byFirst[b] lists (indexes
// into lineRules, in order) those that can start with byte b, byFirst[128]
// those that can start with a non-ASCII character.
var lineRules, byFirst = compileLineRules(reorderRules(lexRules, lexTryOrder))

func compileLineRules(rules []lexer.SimpleRule) ([]lineRule, [129][]int) {
	var out []lineRule
	var by [129][]int
	for i, r := range rules {
		tree, err := syntax.Parse(r.Pattern, syntax.Perl)
		if err != nil {
			panic(err) // lexDef compiled the same pattern
		}
		lr := lineRule{typ: lexDef.Symbols()[r.Name], re: regexp.MustCompile("^(?:" + r.Pattern + ")")}
		first := firstSet(tree)
		if first.empty { // a pattern that can match nothing is tried everywhere
			first = byteSet{all: true}
		}
		if n, ok := compileSimple(tree, byteSet{}, true, true); ok {
			lr.simple = n
		}
		lr.chars = charSet(tree)
		lr.cut = !lr.chars.all
		out = append(out, lr)
		for b := range 129 {
			if first.all || first.has(b) {
				by[b] = append(by[b], i)
			}
		}
	}
	return out, by
}

// byteSet is a set of first bytes: ASCII bytes, 128 standing for every
// non-ASCII character; all means any byte, empty that the pattern (or what
// follows) may match the empty string.
type byteSet struct {
	bits  [3]uint64
	all   bool
	empty bool
}

func (s byteSet) has(b int) bool { return s.all || s.bits[b/64]&(1<<(b%64)) != 0 }

func (s *byteSet) add(b int) { s.bits[b/64] |= 1 << (b % 64) }

func (s *byteSet) addRange(lo, hi rune) {
	for c := lo; c <= min(hi, 127); c++ {
		s.add(int(c))
	}
	if hi >= 128 {
		s.add(128)
	}
}

func (s byteSet) union(t byteSet) byteSet {
	for i := range s.bits {
		s.bits[i] |= t.bits[i]
	}
	s.all = s.all || t.all
	return s
}

func (s byteSet) disjoint(t byteSet) bool {
	if s.all || t.all {
		return false
	}
	for i := range s.bits {
		if s.bits[i]&t.bits[i] != 0 {
			return false
		}
	}
	return true
}

// firstSet returns the bytes a match of re can start with, and whether
// it can be empty.
func firstSet(re *syntax.Regexp) byteSet {
	var s byteSet
	switch re.Op {
	case syntax.OpLiteral:
		if len(re.Rune) == 0 {
			return byteSet{empty: true}
		}
		c := literalClass(re, 0)
		for i := 0; i+1 < len(c); i += 2 {
			s.addRange(c[i], c[i+1])
		}
	case syntax.OpCharClass:
		for i := 0; i+1 < len(re.Rune); i += 2 {
			s.addRange(re.Rune[i], re.Rune[i+1])
		}
	case syntax.OpAnyCharNotNL:
		s.addRange(0, '\n'-1)
		s.addRange('\n'+1, utf8.MaxRune)
	case syntax.OpCapture:
		return firstSet(re.Sub[0])
	case syntax.OpStar, syntax.OpQuest:
		s = firstSet(re.Sub[0])
		s.empty = true
	case syntax.OpPlus:
		return firstSet(re.Sub[0])
	case syntax.OpConcat:
		s.empty = true
		for _, sub := range re.Sub {
			f := firstSet(sub)
			s = s.union(f)
			if !f.empty {
				s.empty = false
				break
			}
		}
	case syntax.OpAlternate:
		for _, sub := range re.Sub {
			f := firstSet(sub)
			s = s.union(f)
			s.empty = s.empty || f.empty
		}
	case syntax.OpEmptyMatch:
		return byteSet{empty: true}
	default: // any character, assertions, counted repeats: anything
		return byteSet{all: true, empty: true}
	}
	return s
}

// literalClass returns the characters rune i of a literal matches, as
// ranges: itself, or under (?i) every rune of its simple case folding
// orbit ("E", "e"; "k", "K" and the Kelvin sign), as regexp matches it.
func literalClass(re *syntax.Regexp, i int) []rune {
	r := re.Rune[i]
	if re.Flags&syntax.FoldCase == 0 {
		return []rune{r, r}
	}
	orbit := []rune{r}
	for f := unicode.SimpleFold(r); f != r; f = unicode.SimpleFold(f) {
		orbit = append(orbit, f)
	}
	slices.Sort(orbit)
	var out []rune
	for _, c := range orbit {
		out = append(out, c, c)
	}
	return out
}

// charSet returns the bytes a match of re can hold (all for a construct
// it does not know, an assertion included, whose truth could depend on the
// text after the match).
func charSet(re *syntax.Regexp) byteSet {
	var s byteSet
	switch re.Op {
	case syntax.OpLiteral, syntax.OpCharClass, syntax.OpAnyCharNotNL:
		s = firstSet(re)
		if re.Op == syntax.OpLiteral {
			for i := range re.Rune {
				c := literalClass(re, i)
				for k := 0; k+1 < len(c); k += 2 {
					s.addRange(c[k], c[k+1])
				}
			}
		}
	case syntax.OpCapture, syntax.OpStar, syntax.OpPlus, syntax.OpQuest, syntax.OpConcat, syntax.OpAlternate:
		for _, sub := range re.Sub {
			s = s.union(charSet(sub))
		}
	case syntax.OpEmptyMatch:
	default:
		return byteSet{all: true}
	}
	s.empty = false
	return s
}

// simpleNode matches a pattern without backtracking: the end of the match
// at byte i of s, or ok false.
type simpleNode interface {
	match(s string, i int) (end int, ok bool)
}

// classNode matches one character of a class (ranges as in syntax.Regexp).
type classNode struct{ ranges []rune }

func (c classNode) match(s string, i int) (int, bool) {
	if i >= len(s) {
		return i, false
	}
	r, size := rune(s[i]), 1
	if r >= utf8.RuneSelf {
		r, size = utf8.DecodeRuneInString(s[i:])
	}
	for k := 0; k+1 < len(c.ranges); k += 2 {
		if c.ranges[k] <= r && r <= c.ranges[k+1] {
			return i + size, true
		}
	}
	return i, false
}

// seqNode matches its parts one after another.
type seqNode []simpleNode

func (q seqNode) match(s string, i int) (int, bool) {
	for _, n := range q {
		var ok bool
		if i, ok = n.match(s, i); !ok {
			return i, false
		}
	}
	return i, true
}

// repNode matches its part greedily, at least min times and at most max
// (-1: no bound); an attempt that fails leaves the position where it
// started.
type repNode struct {
	sub      simpleNode
	min, max int
}

func (r repNode) match(s string, i int) (int, bool) {
	n := 0
	for r.max < 0 || n < r.max {
		j, ok := r.sub.match(s, i)
		if !ok || j == i {
			break
		}
		i = j
		n++
	}
	return i, n >= r.min
}

// altNode matches the first of its alternatives that matches.
type altNode []simpleNode

func (a altNode) match(s string, i int) (int, bool) {
	for _, n := range a {
		if j, ok := n.match(s, i); ok {
			return j, true
		}
	}
	return i, false
}

// compileSimple compiles re into a simpleNode when matching it needs no
// backtracking, given follow, what may come after it in the pattern, and
// restEmpty, whether all that follows it to the end of the pattern may be
// empty; top is true for the whole pattern, where an alternative that
// matches ends the match.
//
// A repetition (or an optional part) is taken each time its part can
// start and match; that is the leftmost-first choice (regexp's, as a
// backtracking matcher would find it) when what follows cannot start at
// the same character (then the other choice could not continue), or when
// all that follows may be empty (then the first choice cannot fail
// later). A repetition that starts and fails stops where it started,
// which is where backtracking would resume.
func compileSimple(re *syntax.Regexp, follow byteSet, restEmpty, top bool) (simpleNode, bool) {
	switch re.Op {
	case syntax.OpLiteral:
		if len(re.Rune) == 0 {
			return nil, false
		}
		q := make(seqNode, len(re.Rune))
		for i := range re.Rune {
			q[i] = classNode{literalClass(re, i)}
		}
		if len(q) == 1 {
			return q[0], true
		}
		return q, true
	case syntax.OpCharClass:
		return classNode{re.Rune}, true
	case syntax.OpAnyCharNotNL:
		return classNode{[]rune{0, '\n' - 1, '\n' + 1, utf8.MaxRune}}, true
	case syntax.OpCapture:
		return compileSimple(re.Sub[0], follow, restEmpty, top)
	case syntax.OpStar, syntax.OpPlus, syntax.OpQuest:
		f := firstSet(re.Sub[0])
		if f.empty || !f.disjoint(follow) && !restEmpty {
			return nil, false
		}
		sub, ok := compileSimple(re.Sub[0], f.union(follow), restEmpty, false)
		if !ok {
			return nil, false
		}
		r := repNode{sub: sub, min: 0, max: -1}
		switch re.Op {
		case syntax.OpPlus:
			r.min = 1
		case syntax.OpQuest:
			r.max = 1
		}
		return r, true
	case syntax.OpConcat:
		q := make(seqNode, len(re.Sub))
		after, afterEmpty := follow, restEmpty
		for i := len(re.Sub) - 1; i >= 0; i-- {
			n, ok := compileSimple(re.Sub[i], after, afterEmpty, false)
			if !ok {
				return nil, false
			}
			q[i] = n
			f := firstSet(re.Sub[i])
			if f.empty {
				after = f.union(after)
			} else {
				after, afterEmpty = f, false
			}
		}
		return q, true
	case syntax.OpAlternate:
		// Alternatives that cannot start alike: at most one can match
		// (or, for the whole pattern, the first that matches ends it).
		var a altNode
		var seen byteSet
		for _, sub := range re.Sub {
			f := firstSet(sub)
			if f.empty || !top && !f.disjoint(seen) {
				return nil, false
			}
			seen = seen.union(f)
			n, ok := compileSimple(sub, follow, restEmpty, top)
			if !ok {
				return nil, false
			}
			a = append(a, n)
		}
		return a, true
	}
	return nil, false
}

// matchAt returns the end of rule r's match at byte i of line, ok false
// when it does not match there.
func (r *lineRule) matchAt(line string, i int) (end int, ok bool) {
	if r.simple != nil {
		return r.simple.match(line, i)
	}
	text := line[i:]
	if r.cut {
		for j := 0; j < len(text); j++ {
			b := int(text[j])
			if b >= utf8.RuneSelf {
				b = 128
			}
			if !r.chars.has(b) {
				text = text[:j]
				break
			}
		}
	}
	if loc := r.re.FindStringIndex(text); loc != nil {
		return i + loc[1], true
	}
	return i, false
}

// nextToken returns the type and end of the token at byte i of line, ok
// false when no rule matches or the first that matches matches nothing
// (where lexDef fails).
func nextToken(line string, i int) (typ lexer.TokenType, end int, ok bool) {
	b := int(line[i])
	if b >= utf8.RuneSelf {
		b = 128
	}
	for _, k := range byFirst[b] {
		r := &lineRules[k]
		if j, ok := r.matchAt(line, i); ok {
			return r.typ, j, j > i
		}
	}
	return 0, i, false
}
