package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// TestTransferReducedSaysSo: above 300 unknowns transfer prints the
// dominant poles of a verified reduced model and says what it is: the
// order, the unknowns, the range and the error within the tolerance; the
// JSON carries the flag and the verification.
func TestTransferReducedSaysSo(t *testing.T) {
	const file = "../../testdata/perf/cable_ladder_1000.nodal"
	r := runNodal(t, "", "transfer", file, "--out", "n1000")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	// The default range: a decade below the lowest pole (39.2 mHz),
	// rounded down to a decade, to where the gain is 100 dB down.
	for _, want := range []string{"reduced model of order", "of 1002 unknowns", "verified against direct solves", "over 1 mHz–10 Hz", "limits 0.01 dB, 0.1°"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("output lacks %q:\n%s", want, r.stdout)
		}
	}
	// The lowest pole of the 1,000-section ladder (1 kΩ, 10 nF):
	// −(4/RC)·sin²(π/(2·2001)) = −0.246494 rad/s (closed form, see
	// analysis/reduce/testdata/ladder_poles.py).
	if !strings.Contains(r.stdout, "-0.24649") {
		t.Errorf("lowest pole −0.24649 rad/s missing:\n%s", r.stdout)
	}
	j := runNodal(t, "", "transfer", file, "--out", "n1000", "--from", "10m", "--to", "1", "--format", "json")
	var doc struct {
		Reduced      bool `json:"reduced"`
		ReducedModel struct {
			Order      int     `json:"order"`
			FromHz     float64 `json:"from_hz"`
			ToHz       float64 `json:"to_hz"`
			MaxErrorDB float64 `json:"max_error_db"`
		} `json:"reduced_model"`
	}
	if err := json.Unmarshal([]byte(j.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	m := doc.ReducedModel
	if !doc.Reduced || m.Order < 2 || m.FromHz != 0.01 || m.ToHz != 1 || !(m.MaxErrorDB <= 0.01) {
		t.Errorf("JSON: %+v", doc)
	}
}

// TestTransferRangeNeedsReduced: --from/--to on a circuit that gets the
// full extraction is an error, not silently ignored.
func TestTransferRangeNeedsReduced(t *testing.T) {
	r := runNodal(t, "", "transfer", "../../testdata/examples/logger_antialias.nodal", "--out", "out", "--from", "1")
	if r.code == 0 || !strings.Contains(r.stderr, "range of a reduced model") {
		t.Errorf("exit %d, stderr %q", r.code, r.stderr)
	}
}

// TestTransferReducedDominantPair: the dominant pole pair of a reduced
// model comes from the poles inside its verified range. The 1,000-section
// RC ladder (1 kΩ, 10 nF) has real poles only, so its pair is the two
// slowest, p_j = −(4/RC)·sin²((2j−1)π/(2·2001)), j = 1, 2 (closed form, see
// analysis/reduce/testdata/ladder_poles.py): ω0 = √(p1·p2) = 0.73948 rad/s
// (f0 = 0.117692 Hz) and Q = ω0/(−(p1 + p2)) = 0.300000 (≤ 0.5, as for any
// pair of real poles). The model's complex pair at 1.76 kHz, far above the
// 10 Hz top of the range, once gave f0 1.763 kHz and Q 0.574.
func TestTransferReducedDominantPair(t *testing.T) {
	const rc = 1e3 * 10e-9
	p := func(j float64) float64 {
		s := math.Sin((2*j - 1) * math.Pi / (2 * 2001))
		return -4 / rc * s * s
	}
	p1, p2 := p(1), p(2)
	w0 := math.Sqrt(p1 * p2)
	wantF0, wantQ := w0/(2*math.Pi), w0/-(p1+p2)
	r := runNodal(t, "", "transfer", "../../testdata/perf/cable_ladder_1000.nodal", "--out", "n1000", "--format", "json")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var doc struct {
		F0Hz *float64 `json:"f0_hz"`
		Q    *float64 `json:"q"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	// The reduced model's two slowest poles are within 1e-5 of the closed
	// form (3.5e-6 measured for the second).
	if doc.F0Hz == nil || math.Abs(*doc.F0Hz-wantF0) > 1e-5*wantF0 {
		t.Errorf("f0 = %v Hz, want %.6g Hz", doc.F0Hz, wantF0)
	}
	if doc.Q == nil || math.Abs(*doc.Q-wantQ) > 1e-5*wantQ {
		t.Errorf("q = %v, want %.6g", doc.Q, wantQ)
	}
}
