package syntax

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"
	"unicode/utf8"
)

// NumberPattern is the regular expression of the number token for a
// participle lexer rule, the same in every grammar: a decimal with an
// optional exponent, then an optional suffix of letters, "%" or "°" that
// may hold digits after its first letters (an SI prefix, a unit, or an
// IEC 60062 code: "22nF", "1e-9", "4k7", "10kΩ", "5%", "30°"). A decimal
// point needs a digit after it ("1..2" is a range in a circuit file).
// ParseNumber gives the token its meaning.
const NumberPattern = `(\d+(\.\d+)?|\.\d+)([eE][+-]?\d+)?([\pL%°]+\d*\pL*)?`

// Number is a decoded number token: Value in SI (a percentage already
// divided by 100, degrees and decibels as written) and the normalised
// unit symbol it was written with ("" for none). For exact arithmetic the
// value is also given as Mantissa × 10^Exp10, Mantissa a decimal as
// big.Rat.SetString reads it ("4.7", "1.5e-3"); Value is that product in
// float64.
type Number struct {
	Value    float64
	Unit     string
	Mantissa string
	Exp10    int
}

// Rat is the exact value Mantissa × 10^Exp10 (a new value the caller may
// change), nil when Mantissa is not a decimal.
func (n Number) Rat() *big.Rat {
	if n.Value == 0 {
		// Also 0e999999999, whose exponent big.Rat would expand.
		return new(big.Rat)
	}
	r, ok := new(big.Rat).SetString(n.Mantissa)
	if !ok {
		return nil
	}
	e := n.Exp10
	if e < 0 {
		e = -e
	}
	p := new(big.Rat).SetInt(new(big.Int).Exp(big.NewInt(10), big.NewInt(int64(e)), nil))
	if n.Exp10 < 0 {
		return r.Quo(r, p)
	}
	return r.Mul(r, p)
}

// codeLetters are the multiplier letters of IEC 60062 value codes, written
// in place of the decimal point ("4k7", "2R2", "4n7"). R and F stand for
// the unit itself (×1, ohms and farads); K is accepted beside k because
// the standard writes resistance codes in capitals ("4K7"). IEC
// 60062:2016, clause 5 (from memory).
var codeLetters = map[rune]siPrefix{
	'R': {1, 0}, 'F': {1, 0}, 'k': {1e3, 3}, 'K': {1e3, 3}, 'M': {1e6, 6}, 'G': {1e9, 9}, 'T': {1e12, 12},
	'p': {1e-12, -12}, 'n': {1e-9, -9}, 'u': {1e-6, -6}, 'µ': {1e-6, -6}, 'μ': {1e-6, -6}, 'm': {1e-3, -3},
}

// ParseNumber decodes the text of a number token: a decimal number with an
// optional exponent, SI prefix and unit ("22nF", "4.7kohm", "1e-9", "5%",
// "2kHz"), or an IEC 60062 code with an optional unit ("4k7", "1k5",
// "4n7", "2R2Ω", "100R"). The value is finite. Errors name the text and
// what is wrong with it; they carry no position (the caller has it).
func ParseNumber(text string) (Number, error) {
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
		return Number{}, fmt.Errorf("%q is not a number", text)
	}
	if rest != "" && IsDigits(num) {
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
		return Number{}, fmt.Errorf("%q is not a finite number", text)
	}
	if rest == "" {
		return Number{Value: v, Mantissa: num}, nil
	}
	if u, ok := unitSymbols[rest]; ok {
		if u == UnitPercent {
			return Number{Value: v / 100, Unit: u, Mantissa: num, Exp10: -2}, nil
		}
		return Number{Value: v, Unit: u, Mantissa: num}, nil
	}
	if rest == "R" || rest == "RΩ" {
		return Number{Value: v, Unit: UnitOhm, Mantissa: num}, nil // IEC 60062 trailing R: "100R"
	}
	r, size := utf8.DecodeRuneInString(rest)
	if p, ok := siPrefixes[r]; ok {
		after := rest[size:]
		if after == "" {
			return Number{Value: v * p.scale, Mantissa: num, Exp10: p.exp}, nil
		}
		if u, ok := unitSymbols[after]; ok {
			if noPrefixUnits[u] {
				return Number{}, fmt.Errorf("%q: the unit %s takes no prefix", text, u)
			}
			return Number{Value: v * p.scale, Unit: u, Mantissa: num, Exp10: p.exp}, nil
		}
	}
	if r == 'K' && (len(rest) == 1 || unitSymbols[rest[1:]] != "") {
		return Number{}, fmt.Errorf("%q: unknown prefix \"K\" (kilo is a lower-case k)", text)
	}
	if len(rest) >= 3 && strings.EqualFold(rest[:3], "meg") {
		// Some tools spell mega "Meg"; here m is milli and mega is M.
		return Number{}, fmt.Errorf("%q: %q is not a prefix: mega is M (%sM%s), and m is milli", text, rest[:3], num, rest[3:])
	}
	return Number{}, fmt.Errorf("%q: unknown unit or prefix %q", text, rest)
}

