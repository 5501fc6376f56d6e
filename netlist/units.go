package netlist

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Unit symbols of the circuit language. Every literal's unit is normalised
// to one of these ("ohm" becomes "Ω").
const (
	UnitOhm     = "Ω"
	UnitFarad   = "F"
	UnitHenry   = "H"
	UnitHertz   = "Hz"
	UnitDegree  = "deg"
	UnitVolt    = "V"
	UnitAmpere  = "A"
	UnitSiemens = "S"
	UnitSecond  = "s"
	UnitDecibel = "dB"
	UnitPercent = "%"
)

// unitSymbols maps every accepted spelling to its normalised symbol.
var unitSymbols = map[string]string{
	"Ω": UnitOhm, "\u2126": UnitOhm /* OHM SIGN */, "ohm": UnitOhm,
	"F": UnitFarad, "H": UnitHenry, "Hz": UnitHertz, "deg": UnitDegree,
	"V": UnitVolt, "A": UnitAmpere, "S": UnitSiemens, "s": UnitSecond,
	"dB": UnitDecibel, "%": UnitPercent,
}

// noPrefixUnits are units that never take an SI prefix in nodal (neither on
// input nor in output).
var noPrefixUnits = map[string]bool{UnitDegree: true, UnitDecibel: true, UnitPercent: true}

// siPrefix is one accepted SI prefix: its factor and the decimal exponent
// of that factor (scale == 10^exp exactly as a float64 literal).
type siPrefix struct {
	scale float64
	exp   int
}

// siPrefixes are the SI prefixes nodal accepts, case-sensitive (SI
// Brochure, BIPM, 9th edition 2019, table 7). Both U+00B5 MICRO SIGN and
// U+03BC GREEK SMALL LETTER MU are accepted for micro; "u" is the ASCII
// stand-in (common practice). This is the one prefix table of the project:
// every other grammar looks prefixes up through PrefixScale and
// PrefixExponent.
var siPrefixes = map[rune]siPrefix{
	'f': {1e-15, -15}, 'p': {1e-12, -12}, 'n': {1e-9, -9},
	'u': {1e-6, -6}, 'µ': {1e-6, -6}, 'μ': {1e-6, -6}, 'm': {1e-3, -3},
	'k': {1e3, 3}, 'M': {1e6, 6}, 'G': {1e9, 9}, 'T': {1e12, 12},
}

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

// prefixOf looks up s when it is exactly one rune long.
func prefixOf(s string) (siPrefix, bool) {
	r, size := utf8.DecodeRuneInString(s)
	if size == 0 || size != len(s) {
		return siPrefix{}, false
	}
	p, ok := siPrefixes[r]
	return p, ok
}

// PrefixSymbol returns the SI prefix for the power of 1000 exp3
// (PrefixSymbol(1) is "k", PrefixSymbol(-2) is "µ", PrefixSymbol(0) is ""),
// as nodal writes it; ok is false outside f…T (exp3 < −5 or > 4).
func PrefixSymbol(exp3 int) (symbol string, ok bool) {
	if exp3 < -5 || exp3 > 4 {
		return "", false
	}
	return engPrefixes[exp3+5], true
}

// codeLetters are the multiplier letters of IEC 60062 value codes, written
// in place of the decimal point ("4k7", "2R2", "4n7"). R and F stand for
// the unit itself (×1, ohms and farads); K is accepted beside k because
// the standard writes resistance codes in capitals ("4K7"). From memory of
// IEC 60062:2016, clause 5.
var codeLetters = map[rune]float64{
	'R': 1, 'F': 1, 'k': 1e3, 'K': 1e3, 'M': 1e6, 'G': 1e9, 'T': 1e12,
	'p': 1e-12, 'n': 1e-9, 'u': 1e-6, 'µ': 1e-6, 'μ': 1e-6, 'm': 1e-3,
}

// literal is a decoded value literal: Value in SI (a percentage already
// divided by 100, degrees and decibels as written) with its unit symbol.
type literal struct {
	Value float64
	Unit  string
}

