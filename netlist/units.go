package netlist

import "nodal/netlist/syntax"

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