// decodeCode finishes an IEC 60062 code: mantissa is the code with its
// letter replaced by a decimal point.
func decodeCode(text, mantissa string, mult siPrefix, letter rune, unitText string) (Number, error) {
	v, err := strconv.ParseFloat(mantissa, 64)
	if err != nil {
		return Number{}, fmt.Errorf("%q is not a value code", text)
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
			return Number{}, fmt.Errorf("%q: unknown unit %q after a value code", text, unitText)
		}
		if implied != "" && u != implied {
			return Number{}, fmt.Errorf("%q: the code letter %c means %s but the unit is %s", text, letter, implied, u)
		}
	}
	return Number{Value: v * mult.scale, Unit: u, Mantissa: mantissa, Exp10: mult.exp}, nil
}

// LeadingCode decodes the IEC 60062 form with the letter R first ("R47" is
// 0.47 Ω). A lexer reads such a word as a name, so a grammar tries it only
// for names that mean nothing else; ok is false when name is not R
// followed by digits.
func LeadingCode(name string) (Number, bool) {
	if len(name) < 2 || name[0] != 'R' || !IsDigits(name[1:]) {
		return Number{}, false
	}
	v, err := strconv.ParseFloat("0."+name[1:], 64)
	if err != nil {
		return Number{}, false
	}
	return Number{Value: v, Unit: UnitOhm, Mantissa: "0." + name[1:]}, true
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

// IsDigits reports whether s is one or more ASCII digits (a node number,
// the mantissa of a value code).
func IsDigits(s string) bool {
	for i := 0; i < len(s); i++ {
		if !isDigit(s[i]) {
			return false
		}
	}
	return s != ""
}

// ParseValue parses a value as typed on the command line: a number token
// with an optional sign ("10Hz", "1MHz", "2k", "-3dB", "+1k"), or an IEC
// 60062 code ("4k7", "2R2", "R47"). Blanks are ignored. The result is in
// SI units; a percentage is returned as a fraction (5% → 0.05).
//
// unit is the unit the caller expects ("Hz", "Ω", "ohm", ...); when the
// text carries a unit it must be that one. unit "" accepts any unit or
// none. Errors carry no position; ParseFlag adds one.
func ParseValue(text, unit string) (float64, error) {
	t := strings.Join(strings.Fields(text), "")
	sign := 1.0
	if strings.HasPrefix(t, "-") {
		sign, t = -1, t[1:]
	} else if strings.HasPrefix(t, "+") {
		t = t[1:]
	}
	n, ok := LeadingCode(t)
	if !ok {
		var err error
		if n, err = ParseNumber(t); err != nil {
			return 0, fmt.Errorf("bad value: %w", err)
		}
	}
	if unit != "" && n.Unit != "" {
		want, ok := unitSymbols[unit]
		if !ok {
			want = unit
		}
		if n.Unit != want {
			return 0, fmt.Errorf("bad value %q: unit %s where %s is expected", text, n.Unit, want)
		}
	}
	return sign * n.Value, nil
}

// ParseFlag is ParseValue for the whole value of a command-line flag
// ("--from", "--until"): an error is an ErrorList of one diagnostic named
// name, in the form every grammar uses (NAME:1:COL: message, the value and
// a caret).
func ParseFlag(name, text, unit string) (float64, error) {
	return ParseValueAt(name, text, 0, len(text), unit)
}

// ParseFlagList parses a comma-separated list of values ("--at
// 1k,2k2,10kHz") with ParseValue; an error is positioned at the item that
// is wrong, within the whole text.
func ParseFlagList(name, text, unit string) ([]float64, error) {
	return ParseFlagListAt(name, text, 0, unit)
}

// ParseFlagListAt is ParseFlagList on text[start:], an error shown in the
// whole text (--vary R=1k,2k2 points into the flag as written).
func ParseFlagListAt(name, text string, start int, unit string) ([]float64, error) {
	var out []float64
	for {
		end := strings.IndexByte(text[start:], ',')
		if end < 0 {
			end = len(text)
		} else {
			end += start
		}
		v, err := ParseValueAt(name, text, start, end, unit)
		if err != nil {
			return nil, err
		}
		out = append(out, v)
		if end == len(text) {
			return out, nil
		}
		start = end + 1
	}
}

// ParseValueAt parses text[start:end] with ParseValue; an error is an
// ErrorList of one diagnostic named name at the first non-blank character
// of the value, showing the whole text (a flag such as --set R1=4k7 names
// the setting and points at the value).
func ParseValueAt(name, text string, start, end int, unit string) (float64, error) {
	val := text[start:end]
	v, err := ParseValue(val, unit)
	if err != nil {
		off := start + len(val) - len(strings.TrimLeft(val, " \t"))
		return 0, ErrorList{NewText(name, []byte(text)).Diag(off, SevError, err.Error(), "")}
	}
	return v, nil
}
