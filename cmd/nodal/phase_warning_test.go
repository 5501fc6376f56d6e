package main

import (
	"fmt"
	"math"
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

// TestSweepPhaseSeesHiddenResonances: two high-Q sections between 100 Hz
// and 10 kHz turn the phase by −360° that the group delay at the two
// points does not show; the sweep splits the step at the circuit's
// resonances and prints −359.974° at 10 kHz (closed form: the sum of
// −atan2(ωRC, 1 − ω²LC) over the sections, common practice; impedance
// uses the same marks).
func TestSweepPhaseSeesHiddenResonances(t *testing.T) {
	r := runNodal(t, "", "sweep", "testdata/high_q_pair.nodal", "--at", "100,10k")
	w := 2 * math.Pi * 10e3
	want := 0.0
	for _, lc := range [][2]float64{{15.9155e-3, 1.59155e-6}, {13.2629e-3, 1.32629e-6}} {
		want -= math.Atan2(w*0.2*lc[1], 1-w*w*lc[0]*lc[1]) * 180 / math.Pi
	}
	if r.code != 0 || !strings.Contains(r.stdout, fmt.Sprintf("%.3f", -want)) && !strings.Contains(r.stdout, fmt.Sprintf("%.3f", want)) {
		t.Fatalf("code %d; want %.3f° at 10 kHz in:\n%s%s", r.code, want, r.stdout, r.stderr)
	}
	if !strings.Contains(r.stdout, "-359.974") {
		t.Errorf("want -359.974 at 10 kHz:\n%s", r.stdout)
	}
}
