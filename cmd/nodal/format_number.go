package main

import (
	"math"
	"strconv"
	"strings"
)

// pi is π, spelled short for unit conversions.
const pi = math.Pi

// trimFloat formats v with at most digits significant digits and no
// exponent for ordinary magnitudes.
func trimFloat(v float64, digits int) string {
	if v == 0 {
		v = 0 // −0 prints as 0
	}
	return strconv.FormatFloat(v, 'g', digits, 64)
}

// nonFinite returns the table text of a NaN ("-") or infinite ("inf",
// "-inf") value; ok is false for a finite v.
func nonFinite(v float64) (text string, ok bool) {
	switch {
	case math.IsNaN(v):
		return "-", true
	case math.IsInf(v, 1):
		return "inf", true
	case math.IsInf(v, -1):
		return "-inf", true
	}
	return "", false
}

// num formats a table number with 6 significant digits.
func num(v float64) string {
	if s, ok := nonFinite(v); ok {
		return s
	}
	if v == 0 {
		v = 0 // −0 prints as 0
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// fixed formats v with the given decimals (for dB and degrees).
func fixed(v float64, decimals int) string {
	if s, ok := nonFinite(v); ok {
		return s
	}
	s := strconv.FormatFloat(v, 'f', decimals, 64)
	if strings.Trim(s, "-0.") == "" {
		// −0.000 reads as a sign where there is none.
		return strings.TrimPrefix(s, "-")
	}
	return s
}
