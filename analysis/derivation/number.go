package derivation

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"
)

// siPrefix maps the accepted prefix letters to their factors (SI brochure,
// 9th edition, table 7). Both u and µ mean micro.
var siPrefix = map[string]float64{
	"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "m": 1e-3,
	"k": 1e3, "M": 1e6, "G": 1e9, "T": 1e12,
}

// parseNumber converts a Number token (digits, optional exponent, optional
// single SI prefix letter) to its SI value.
func parseNumber(tok string) (float64, error) {
	i := strings.IndexFunc(tok, func(r rune) bool {
		return (r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r == '_' || r == 'µ') && r != 'e' && r != 'E'
	})
	// An exponent letter is part of the mantissa only when digits follow.
	mant, suffix := tok, ""
	if i >= 0 {
		mant, suffix = tok[:i], tok[i:]
	}
	if j := strings.IndexAny(mant, "eE"); j >= 0 {
		exp := strings.TrimLeft(mant[j+1:], "+-")
		if exp == "" || strings.TrimLeft(exp, "0123456789") != "" {
			mant, suffix = tok[:j], tok[j:]
		}
	}
	v, err := strconv.ParseFloat(mant, 64)
	if err != nil {
		return 0, fmt.Errorf("malformed number %q", tok)
	}
	if suffix == "" {
		return v, nil
	}
	if f, ok := siPrefix[suffix]; ok {
		return v * f, nil
	}
	if r, n := utf8.DecodeRuneInString(suffix); n < len(suffix) {
		if _, ok := siPrefix[string(r)]; ok {
			return 0, fmt.Errorf("number %q carries %q after its prefix: write numbers without units, and * between factors", tok, suffix[n:])
		}
	}
	return 0, fmt.Errorf("number %q has an unknown suffix %q (SI prefixes f p n u µ m k M G T; no units; write * between factors)", tok, suffix)
}
