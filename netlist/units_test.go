package netlist

import (
	"math"
	"testing"
)

// near reports whether a and b agree to 1e-12 relative.
func near(a, b float64) bool {
	return a == b || math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b))
}

func TestKindUnit(t *testing.T) {
	want := map[Kind]string{Resistor: "Ω", Capacitor: "F", Inductor: "H", VoltageSource: "V", CurrentSource: "A",
		VCVS: "", VCCS: "S", CCVS: "Ω", CCCS: "", OpAmp: "", Coupling: ""}
	for k, u := range want {
		if k.Unit() != u {
			t.Errorf("%v.Unit() = %q; want %q", k, k.Unit(), u)
		}
	}
}
