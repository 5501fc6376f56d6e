package netlist

// UnitSymbol returns the normalised symbol of a unit spelling ("ohm" and
// U+2126 OHM SIGN give "Ω", "Hz" gives "Hz"); ok is false for a spelling
// the circuit language does not know.
func UnitSymbol(spelling string) (symbol string, ok bool) {
	symbol, ok = unitSymbols[spelling]
	return symbol, ok
}

// UnitTakesPrefix reports whether the unit symbol takes an SI prefix in
// nodal, on input and in output: dB, deg and % never do.
func UnitTakesPrefix(symbol string) bool { return !noPrefixUnits[symbol] }
