package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestSweepUnderflowShown: a 1,000-section 1 kΩ / 10 nF RC ladder swept to
// 1 MHz falls below float64's range (|H| about 10^-1800 at 1 MHz, see
// analysis/response's closed-form check): the table says "below 2.2e-308
// (underflow)" instead of 0 and -inf, JSON gives null with the note, and
// stderr names the frequency range. An ordinary RC low-pass gets no note.
func TestSweepUnderflowShown(t *testing.T) {
	var b strings.Builder
	b.WriteString("Vin: voltage source (n0, gnd) 1\n")
	for j := 1; j <= 1000; j++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) 1k\nC%d: capacitor (n%d, gnd) 10n\n", j, j-1, j, j, j)
	}
	ladder := filepath.Join(t.TempDir(), "cable.nodal")
	if err := os.WriteFile(ladder, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "sweep", ladder, "--out", "n1000", "--at", "100,1MHz")
	if r.code != 0 || !strings.Contains(r.stdout, "below 2.2e-308 (underflow)") || strings.Contains(r.stdout, "-inf") ||
		!strings.Contains(r.stderr, "n1000: |H| is below 2.2e-308, float64's range, at 1e+06 Hz (1 of 2 points)") {
		t.Fatalf("table: code %d\n%s\n%s", r.code, r.stdout, r.stderr)
	}
	r = runNodal(t, "", "sweep", ladder, "--out", "n1000", "--at", "100,1MHz", "--format", "json")
	var doc struct {
		Points []struct {
			Mag, MagDB, PhaseDeg, GroupDelayS *float64
			Note                              string
		} `json:"points"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil || len(doc.Points) != 2 {
		t.Fatalf("json: %v\n%s", err, r.stdout)
	}
	if p := doc.Points[1]; p.Mag != nil || p.MagDB != nil || p.PhaseDeg != nil || p.GroupDelayS != nil || !strings.Contains(p.Note, "underflow") {
		t.Errorf("1 MHz point: %+v, want nulls and the underflow note", p)
	}
	if p := doc.Points[0]; p.Mag == nil || *p.Mag <= 0 || p.Note != "" {
		t.Errorf("100 Hz point: %+v, want a number and no note", p)
	}
	r = runNodal(t, "", "sweep", rcFile, "--from", "1Hz", "--to", "1GHz", "--format", "json")
	if r.code != 0 || strings.Contains(r.stdout, "underflow") || strings.Contains(r.stderr, "underflow") {
		t.Errorf("RC low-pass: code %d, an underflow note where there is none\n%.400s\n%s", r.code, r.stdout, r.stderr)
	}
}
