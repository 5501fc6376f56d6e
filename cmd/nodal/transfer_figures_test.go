package main

import (
	"encoding/json"
	"strings"
	"testing"
)

// TestTransferPeakAndPeaking: the peak gain and its frequency are always
// printed; "no peaking" only for a low- or high-pass within 0.01 dB of its
// passband gain, never for a band-pass resonance; a first-order response
// says why it has no f0 or Q.
func TestTransferPeakAndPeaking(t *testing.T) {
	// Parallel RLC driven by a current: Z peaks at R = 1 kΩ (60 dB re
	// 1 V/A, printed with that reference) at f0 = 1/(2π√(LC)) = 5.033 kHz, Q = R·√(C/L) = 31.62 (common
	// practice).
	rlc := "I1: current source (gnd, a) 1\nR: resistor (a, gnd) 1k\nL: inductor (a, gnd) 1m\nC: capacitor (a, gnd) 1u\n"
	// Unity-gain Sallen-Key with Q = 2: peaking 20·log10(Q/√(1 − 1/(4Q²)))
	// = 6.301 dB (common practice). R = 10k, C1 = 4Q²·C2 gives Q = √(C1/C2)/2 and
	// f0 = 1/(2π·R·√(C1·C2)) = 397.9 Hz.
	sk := "Vin: voltage source (in, gnd) 1\nR1: resistor (in, a) 10k\nR2: resistor (a, b) 10k\nC1: capacitor (a, out) 160n\nC2: capacitor (b, gnd) 10n\nU1: opamp (b, out, out)\n"
	tests := []struct {
		name, circuit, out string
		want, not          []string
	}{
		{"band-pass", rlc, "a", []string{"60.000 dB re 1 V/A at 5.033 kHz", "f0 5.033 kHz, Q 31.62"}, []string{"no peaking", "peaking "}},
		{"first-order", "Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) 1u\n", "out",
			[]string{"0.000 dB at DC", "no peaking (within 0.01 dB of the passband gain)", "none: first-order: no pole pair"}, nil},
		{"peaking low-pass", sk, "out", []string{"6.301 dB above the passband gain", "f0 397.9 Hz, Q 2"}, []string{"no peaking"}},
	}
	for _, tc := range tests {
		r := runNodal(t, tc.circuit, "transfer", "-", "--out", tc.out)
		if r.code != 0 {
			t.Fatalf("%s: exit %d\n%s", tc.name, r.code, r.stderr)
		}
		for _, w := range tc.want {
			if !strings.Contains(r.stdout, w) {
				t.Errorf("%s: output lacks %q:\n%s", tc.name, w, r.stdout)
			}
		}
		for _, w := range tc.not {
			if strings.Contains(r.stdout, w) {
				t.Errorf("%s: output has %q:\n%s", tc.name, w, r.stdout)
			}
		}
	}
	r := runNodal(t, "Vs: voltage source (in, gnd) 1\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) 1u\n", "transfer", "-", "--out", "out", "--format", "json")
	var doc struct {
		Q          *float64 `json:"q"`
		PairReason string   `json:"pair_reason"`
		PeakingDB  *float64 `json:"peaking_db"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if doc.Q != nil || doc.PairReason != "first-order: no pole pair" || doc.PeakingDB == nil || *doc.PeakingDB != 0 {
		t.Errorf("first-order JSON: q %v, pair_reason %q, peaking_db %v", doc.Q, doc.PairReason, doc.PeakingDB)
	}
}
