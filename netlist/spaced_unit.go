package netlist

import (
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// mergeSpacedUnits joins a number and a prefix or unit written after a
// space, SI style ("10 kΩ", "10 k", "100 nF", "5 %"), into one Value token
// ("10 kΩ", read as 10kΩ), so a file reads such a value as a flag does
// (syntax.ParseValue ignores blanks). The word is taken only when it
// directly follows a bare number (one ending in a digit) after blanks on
// the same line, is made of letters and Ω µ % °, is not followed by "="
// or "(" (an option or a call), and makes a valid number when attached
// ("1"+word parses). Since a number followed by a name is otherwise a
// syntax error, no valid file changes meaning.
// toks itself is returned when nothing merges (most lines: no copy).
func mergeSpacedUnits(toks []lexer.Token) []lexer.Token {
	var out []lexer.Token // nil until the first merge
	for i := 0; i < len(toks); i++ {
		t := toks[i]
		if out != nil {
			out = append(out, t)
		}
		if t.Type != symValue || !endsInDigit(t.Value) || i+2 >= len(toks) || toks[i+1].Type != symSpace {
			continue
		}
		j, word := i+2, ""
		for j < len(toks) && isWordPiece(toks[j]) && (j == i+2 || adjacent(toks[j-1], toks[j])) {
			word += toks[j].Value
			j++
		}
		if word == "" || followedByOptionOrCall(toks, j) {
			continue
		}
		// "1 Meg" is merged too, so its error says that mega is M.
		meg := len(word) >= 3 && strings.EqualFold(word[:3], "meg")
		if n, err := syntax.ParseNumber("1" + word); !meg && (err != nil || (n.Unit == "" && n.Exp10 == 0)) {
			continue
		}
		if out == nil {
			out = append(make([]lexer.Token, 0, len(toks)), toks[:i+1]...)
		}
		merged := t
		merged.Value = t.Value + toks[i+1].Value + word
		out[len(out)-1] = merged
		i = j - 1
	}
	if out == nil {
		return toks
	}
	return out
}

func endsInDigit(s string) bool {
	r, _ := utf8.DecodeLastRuneInString(s)
	return r >= '0' && r <= '9'
}

// isWordPiece: an Ident or a Bad letter-like character that can be part
// of a unit word.
func isWordPiece(t lexer.Token) bool {
	switch t.Type {
	case symIdent:
		return !strings.Contains(t.Value, ".")
	case symBad:
		r, _ := utf8.DecodeRuneInString(t.Value)
		return unicode.IsLetter(r) || strings.ContainsRune("Ω%°µ", r)
	}
	return false
}

func adjacent(a, b lexer.Token) bool { return a.Pos.Offset+len(a.Value) == b.Pos.Offset }

// followedByOptionOrCall reports whether the next significant token at or
// after j is "=" or "(".
func followedByOptionOrCall(toks []lexer.Token, j int) bool {
	for ; j < len(toks); j++ {
		switch {
		case toks[j].Type == symSpace:
			continue
		case toks[j].Value == "=" || toks[j].Value == "(":
			return true
		}
		return false
	}
	return false
}
