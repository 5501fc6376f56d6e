package syntax

import (
	"math"
	"strings"
	"testing"
)

// near reports whether a and b agree to 1e-12 relative.
func near(a, b float64) bool {
	return a == b || math.Abs(a-b) <= 1e-12*math.Max(math.Abs(a), math.Abs(b))
}

// TestPrefixes checks every accepted prefix against the SI Brochure (BIPM,
// 9th edition 2019, section 3, table 7: SI prefixes), including that they
// are case-sensitive (m is milli, M is mega).
func TestPrefixes(t *testing.T) {
	for _, tc := range []struct {
		text string
		want float64
	}{
		{"1f", 1e-15}, {"1p", 1e-12}, {"1n", 1e-9}, {"1u", 1e-6}, {"1µ", 1e-6}, {"1μ", 1e-6},
		{"1m", 1e-3}, {"1k", 1e3}, {"1M", 1e6}, {"1G", 1e9}, {"1T", 1e12},
		{"2.5mF", 2.5e-3}, {"2.5MHz", 2.5e6}, {"1e3", 1e3}, {"1.5e-3k", 1.5}, {".5", 0.5},
	} {
		lit, err := ParseNumber(tc.text)
		if err != nil || !near(lit.Value, tc.want) {
			t.Errorf("ParseNumber(%q) = %v, %v; want %v", tc.text, lit.Value, err, tc.want)
		}
	}
}

// TestValueCodes checks the IEC 60062 letter-and-digit codes (IEC
// 60062:2016, clause 5; from memory): the letter stands for the decimal
// point and the multiplier, R for ohms and F for farads.
func TestValueCodes(t *testing.T) {
	for _, tc := range []struct {
		text string
		want float64
		unit string
	}{
		{"4k7", 4700, ""}, {"4K7", 4700, ""}, {"2R2", 2.2, UnitOhm}, {"R47", 0.47, UnitOhm},
		{"1M5", 1.5e6, ""}, {"4n7", 4.7e-9, ""}, {"6p8", 6.8e-12, ""}, {"2u2", 2.2e-6, ""},
		{"2µ2", 2.2e-6, ""}, {"3m3", 3.3e-3, ""}, {"1G2", 1.2e9, ""}, {"4F7", 4.7, UnitFarad},
		{"4k7Ω", 4700, UnitOhm}, {"4n7F", 4.7e-9, UnitFarad}, {"100R", 100, UnitOhm},
	} {
		var lit Number
		var err error
		if l, ok := LeadingCode(tc.text); ok {
			lit = l
		} else {
			lit, err = ParseNumber(tc.text)
		}
		if err != nil || !near(lit.Value, tc.want) || lit.Unit != tc.unit {
			t.Errorf("%q = %v %q, %v; want %v %q", tc.text, lit.Value, lit.Unit, err, tc.want, tc.unit)
		}
	}
}

func TestLiteralUnits(t *testing.T) {
	for _, tc := range []struct {
		text, unit string
		want       float64
	}{
		{"22nF", UnitFarad, 22e-9}, {"4.7kΩ", UnitOhm, 4700}, {"4.7kohm", UnitOhm, 4700},
		{"4.7kΩ", UnitOhm, 4700} /* U+2126 */, {"1MHz", UnitHertz, 1e6}, {"30deg", UnitDegree, 30},
		{"10mH", UnitHenry, 10e-3}, {"5%", UnitPercent, 0.05}, {"3dB", UnitDecibel, 3},
		{"2mS", UnitSiemens, 2e-3}, {"1ms", UnitSecond, 1e-3}, {"1V", UnitVolt, 1}, {"5mA", UnitAmpere, 5e-3},
	} {
		lit, err := ParseNumber(tc.text)
		if err != nil || !near(lit.Value, tc.want) || lit.Unit != tc.unit {
			t.Errorf("%q = %v %q, %v; want %v %q", tc.text, lit.Value, lit.Unit, err, tc.want, tc.unit)
		}
	}
}

func TestLiteralErrors(t *testing.T) {
	for _, tc := range []struct{ text, want string }{
		{"10K", "kilo is a lower-case k"},
		{"10x", "unknown unit or prefix"},
		{"2pi", "unknown unit or prefix"},
		{"3kdB", "takes no prefix"},
		{"2R2F", "means Ω but the unit is F"},
		{"1e999", "not a finite number"},
		{"1Meg", `"Meg" is not a prefix: mega is M (1M)`},
		{"1MEG", `"MEG" is not a prefix: mega is M (1M)`},
		{"1meg", `"meg" is not a prefix: mega is M (1M)`},
		{"2.2MegΩ", `mega is M (2.2MΩ)`},
	} {
		_, err := ParseNumber(tc.text)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("ParseNumber(%q) error %v; want %q", tc.text, err, tc.want)
		}
	}
}

func TestParseValue(t *testing.T) {
	for _, tc := range []struct {
		text, unit string
		want       float64
		err        string
	}{
		{"10Hz", "Hz", 10, ""}, {"1MHz", "Hz", 1e6, ""}, {"2k", "Hz", 2000, ""}, {"4k7", "", 4700, ""},
		{" 1.5 kHz ", "Hz", 1500, ""}, {"-3dB", "dB", -3, ""}, {"+2", "", 2, ""}, {"R47", "ohm", 0.47, ""},
		{"10nF", "Hz", 0, "unit F where Hz is expected"}, {"abc", "", 0, "bad value"}, {"", "", 0, "bad value"},
	} {
		v, err := ParseValue(tc.text, tc.unit)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("ParseValue(%q, %q) error %v; want %q", tc.text, tc.unit, err, tc.err)
			}
			continue
		}
		if err != nil || !near(v, tc.want) {
			t.Errorf("ParseValue(%q, %q) = %v, %v; want %v", tc.text, tc.unit, v, err, tc.want)
		}
	}
}
