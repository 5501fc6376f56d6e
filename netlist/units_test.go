package netlist

import (
	"math"
	"testing"
)

// near reports whether a and b agree to 1e-12 relative.
func near(a, b float64) bool {
	return a == b || math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b))
}

func TestFormatEng(t *testing.T) {
	for _, tc := range []struct {
		v    float64
		unit string
		want string
	}{
		{4700, "Ω", "4.7 kΩ"}, {4700, "ohm", "4.7 kΩ"}, {10e-9, "F", "10 nF"}, {1591.549, "Hz", "1.592 kHz"},
		{0.1, "Ω", "100 mΩ"}, {0, "Ω", "0 Ω"}, {0, "", "0"}, {-4700, "Ω", "-4.7 kΩ"}, {2e5, "", "200k"},
		{0.98, "", "0.98"}, {999.97, "Hz", "1 kHz"}, {2.2e-6, "F", "2.2 µF"}, {1, "V", "1 V"},
		{-3.01, "dB", "-3.01 dB"}, {0.05, "%", "5 %"}, {1e-18, "F", "1e-18 F"}, {123456, "Ω", "123.5 kΩ"},
	} {
		if got := FormatEng(tc.v, tc.unit); got != tc.want {
			t.Errorf("FormatEng(%v, %q) = %q; want %q", tc.v, tc.unit, got, tc.want)
		}
	}
}

func TestKindUnit(t *testing.T) {
	want := map[Kind]string{Resistor: "Ω", Capacitor: "F", Inductor: "H", VSource: "V", ISource: "A",
		VCVS: "", VCCS: "S", CCVS: "Ω", CCCS: "", OpAmp: "", Coupling: ""}
	for k, u := range want {
		if k.Unit() != u {
			t.Errorf("%v.Unit() = %q; want %q", k, k.Unit(), u)
		}
	}
}
