// Package notation is the one place nodal writes numbers for people:
// engineering notation with an SI prefix (read from the one prefix table,
// netlist/syntax, the one every grammar reads), engineering notation with a
// power-of-1000 exponent, and superscript powers. Every command, the report
// and the plots format through it.
package notation

import (
	"math"
	"strconv"
	"strings"

	"nodal/netlist/syntax"
)

// Prefix range of netlist's SI prefix table, in powers of 1000 (f … T).
const (
	minExp3 = -5
	maxExp3 = 4
)

// scaled splits v (finite, non-zero) into a mantissa with digits
// significant digits, written without an exponent, and a power of 1000
// exp3, so that v ≈ mantissa·1000^exp3 and 1 ≤ |mantissa| < 1000 after
// rounding (999.97 with 4 digits carries to 1 and the next power).
func scaled(v float64, digits int) (mantissa string, exp3 int) {
	exp3 = int(math.Floor(math.Log10(math.Abs(v)) / 3))
	if r, _ := strconv.ParseFloat(strconv.FormatFloat(v/math.Pow(1000, float64(exp3)), 'g', digits, 64), 64); math.Abs(r) >= 1000 {
		exp3++
	}
	return exp3Mantissa(v, exp3, digits), exp3
}

// exp3Mantissa writes v/1000^exp3 with digits significant digits and no
// exponent (a clamped power may leave more integer digits than digits).
func exp3Mantissa(v float64, exp3, digits int) string {
	s := strconv.FormatFloat(v/math.Pow(1000, float64(exp3)), 'g', digits, 64)
	if strings.ContainsAny(s, "eE") {
		f, _ := strconv.ParseFloat(s, 64)
		s = strconv.FormatFloat(f, 'f', -1, 64)
	}
	return s
}

// clampedPrefix returns the mantissa and SI prefix of v with the power
// clamped to lo…hi (a value beyond the table keeps the last prefix).
func clampedPrefix(v float64, digits, lo, hi int) (mantissa, prefix string) {
	m, e := scaled(v, digits)
	if e < lo || e > hi {
		e = max(lo, min(hi, e))
		m = exp3Mantissa(v, e, digits)
	}
	p, _ := syntax.PrefixSymbol(e)
	return m, p
}

// Eng writes v with four significant digits (trailing zeros dropped) and
// an SI prefix: Eng(4700, "Ω") is "4.7 kΩ", Eng(1e-8, "F") is "10 nF",
// Eng(2000, "") is "2k". unit may be any spelling the circuit language
// reads ("ohm" prints as Ω). Units that take no prefix (dB, deg) print
// plainly; for "%" v is a fraction (0.05 → "5 %"). Zero prints as "0 Ω"; a
// value beyond f…T uses an exponent ("1e-18 F"). A plain number (unit "")
// from 1e-3 to 1 prints without a prefix ("0.98"), a smaller one with it
// ("4.7n").
func Eng(v float64, unit string) string {
	if u, ok := syntax.UnitSymbol(unit); ok {
		unit = u
	}
	sep := ""
	if unit != "" {
		sep = " "
	}
	switch {
	case math.IsNaN(v) || math.IsInf(v, 0):
		return strconv.FormatFloat(v, 'g', -1, 64) + sep + unit
	case !syntax.TakesPrefix(unit):
		if unit == syntax.UnitPercent {
			v *= 100
		}
		return strconv.FormatFloat(v, 'g', 4, 64) + sep + unit
	case v == 0:
		return "0" + sep + unit
	case unit == "" && math.Abs(v) < 1 && math.Abs(v) >= 1e-3:
		return strconv.FormatFloat(v, 'g', 4, 64)
	}
	m, e := scaled(v, 4)
	if e < minExp3 || e > maxExp3 {
		return strconv.FormatFloat(v, 'g', 4, 64) + sep + unit
	}
	p, _ := syntax.PrefixSymbol(e)
	return m + sep + p + unit
}

// Compact writes x with three significant digits and an SI prefix, with
// no space, for numbers inside formulas: Compact(0.001, "s") is "1ms",
// Compact(1591.5, "Hz") is "1.59kHz", Compact(0, "s") is "0s". Beyond f…T
// the last prefix stays.
func Compact(x float64, unit string) string {
	if x == 0 {
		return "0" + unit
	}
	m, p := clampedPrefix(x, 3, minExp3, maxExp3)
	return m + p + unit
}

// Digits writes v with digits significant digits (at least 3) and an SI
// prefix in p…T before unit, for axis labels: Digits(1591.5, 4, "Hz") is
// "1.592 kHz"; an empty unit still gets its prefix ("1.5 k") but none for
// 1 ≤ |v| < 1000 ("150"). Non-finite values print as Go does ("+Inf").
func Digits(v float64, digits int, unit string) string {
	if math.IsInf(v, 0) || math.IsNaN(v) {
		return strconv.FormatFloat(v, 'g', -1, 64)
	}
	digits = max(digits, 3) // fewer would print 150 as 1.5e+02
	m, p := "0", ""
	if v != 0 {
		m, p = clampedPrefix(v, digits, minExp3+1, maxExp3)
	}
	if unit == "" && p == "" {
		return m
	}
	return m + " " + p + unit
}

