package main

import (
	"strings"
	"testing"
)

// toneIdealTF is the tone stage's H(s) with ideal buffers: the product of
// its two RC shelves (1 + s·Rsh·C)/(1 + s·(Rser + Rsh)·C), each a divider
// Rsh + 1/(sC) over Rser + Rsh + 1/(sC) (common practice).
const toneIdealTF = "(1 + s*BASS.Rsh*BASS.Csh)*(1 + s*TREB.Rsh*TREB.Csh)/((1 + s*(BASS.Rser+BASS.Rsh)*BASS.Csh)*(1 + s*(TREB.Rser+TREB.Rsh)*TREB.Csh))"

// TestCheckBandAndIdeal: the ideal-buffer derivation differs from the
// tone stage with its 1 MHz buffers; it agrees (identically) with --ideal,
// and with --band over 10..300 Hz, where three buffers shift the phase by
// 3·atan(300 Hz/1 MHz) = 0.05° < 0.1°, but not over 10 Hz..20 kHz
// (3.4°).
func TestCheckBandAndIdeal(t *testing.T) {
	const file = "../../testdata/examples/tone_stage.nodal"
	tests := []struct {
		flags []string
		code  int
		want  []string
	}{
		{nil, 1, []string{"verdict: differs"}},
		{[]string{"--ideal"}, 0, []string{"symbolic comparison: identical", "verdict: agrees"}},
		{[]string{"--band", "10Hz..300Hz"}, 0, []string{"judged on the responses over 10 Hz to 300 Hz", "verdict: agrees"}},
		{[]string{"--band", "10Hz..20kHz"}, 1, []string{"verdict: differs"}},
		// 3.4° at 20 kHz is within a phase tolerance of 5°.
		{[]string{"--band", "10Hz..20kHz", "--phase-tol", "5deg"}, 0, []string{"verdict: agrees"}},
	}
	for _, tt := range tests {
		r := runNodal(t, "", append([]string{"check", file, "--out", "out", "--tf", toneIdealTF}, tt.flags...)...)
		if r.code != tt.code {
			t.Errorf("%v: exit %d, want %d\n%s%s", tt.flags, r.code, tt.code, r.stdout, r.stderr)
		}
		for _, w := range tt.want {
			if !strings.Contains(r.stdout, w) {
				t.Errorf("%v: no %q in\n%s", tt.flags, w, r.stdout)
			}
		}
		if strings.Contains(r.stdout, "equal part values hide") {
			t.Errorf("%v: the band verdict is called a hidden slip\n%s", tt.flags, r.stdout)
		}
	}
	r := runNodal(t, "", "check", file, "--out", "out", "--tf", toneIdealTF, "--mag-tol", "5Hz")
	if r.code != 2 || !strings.Contains(r.stderr, "--mag-tol:1:1:") {
		t.Errorf("--mag-tol 5Hz: exit %d %s", r.code, r.stderr)
	}
	for _, bad := range []string{"20Hz", "2k..1k", "0..1k"} {
		r := runNodal(t, "", "check", file, "--out", "out", "--tf", toneIdealTF, "--band", bad)
		if r.code != 2 || !strings.Contains(r.stderr, "--band") {
			t.Errorf("--band %s: exit %d %s", bad, r.code, r.stderr)
		}
	}
}

// TestCheckMissingRootAndRatio: a first-order derivation of a second-order
// circuit reports the circuit's pole that yours lacks as "missing in
// yours" (never a rel_diff of 0), and JSON gives it rel_diff null with
// status "missing"; a value beginning with "-" needs no "=".
func TestCheckMissingRootAndRatio(t *testing.T) {
	const file = "../../testdata/reference/circuits/sallen_key_lp.nodal"
	r := runNodal(t, "", "check", file, "--out", "out", "--tf", "1/(1 + 150.4e-6*s)")
	if r.code != 1 || !strings.Contains(r.stdout, "missing in yours") {
		t.Fatalf("exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	j := runNodal(t, "", "check", file, "--out", "out", "--tf", "1/(1 + 150.4e-6*s)", "--format", "json")
	if !strings.Contains(j.stdout, `"rel_diff": null`) || !strings.Contains(j.stdout, `"status": "missing"`) {
		t.Errorf("json:\n%s", j.stdout)
	}
	neg := runNodal(t, "", "check", file, "--out", "out", "--tf", "-1/(1 + 150.4e-6*s + 10.34e-9*s^2)")
	if neg.code != 1 || !strings.Contains(neg.stdout, "a sign slip") {
		t.Errorf("negative value: exit %d\n%s%s", neg.code, neg.stdout, neg.stderr)
	}
}

// TestRatioText: a ratio that differs never prints as 1.
func TestRatioText(t *testing.T) {
	for _, tt := range []struct {
		r      float64
		agrees bool
		want   string
	}{
		{1.0000001, false, "1.0000001"},
		{0.99999998, false, "0.99999998"},
		{1.0000001, true, "1"},
		{2, false, "2"},
	} {
		if got := ratioText(tt.r, tt.agrees); got != tt.want {
			t.Errorf("ratioText(%v, %v) = %q, want %q", tt.r, tt.agrees, got, tt.want)
		}
	}
	for _, tt := range []struct {
		r    float64
		want string
	}{{1.00002, "1.00002×"}, {0.99998, "0.99998×"}, {2, "2.000×"}, {10, "10.000×"}} {
		if got := times(tt.r); got != tt.want {
			t.Errorf("times(%v) = %q, want %q", tt.r, got, tt.want)
		}
	}
}
