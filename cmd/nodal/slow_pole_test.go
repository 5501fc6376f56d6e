package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"nodal/mna/testcircuit"
)

// TestSlowPoleDriveAndTime: from the command line, two RC sections whose
// poles lie 10⁶ … 10²⁰ apart (testcircuit.TwoTimeConstants) are a stable
// low-pass of DC gain 1 (nodal analysis, common practice): `drive
// --signal 1` gives dc_out 1 and `time` a step whose final value is 1,
// both exit 0, with no warning of a natural frequency at s = 0.
func TestSlowPoleDriveAndTime(t *testing.T) {
	dir := t.TempDir()
	for _, cs := range testcircuit.TwoTimeConstantCases() {
		file := filepath.Join(dir, strings.ReplaceAll(cs.Name, " ", "_")+".nodal")
		if err := os.WriteFile(file, []byte(cs.Source()), 0o644); err != nil {
			t.Fatal(err)
		}
		tol := cs.Tol()
		r := runNodal(t, "", "drive", file, "--signal", "1", "--out", "out", "--format", "json")
		var drive struct {
			DCOut     *float64 `json:"dc_out"`
			Stability string   `json:"stability"`
		}
		if r.code != 0 || json.Unmarshal([]byte(r.stdout), &drive) != nil || drive.DCOut == nil {
			t.Errorf("%s: drive exit %d, stdout %q, stderr %q", cs.Name, r.code, r.stdout, r.stderr)
		} else if math.Abs(*drive.DCOut-1) > tol || drive.Stability != "stable" {
			t.Errorf("%s: drive dc_out %.12g, stability %q; want 1 within %.2g, stable", cs.Name, *drive.DCOut, drive.Stability, tol)
		}
		r = runNodal(t, "", "time", file, "--out", "out", "--format", "json")
		var step struct {
			Metrics struct {
				Final *float64 `json:"final"`
			} `json:"metrics"`
		}
		if r.code != 0 || json.Unmarshal([]byte(r.stdout), &step) != nil || step.Metrics.Final == nil {
			t.Errorf("%s: time exit %d, stdout %q, stderr %q", cs.Name, r.code, r.stdout, r.stderr)
		} else if math.Abs(*step.Metrics.Final-1) > tol {
			t.Errorf("%s: time final value %.12g, want 1 within %.2g", cs.Name, *step.Metrics.Final, tol)
		}
		if strings.Contains(r.stderr, "marginally stable") {
			t.Errorf("%s: time warns %q", cs.Name, r.stderr)
		}
	}
}