// Exp writes v in engineering notation with an exponent: a mantissa of 4
// significant digits and an exponent that is a multiple of 3 ("112.5e-6",
// "2.53e9", "1" for 1). Zero and non-finite values return "", false so
// the caller writes them its own way.
func Exp(v float64) (string, bool) {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return "", false
	}
	m, e := scaled(v, 4)
	if e == 0 {
		return m, true
	}
	return m + "e" + strconv.Itoa(3*e), true
}

// Written is v as Exp writes it (4 significant digits, exponent a
// multiple of 3) but keeping trailing zeros ("382.0", "1.000e-3") unless
// the shorter text is exactly v, so that the digits shown are the
// precision: a coefficient pasted back into nodal check is read to half a
// unit in its last digit, and "1" or "382" stands only for the exact
// value. ok is false for zero and non-finite values, as for Exp.
func Written(v float64) (string, bool) {
	t, ok := Exp(v)
	if !ok {
		return t, false
	}
	if back, err := strconv.ParseFloat(t, 64); err == nil && back == v {
		return t, true
	}
	m, e := scaled(v, 4)
	x, _ := strconv.ParseFloat(m, 64)
	intDigits := len(strconv.Itoa(int(math.Abs(x))))
	m = strconv.FormatFloat(v/math.Pow(1000, float64(e)), 'f', max(4-intDigits, 0), 64)
	if e == 0 {
		return m, true
	}
	return m + "e" + strconv.Itoa(3*e), true
}

// Superscript writes k with Unicode superscript digits ("²", "¹⁰", "⁻¹").
func Superscript(k int) string {
	const sup = "⁰¹²³⁴⁵⁶⁷⁸⁹"
	digits := []rune(sup)
	var b strings.Builder
	for _, c := range strconv.Itoa(k) {
		if c == '-' {
			b.WriteRune('⁻')
			continue
		}
		b.WriteRune(digits[c-'0'])
	}
	return b.String()
}

// Prefix returns the SI prefix of the power of 1000 exp3 from netlist's
// table ("k" for 1, "" for 0); "" outside f…T.
func Prefix(exp3 int) string {
	p, _ := syntax.PrefixSymbol(exp3)
	return p
}

// AxisExp3 returns the power of 1000, clamped to p…T, that brings |v| into
// [1, 1000): the common prefix of an axis whose largest value is v. Zero
// and non-finite values give 0.
func AxisExp3(v float64) int {
	v = math.Abs(v)
	if v == 0 || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0
	}
	return max(minExp3+1, min(maxExp3, int(math.Floor(math.Log10(v)/3))))
}

// Q writes a quality factor with four significant digits, and "∞" for
// the +Inf of a pair on the jω axis: the one way every table, the report
// and the plots show Q.
func Q(q float64) string {
	if math.IsInf(q, 1) {
		return "∞"
	}
	return strconv.FormatFloat(q, 'g', 4, 64)
}

// Metric writes a metric value or a requirement limit in its unit, the
// one style of verdict tables and reports: dB with two decimals
// ("-40.03 dB", also a dB with its reference: "12.00 dB re 1 V/A"), degrees with one ("-92.4°"), a plain ratio with four
// significant digits ("0.7081"), any other unit in engineering notation
// (Eng: "1.886 kHz"). Infinite values print as "inf dB", "-inf dB"; NaN
// as "NaN" (callers write a missing value their own way).
func Metric(v float64, unit string) string {
	switch {
	case math.IsNaN(v):
		return "NaN"
	case math.IsInf(v, 1):
		return strings.TrimSpace("inf " + unit)
	case math.IsInf(v, -1):
		return strings.TrimSpace("-inf " + unit)
	}
	fixed := func(decimals int) string {
		s := strconv.FormatFloat(v, 'f', decimals, 64)
		if strings.Trim(s, "-0.") == "" {
			s = strings.TrimPrefix(s, "-") // −0.00 reads as a sign where there is none
		}
		return s
	}
	switch {
	case unit == syntax.UnitDecibel || strings.HasPrefix(unit, "dB"): // "dB re 1 V/A", "dBΩ"
		return fixed(2) + " " + unit
	case unit == syntax.UnitDegree || unit == "°":
		return fixed(1) + "°"
	case unit == "":
		if v == 0 {
			return "0"
		}
		return strconv.FormatFloat(v, 'g', 4, 64)
	}
	return Eng(v, unit)
}