// decodeLiteral decodes the text of a Value token: a decimal number with
// an optional exponent, SI prefix and unit ("22nF", "4.7kohm", "1e-9",
// "5%"), or an IEC 60062 code with an optional unit ("4k7", "2R2Ω").
func decodeLiteral(text string) (literal, error) {
	i := 0
	for i < len(text) && (isDigit(text[i]) || text[i] == '.') {
		i++
	}
	if i < len(text) && (text[i] == 'e' || text[i] == 'E') {
		j := i + 1
		if j < len(text) && (text[j] == '+' || text[j] == '-') {
			j++
		}
		if j < len(text) && isDigit(text[j]) {
			for j < len(text) && isDigit(text[j]) {
				j++
			}
			i = j
		}
	}
	num, rest := text[:i], text[i:]
	if num == "" || num == "." {
		return literal{}, fmt.Errorf("%q is not a number", text)
	}
	if rest != "" && isPlainInt(num) {
		r, size := utf8.DecodeRuneInString(rest)
		if mult, ok := codeLetters[r]; ok {
			k := size
			for k < len(rest) && isDigit(rest[k]) {
				k++
			}
			if k > size {
				return decodeCode(text, num+"."+rest[size:k], mult, r, rest[k:])
			}
		}
	}
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsInf(v, 0) {
		return literal{}, fmt.Errorf("%q is not a finite number", text)
	}
	if rest == "" {
		return literal{Value: v}, nil
	}
	if u, ok := unitSymbols[rest]; ok {
		if u == UnitPercent {
			v /= 100
		}
		return literal{Value: v, Unit: u}, nil
	}
	if rest == "R" || rest == "RΩ" {
		return literal{Value: v, Unit: UnitOhm}, nil // IEC 60062 trailing R: "100R"
	}
	r, size := utf8.DecodeRuneInString(rest)
	if p, ok := siPrefixes[r]; ok {
		mult := p.scale
		after := rest[size:]
		if after == "" {
			return literal{Value: v * mult}, nil
		}
		if u, ok := unitSymbols[after]; ok {
			if noPrefixUnits[u] {
				return literal{}, fmt.Errorf("%q: the unit %s takes no prefix", text, u)
			}
			return literal{Value: v * mult, Unit: u}, nil
		}
	}
	if r == 'K' && (len(rest) == 1 || unitSymbols[rest[1:]] != "") {
		return literal{}, fmt.Errorf("%q: unknown prefix \"K\" (kilo is a lower-case k)", text)
	}
	return literal{}, fmt.Errorf("%q: unknown unit or prefix %q", text, rest)
}

// decodeCode finishes an IEC 60062 code: mantissa is the code with its
// letter replaced by a decimal point.
func decodeCode(text, mantissa string, mult float64, letter rune, unitText string) (literal, error) {
	v, err := strconv.ParseFloat(mantissa, 64)
	if err != nil {
		return literal{}, fmt.Errorf("%q is not a value code", text)
	}
	implied := ""
	switch letter {
	case 'R':
		implied = UnitOhm
	case 'F':
		implied = UnitFarad
	}
	u := implied
	if unitText != "" {
		var ok bool
		u, ok = unitSymbols[unitText]
		if !ok || noPrefixUnits[u] {
			return literal{}, fmt.Errorf("%q: unknown unit %q after a value code", text, unitText)
		}
		if implied != "" && u != implied {
			return literal{}, fmt.Errorf("%q: the code letter %c means %s but the unit is %s", text, letter, implied, u)
		}
	}
	return literal{Value: v * mult, Unit: u}, nil
}

// leadingCode decodes the IEC 60062 form with the letter R first ("R47" is
// 0.47 Ω). The lexer reads such a word as a name, so the elaborator tries
// it only for names that are not parameters.
func leadingCode(name string) (literal, bool) {
	if len(name) < 2 || name[0] != 'R' {
		return literal{}, false
	}
	for i := 1; i < len(name); i++ {
		if !isDigit(name[i]) {
			return literal{}, false
		}
	}
	v, err := strconv.ParseFloat("0."+name[1:], 64)
	if err != nil {
		return literal{}, false
	}
	return literal{Value: v, Unit: UnitOhm}, true
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

func isPlainInt(s string) bool {
	for i := 0; i < len(s); i++ {
		if !isDigit(s[i]) {
			return false
		}
	}
	return s != ""
}

// ParseValue parses a value as typed on the command line: a number with an
// optional sign, SI prefix and unit ("10Hz", "1MHz", "2k", "-3dB"), or an
// IEC 60062 code ("4k7", "2R2", "R47"). Spaces are ignored. The result is
// in SI units; a percentage is returned as a fraction (5% → 0.05).
//
// unit is the unit the caller expects ("Hz", "Ω", "ohm", ...); when the
// text carries a unit it must be that one. unit "" accepts any unit or none.
func ParseValue(text string, unit string) (float64, error) {
	t := strings.Join(strings.Fields(text), "")
	sign := 1.0
	if strings.HasPrefix(t, "-") {
		sign, t = -1, t[1:]
	} else if strings.HasPrefix(t, "+") {
		t = t[1:]
	}
	var lit literal
	if l, ok := leadingCode(t); ok {
		lit = l
	} else {
		var err error
		if lit, err = decodeLiteral(t); err != nil {
			return 0, fmt.Errorf("bad value: %w", err)
		}
	}
	if unit != "" && lit.Unit != "" {
		want, ok := unitSymbols[unit]
		if !ok {
			want = unit
		}
		if lit.Unit != want {
			return 0, fmt.Errorf("bad value %q: unit %s where %s is expected", text, lit.Unit, want)
		}
	}
	return sign * lit.Value, nil
}

// engPrefixes lists the prefixes written in output, by exponent/3 + 5
// (PrefixSymbol; the formatter of cmd/nodal/notation reads them).
var engPrefixes = []string{"f", "p", "n", "µ", "m", "", "k", "M", "G", "T"}
