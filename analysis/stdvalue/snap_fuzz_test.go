package stdvalue

import (
	"testing"

	"nodal/netlist"
)

// FuzzSnap checks that rounding any circuit that loads never panics and,
// when it succeeds, gives a source that loads with the rounded values (Snap
// checks the values itself) and changes nothing but value texts.
func FuzzSnap(f *testing.F) {
	f.Add([]byte(snapSource))
	f.Add([]byte(fuzzRCSource))
	e24, _ := SeriesByName("E24")
	series := map[netlist.Kind]Series{netlist.Resistor: e24, netlist.Capacitor: e24, netlist.Inductor: e24}
	f.Fuzz(func(t *testing.T, src []byte) {
		if _, err := netlist.Load("fuzz.nodal", src, nil); err != nil {
			return
		}
		res, err := Snap("fuzz.nodal", src, nil, series)
		if err != nil {
			return
		}
		if _, err := netlist.Load("fuzz.nodal", res.Source, nil); err != nil {
			t.Fatalf("snapped source does not load: %v\n%s", err, res.Source)
		}
	})
}

// fuzzRCSource seeds FuzzSnap with a toleranced RC low-pass and a
// requirement, so rounding meets a `require` line.
const fuzzRCSource = `title "bridge sense RC"
Vb: voltage source (in, gnd) 1
R1: resistor (in, out) 10k ±5%
C1: capacitor (out, gnd) 10nF ±5%
require f3db below 2kHz
`
