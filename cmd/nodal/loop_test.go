package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestLoopCommand: the table shows T as tf shows H, the figures and the
// closed-loop stability; JSON has the keys; an ideal op-amp is
// refused with the fix.
func TestLoopCommand(t *testing.T) {
	r := runNodal(t, "", "loop", "../../testdata/examples/photodiode_frontend.nodal", "--at", "U1")
	for _, want := range []string{"expanded:", "factored:", "zero-pole:", "freq_hz", "mag_db", "phase_deg", "gain crossover", "phase margin 58.06°", "no crossover: arg T", "closed loop"} {
		if r.code != 0 || !strings.Contains(r.stdout, want) {
			t.Errorf("loop table: code %d, no %q in\n%s%s", r.code, want, r.stdout, r.stderr)
		}
	}
	r = runNodal(t, "", "loop", "../../testdata/examples/photodiode_frontend.nodal", "--at", "U1", "--format", "json")
	var doc map[string]any
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatalf("json: %v\n%s", err, r.stdout)
	}
	for _, k := range []string{"num", "den", "poles", "zeros", "points", "crossovers_hz", "phase_margin_deg", "phase_crossovers_hz", "gain_margin_db", "stability"} {
		if _, ok := doc[k]; !ok {
			t.Errorf("json: no key %q", k)
		}
	}
	if doc["stability"] != "stable" || doc["gain_margin_db"] != nil {
		t.Errorf("json: stability %v, gain margin %v; want stable, null (no phase crossover)", doc["stability"], doc["gain_margin_db"])
	}
	r = runNodal(t, "", "loop", "../../analysis/stability/testdata/circuits/swapped_ideal.nodal", "--at", "U1")
	if r.code != exitInput || !strings.Contains(r.stderr, "ideal op-amp") || !strings.Contains(r.stderr, "a0=") {
		t.Errorf("ideal op-amp: code %d, stderr %q", r.code, r.stderr)
	}
	r = runNodal(t, "", "loop", "../../testdata/examples/photodiode_frontend.nodal", "--at", "R9")
	if r.code != exitInput || !strings.Contains(r.stderr, "U1") {
		t.Errorf("unknown part: code %d, stderr %q", r.code, r.stderr)
	}
	dir := t.TempDir()
	svg := filepath.Join(dir, "loop.svg")
	r = runNodal(t, "", "loop", "../../testdata/examples/photodiode_frontend.nodal", "--at", "U1", "--plot", svg)
	if b, err := os.ReadFile(svg); r.code != 0 || err != nil || !strings.Contains(string(b), "phase margin") {
		t.Errorf("--plot: code %d, %v, stderr %q", r.code, err, r.stderr)
	}
}
