package netlist

import (
	"math"
	"strings"
	"testing"
)

// TestDecibelLimitUnits: a limit of a dB metric without a unit is an
// error at its line and column offering dB or V/V; a ratio V/V (or A/A)
// is converted to 20·log10 (common practice); "-1..1dB" takes the unit of
// the range's other end.
func TestDecibelLimitUnits(t *testing.T) {
	for _, tc := range []struct {
		req       string
		col       int
		msg, hint string
	}{
		{"require gain@1kHz below 0.5", 25, "limit 0.5 of gain has no unit", "write 0.5dB for decibels or 0.5V/V for a ratio (-6.02 dB)"},
		{"require peak below 3", 20, "limit 3 of peak has no unit", "3dB"},
		{"require gain@1kHz below -0.5V/V", 25, "not a positive ratio", ""},
		{"require gain@1kHz below 0.5V/A", 25, "the limit must be in dB", ""},
		{"require f3db below 1kHz/V", 20, "the limit must be in Hz", ""},
	} {
		l := loadDiags(t, base+tc.req+"\n")
		if len(l) != 1 || l[0].Pos.Line != 4 || l[0].Pos.Col != tc.col || !strings.Contains(l[0].Msg, tc.msg) || !strings.Contains(l[0].Hint, tc.hint) {
			t.Errorf("%q: %v", tc.req, l)
		}
	}
	for _, tc := range []struct {
		req    string
		lo, hi float64
	}{
		{"require gain@1kHz below 0.5V/V", 0, 20 * math.Log10(0.5)},
		{"require gain@1kHz above 2A/A", 20 * math.Log10(2), 0},
		{"require gain@1kHz within -1..1dB", -1, 1},
		{"require gain@1kHz below -3dB", 0, -3},
	} {
		c, err := Load("t.nodal", []byte(base+tc.req+"\n"), nil)
		if err != nil {
			t.Errorf("%q: %v", tc.req, err)
			continue
		}
		r := c.Requirements[0]
		if math.Abs(r.Lo-tc.lo) > 1e-12 || math.Abs(r.Hi-tc.hi) > 1e-12 {
			t.Errorf("%q: lo %v hi %v, want %v %v", tc.req, r.Lo, r.Hi, tc.lo, tc.hi)
		}
	}
}
