package syntax

import "unicode/utf8"

// siPrefix is one accepted SI prefix: its factor and the decimal exponent
// of that factor (scale == 10^exp exactly as a float64 literal).
type siPrefix struct {
	scale float64
	exp   int
}

// siPrefixes are the SI prefixes nodal accepts, case-sensitive (SI
// Brochure, BIPM, 9th edition 2019, table 7). Both U+00B5 MICRO SIGN and
// U+03BC GREEK SMALL LETTER MU are accepted for micro; "u" is the ASCII
// stand-in (common practice). This is the one prefix table of the
// program: every grammar and formatter looks prefixes up here.
var siPrefixes = map[rune]siPrefix{
	'f': {1e-15, -15}, 'p': {1e-12, -12}, 'n': {1e-9, -9},
	'u': {1e-6, -6}, 'µ': {1e-6, -6}, 'μ': {1e-6, -6}, 'm': {1e-3, -3},
	'k': {1e3, 3}, 'M': {1e6, 6}, 'G': {1e9, 9}, 'T': {1e12, 12},
}

// engPrefixes are the symbols PrefixSymbol returns, by exponent/3 + 5.
var engPrefixes = [...]string{"f", "p", "n", "µ", "m", "", "k", "M", "G", "T"}

// PrefixScale returns the factor of the SI prefix written as s, which must
// be exactly one prefix symbol: PrefixScale("k") is 1e3, PrefixScale("µ")
// and PrefixScale("u") are 1e-6. Accepted: f p n u µ μ m k M G T
// (case-sensitive). ok is false for anything else, including "".
func PrefixScale(s string) (scale float64, ok bool) {
	p, ok := prefixOf(s)
	return p.scale, ok
}

// PrefixExponent returns the decimal exponent of the SI prefix written as
// s (PrefixExponent("n") is −9), for callers that need exact arithmetic.
// It accepts the same symbols as PrefixScale; ok is false for anything else.
func PrefixExponent(s string) (exp int, ok bool) {
	p, ok := prefixOf(s)
	return p.exp, ok
}

// PrefixSymbol returns the SI prefix for the power of 1000 exp3
// (PrefixSymbol(1) is "k", PrefixSymbol(-2) is "µ", PrefixSymbol(0) is ""),
// as engineering notation writes it; ok is false outside f…T (exp3 < −5
// or > 4).
func PrefixSymbol(exp3 int) (symbol string, ok bool) {
	if exp3 < -5 || exp3 > 4 {
		return "", false
	}
	return engPrefixes[exp3+5], true
}

// prefixOf looks up s when it is exactly one rune long.
func prefixOf(s string) (siPrefix, bool) {
	r, size := utf8.DecodeRuneInString(s)
	if size == 0 || size != len(s) {
		return siPrefix{}, false
	}
	p, ok := siPrefixes[r]
	return p, ok
}
