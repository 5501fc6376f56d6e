package main

import (
	"strings"
	"testing"

	"nodal/analysis/response"
)

// TestPhaseUnresolvedShown: points whose turn is not known are shown as
// "mod 360" in the table, with one warning naming where it starts; a
// resolved point is shown as its number alone.
func TestPhaseUnresolvedShown(t *testing.T) {
	r := &response.Response{FreqHz: []float64{10, 100, 1000}, Mag: []float64{1, 0.5, 0.1}, MagDB: []float64{0, -6, -20},
		PhaseDeg: []float64{-57.106, -90, -122.894}, GroupDelayS: []float64{1e-3, 1e-3, 1e-4},
		PhaseUnresolved: []bool{false, true, true}, Output: "out", Input: "V1"}
	var warn, table strings.Builder
	warnPhaseUnresolved(&warn, []*response.Response{r})
	if want := "nodal: warning: out: the phase could not be followed from the point before 100 Hz to it within the refinement budget (2 of 3 points)"; !strings.HasPrefix(warn.String(), want) {
		t.Errorf("warning %q, want it to start %q", warn.String(), want)
	}
	if err := responseTable(&table, r, ""); err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"-57.106 ", "-90.000 mod 360", "-122.894 mod 360"} {
		if !strings.Contains(table.String(), want) {
			t.Errorf("table lacks %q:\n%s", want, table.String())
		}
	}
	if strings.Contains(table.String(), "-57.106 mod") {
		t.Errorf("a resolved point is marked:\n%s", table.String())
	}
}
