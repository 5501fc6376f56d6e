package main

import (
	"regexp"
	"strings"
)

// dimensionless reports whether a transfer-function unit is a ratio of
// like quantities (V/V, A/A), the only kind a "gain" in plain dB describes.
func dimensionless(unit string) bool { return unit == "" || unit == "V/V" || unit == "A/A" }

// dbReference is how a dB figure of a response in unit says its
// reference: dBΩ for an impedance, "dB re 1 V/A" for a transimpedance
// and the like, plain dB for a dimensionless ratio (IEC 60027-3 writes
// the reference with the level, common practice).
func dbReference(unit string) string {
	switch {
	case dimensionless(unit):
		return "dB"
	case unit == "Ω":
		return "dBΩ"
	}
	return "dB re 1 " + unit
}

var (
	// dbFigure is a number followed by "dB" that is a level (not a slope
	// in dB/decade).
	dbFigure = regexp.MustCompile(`(\d) dB([^/]|$)`)
	// leadingValue is the plain number that starts a figure ("-100000 (").
	leadingValue = regexp.MustCompile(`^(-?[0-9.]+(?:e[-+]?[0-9]+)?) \(`)
)

// relabelForUnit writes the transfer figures of a response that is not
// dimensionless in its own units: "DC value" rather than "DC gain", the
// value with its unit (−100000 V/A) and every dB level with its reference
// (100 dB re 1 V/A, 80 dBΩ). Rows of a dimensionless response are
// returned as they are.
func relabelForUnit(rows [][2]string, unit string) [][2]string {
	if dimensionless(unit) {
		return rows
	}
	ref := dbReference(unit)
	out := make([][2]string, len(rows))
	for i, r := range rows {
		name := strings.Replace(r[0], "gain", "value", 1)
		value := leadingValue.ReplaceAllString(r[1], "${1} "+unit+" (")
		value = withReference(value, ref)
		out[i] = [2]string{name, value}
	}
	return out
}

// withReference gives every dB level of a figure its reference; a
// difference ("within 0.01 dB of", "6.3 dB above the passband gain")
// keeps plain dB.
func withReference(value, ref string) string {
	var b strings.Builder
	last := 0
	for _, m := range dbFigure.FindAllStringSubmatchIndex(value, -1) {
		digit := m[2]
		start := strings.LastIndexByte(value[:digit], ' ') + 1
		if strings.HasSuffix(value[:start], "within ") || strings.HasPrefix(value[m[3]+len(" dB"):], " above") {
			continue
		}
		b.WriteString(value[last:m[3]])
		b.WriteString(" " + ref)
		last = m[3] + len(" dB")
	}
	b.WriteString(value[last:])
	return b.String()
}
