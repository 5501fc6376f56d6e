package signal

import (
	"math"
	"strings"
	"testing"
)

// TestPhaseWithoutUnit: a phase without deg or rad is radians; one above
// 2π in magnitude warns at its column that it was read as radians and
// asks whether degrees were meant. Multiples of pi and small phases do
// not warn.
func TestPhaseWithoutUnit(t *testing.T) {
	for _, tc := range []struct {
		src      string
		phaseRad float64
		warn     string
		col      int
	}{
		{"sin(2*pi*1k*t + 90)", math.Remainder(90, 2*math.Pi), "read 90 as radians; did you mean 90deg?", 17},
		{"cos(2*pi*50*t - 45)", math.Remainder(-45, 2*math.Pi), "read 45 as radians; did you mean 45deg?", 17},
		{"sin(2*pi*1k*t + 1.5)", 1.5, "", 0},
		{"sin(2*pi*1k*t + 3*pi)", math.Remainder(3*math.Pi, 2*math.Pi), "", 0},
		{"sin(2*pi*1k*t + 90deg)", math.Pi / 2, "", 0},
	} {
		s, err := Parse("--signal", tc.src)
		if err != nil {
			t.Fatalf("%q: %v", tc.src, err)
		}
		if math.Abs(s.Terms[0].PhaseRad-tc.phaseRad) > 1e-12 {
			t.Errorf("%q: phase %v rad, want %v", tc.src, s.Terms[0].PhaseRad, tc.phaseRad)
		}
		if tc.warn == "" {
			if len(s.Warnings) != 0 {
				t.Errorf("%q: warnings %v", tc.src, s.Warnings)
			}
			continue
		}
		if len(s.Warnings) != 1 || !strings.Contains(s.Warnings[0].Msg, tc.warn) || s.Warnings[0].Pos.Line != 1 || s.Warnings[0].Pos.Col != tc.col {
			t.Errorf("%q: warnings %v, want %q at 1:%d", tc.src, s.Warnings, tc.warn, tc.col)
		}
	}
}
