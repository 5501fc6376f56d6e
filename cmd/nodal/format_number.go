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

// num formats a table number with 6 significant digits.
func num(v float64) string {
	if math.IsNaN(v) {
		return "-"
	}
	if math.IsInf(v, 0) {
		if v > 0 {
			return "inf"
		}
		return "-inf"
	}
	if v == 0 {
		v = 0 // −0 prints as 0
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// fixed formats v with the given decimals (for dB and degrees).
func fixed(v float64, decimals int) string {
	if math.IsNaN(v) {
		return "-"
	}
	if math.IsInf(v, 0) {
		if v > 0 {
			return "inf"
		}
		return "-inf"
	}
	s := strconv.FormatFloat(v, 'f', decimals, 64)
	if strings.Trim(s, "-0.") == "" {
		// −0.000 reads as a sign where there is none.
		return strings.TrimPrefix(s, "-")
	}
	return s
}
