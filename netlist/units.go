package netlist

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"nodal/netlist/syntax"
)

// Unit symbols of the circuit language: every literal's unit is
// normalised to one of these ("ohm" becomes "Ω"). They are the symbols of
// the shared number token (package syntax), named here for the callers of
// netlist.
const (
	UnitOhm     = syntax.UnitOhm
	UnitFarad   = syntax.UnitFarad
	UnitHenry   = syntax.UnitHenry
	UnitHertz   = syntax.UnitHertz
	UnitDegree  = syntax.UnitDegree
	UnitVolt    = syntax.UnitVolt
	UnitAmpere  = syntax.UnitAmpere
	UnitSiemens = syntax.UnitSiemens
	UnitSecond  = syntax.UnitSecond
	UnitDecibel = syntax.UnitDecibel
	UnitPercent = syntax.UnitPercent
)

// ParseValue parses a value as typed on the command line ("10Hz", "4k7",
// "-3dB"); it is syntax.ParseValue, whose comment gives the rules. unit ""
// accepts any unit; otherwise a unit written must be unit.
func ParseValue(text string, unit string) (float64, error) {
	return syntax.ParseValue(text, unit)
}

// FormatEng formats v in engineering notation with four significant digits
// (trailing zeros dropped) and an SI prefix: FormatEng(4700, "Ω") is
// "4.7 kΩ", FormatEng(1e-8, "F") is "10 nF", FormatEng(0.1, "Ω") is
// "100 mΩ", FormatEng(2000, "") is "2k". Units that take no prefix (dB,
// deg) are printed plainly; for "%" v is a fraction (0.05 → "5 %"). Zero
// prints as "0 Ω"; values outside the prefix range use an exponent. A
// plain number (unit "") from 1e-3 to 1 prints without a prefix ("0.98"),
// a smaller one with it ("4.7n").
func FormatEng(v float64, unit string) string {
	if u, ok := syntax.UnitSymbol(unit); ok {
		unit = u
	}
	sep := ""
	if unit != "" {
		sep = " "
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Sprint(v) + sep + unit
	}
	if !syntax.TakesPrefix(unit) {
		if unit == UnitPercent {
			v *= 100
		}
		return strconv.FormatFloat(v, 'g', 4, 64) + sep + unit
	}
	if v == 0 {
		return "0" + sep + unit
	}
	if unit == "" && math.Abs(v) < 1 && math.Abs(v) >= 1e-3 {
		return strconv.FormatFloat(v, 'g', 4, 64)
	}
	exp3 := int(math.Floor(math.Log10(math.Abs(v)) / 3))
	m := v / math.Pow(1000, float64(exp3))
	// Rounding to four digits may carry into the next prefix (999.97 → 1000).
	if r, _ := strconv.ParseFloat(strconv.FormatFloat(m, 'g', 4, 64), 64); math.Abs(r) >= 1000 {
		exp3++
		m = v / math.Pow(1000, float64(exp3))
	}
	p, ok := syntax.PrefixSymbol(exp3)
	if !ok {
		return strconv.FormatFloat(v, 'g', 4, 64) + sep + unit
	}
	if unit == "" {
		return trimG(m) + p
	}
	return trimG(m) + " " + p + unit
}

// trimG formats m with four significant digits without an exponent.
func trimG(m float64) string {
	s := strconv.FormatFloat(m, 'g', 4, 64)
	if strings.ContainsAny(s, "eE") {
		f, _ := strconv.ParseFloat(s, 64)
		s = strconv.FormatFloat(f, 'f', -1, 64)
	}
	return s
}
