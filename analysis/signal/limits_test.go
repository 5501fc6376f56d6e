package signal

import (
	"errors"
	"math"
	"strings"
	"testing"

	"nodal/netlist/syntax"
)

// TestInputLimits: oversized or deeply nested text fails with a positioned
// error (before the limits a 16 MiB signal took most of a minute), and a
// phase of many turns is reduced so it prints and reads back (common
// practice: sin is 2π-periodic).
func TestInputLimits(t *testing.T) {
	for _, c := range []struct {
		name, src, want string
		col             int
	}{
		{"too long", strings.Repeat("1+", MaxSourceBytes) + "1", "at most", 1},
		{"parens", strings.Repeat("(", 2000) + "sin(t)" + strings.Repeat(")", 2000), "nested too deeply", syntax.MaxNesting + 1},
		{"sin", strings.Repeat("sin(", 500) + "t" + strings.Repeat(")", 500), "nested too deeply", 4*syntax.MaxNesting + 4},
		{"signs", strings.Repeat("-", 2000) + "sin(t)", "nested too deeply", syntax.MaxNesting + 1},
	} {
		_, err := Parse("signal", c.src)
		var l syntax.ErrorList
		if !errors.As(err, &l) || len(l) != 1 || l[0].Pos.Line != 1 || l[0].Pos.Col != c.col || !strings.Contains(l[0].Msg, c.want) {
			t.Errorf("%s: got %v, want signal:1:%d: ...%s", c.name, err, c.col, c.want)
		}
	}
	for _, c := range []struct {
		src     string
		wantRad float64
	}{
		{"sin(t + 270deg)", 1.5 * math.Pi},      // within a turn: kept as written
		{"sin(t + 370deg)", 10 * math.Pi / 180}, // 370° = 360° + 10°
		{"sin(t - 7*pi)", math.Pi},              // −7π = −8π + π
	} {
		s, err := Parse("signal", c.src)
		if err != nil {
			t.Fatalf("%s: %v", c.src, err)
		}
		if got := s.Terms[0].PhaseRad; math.Abs(got-c.wantRad) > 1e-12 {
			t.Errorf("%s: phase %v rad, want %v", c.src, got, c.wantRad)
		}
	}
}
