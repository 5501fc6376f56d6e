package main

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"
)

// ladderText is k RC sections (1 kΩ, 10 nF, with tol appended to each
// resistor) from n0 to nk; drive is the part that drives n0: a voltage
// source, or a gain element reading nk (positive feedback round the
// ladder); extra lines are appended.
func ladderText(k int, tol, drive string, extra ...string) string {
	var b strings.Builder
	b.WriteString(drive + "\n")
	for j := 0; j < k; j++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) 1k%s\nC%d: capacitor (n%d, gnd) 10n\n", j, j, j+1, tol, j, j+1)
	}
	for _, e := range extra {
		b.WriteString(e + "\n")
	}
	return b.String()
}

// TestLargeCircuitStabilityMessages: past 1,000 unknowns the commands say
// what nodal proved. A 10,000-section RC ladder is passive and damped
// (Tellegen's energy balance, stability/passive.go): stable, no warning,
// and tolerance runs; a ladder with loop gain 2 round it has a right
// half-plane root, found and checked; with loop gain 0.5 nothing is found
// and nodal says it did not check; an undamped tank beside the ladder
// leaves it "passive", not proven strict.
func TestLargeCircuitStabilityMessages(t *testing.T) {
	lad := ladderText(10000, "", "V1: voltage source (n0, gnd) 1")
	tests := []struct {
		name  string
		text  string
		args  []string
		class string
		warn  string // in standard error ("" for none about stability)
	}{
		{"sweep stable ladder", lad, []string{"sweep", "-", "--out", "n10000", "--at", "1"}, "stable", ""},
		{"transfer stable ladder", lad, []string{"transfer", "-", "--out", "n10000"}, "stable", ""},
		{"tolerance stable ladder", ladderText(10000, " ±1%", "V1: voltage source (n0, gnd) 1"),
			[]string{"tolerance", "-", "--out", "n100", "--metric", "gain@1Hz", "--runs", "4"}, "stable", ""},
		{"sweep feedback gain 2", ladderText(2000, "", "E1: voltage source (n0, gnd) 2*v(n2000)", "I1: current source (gnd, n1000) 1"),
			[]string{"sweep", "-", "--out", "n2000", "--at", "1"}, "unstable",
			"the circuit is unstable: natural frequency s = 0.04333"},
		{"sweep feedback gain 0.5", ladderText(2000, "", "E1: voltage source (n0, gnd) 0.5*v(n2000)", "I1: current source (gnd, n1000) 1"),
			[]string{"sweep", "-", "--out", "n2000", "--at", "1"}, "not checked",
			"stability not checked: a block of 2001 unknowns has active parts; shift-and-invert Arnoldi"},
		{"sweep ladder and tank", ladderText(2000, "", "V1: voltage source (n0, gnd) 1", "Lt: inductor (t, gnd) 1m", "Ct: capacitor (t, gnd) 1u"),
			[]string{"sweep", "-", "--out", "n2000", "--at", "1"}, "passive",
			"stability not proven strict: every part is passive, so no natural frequency lies in the right half-plane, but a lossless mode"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			r := runNodal(t, tt.text, append(tt.args, "--format", "json")...)
			if r.code != 0 {
				t.Fatalf("exit %d, stderr %q", r.code, r.stderr)
			}
			var doc struct {
				Stability  string `json:"stability"`
				Reason     string `json:"stability_reason"`
				AllNatural *bool  `json:"all_natural_computed"`
			}
			if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
				t.Fatalf("%v in %.300s", err, r.stdout)
			}
			if doc.Stability != tt.class || doc.AllNatural == nil || *doc.AllNatural || doc.Reason == "" {
				t.Fatalf("stability %q (reason %q, all %v), want %q and not all computed", doc.Stability, doc.Reason, doc.AllNatural, tt.class)
			}
			r = runNodal(t, tt.text, tt.args...) // table output: the warnings
			if r.code != 0 {
				t.Fatalf("exit %d, stderr %q", r.code, r.stderr)
			}
			if tt.warn == "" && strings.Contains(r.stderr, "stab") {
				t.Fatalf("unexpected stability warning: %q", r.stderr)
			}
			if tt.warn != "" && !strings.Contains(r.stderr, tt.warn) {
				t.Fatalf("stderr %q, want it to contain %q", r.stderr, tt.warn)
			}
		})
	}
}
