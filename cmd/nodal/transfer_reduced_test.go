package main

import (
	"encoding/json"
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
