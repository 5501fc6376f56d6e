package derivation

import (
	"fmt"
	"strconv"
	"strings"
	"unicode/utf8"

	"nodal/netlist"
)

// parseNumber converts a Number token (digits, optional exponent, optional
// single SI prefix letter, looked up in netlist's prefix table) to its SI
// value.
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
	if f, ok := netlist.PrefixScale(suffix); ok {
		return v * f, nil
	}
	if r, n := utf8.DecodeRuneInString(suffix); n < len(suffix) {
		if _, ok := netlist.PrefixScale(string(r)); ok {
			return 0, fmt.Errorf("number %q carries %q after its prefix: write numbers without units, and * between factors", tok, suffix[n:])
		}
	}
	return 0, fmt.Errorf("number %q has an unknown suffix %q (SI prefixes f p n u µ m k M G T; no units; write * between factors)", tok, suffix)
}
