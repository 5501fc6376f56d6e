package syntax

// Unit symbols a number may carry. Every accepted spelling is normalised
// to one of these ("ohm" and U+2126 OHM SIGN become "Ω", "°" becomes
// "deg").
const (
	UnitOhm     = "Ω"
	UnitFarad   = "F"
	UnitHenry   = "H"
	UnitHertz   = "Hz"
	UnitDegree  = "deg"
	UnitRadian  = "rad"
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
	"F": UnitFarad, "H": UnitHenry, "Hz": UnitHertz, "deg": UnitDegree, "°": UnitDegree,
	"rad": UnitRadian, "V": UnitVolt, "A": UnitAmpere, "S": UnitSiemens, "s": UnitSecond,
	"dB": UnitDecibel, "%": UnitPercent,
}

// noPrefixUnits are units that never take an SI prefix in nodal (neither
// on input nor in engineering notation).
var noPrefixUnits = map[string]bool{UnitDegree: true, UnitDecibel: true, UnitPercent: true}

// UnitSymbol returns the normalised symbol of a unit spelling
// (UnitSymbol("ohm") is "Ω"); ok is false for a spelling nodal does not
// know.
func UnitSymbol(spelling string) (symbol string, ok bool) {
	symbol, ok = unitSymbols[spelling]
	return symbol, ok
}

// TakesPrefix reports whether the unit (a normalised symbol) may carry an
// SI prefix: deg, dB and % do not.
func TakesPrefix(unit string) bool { return !noPrefixUnits[unit] }
