package main

import (
	"strings"
	"testing"
)

// TestTransimpedanceFigures: the figures of a transimpedance (the
// photodiode stage, V/A) are values in V/A with dB levels re 1 V/A, never
// a "gain" in plain dB; a voltage ratio keeps "DC gain" in dB.
func TestTransimpedanceFigures(t *testing.T) {
	r := runNodal(t, "", "transfer", "../../testdata/reference/circuits/photodiode_hybrid_pi.nodal", "--in", "Iph", "--out", "out")
	if r.code != 0 {
		t.Fatalf("exit %d %s", r.code, r.stderr)
	}
	for _, want := range []string{"DC value", "-100000 V/A (100.000 dB re 1 V/A)", "(reference 100.000 dB re 1 V/A)", "-20 dB/decade"} {
		if !strings.Contains(r.stdout, want) {
			t.Errorf("no %q in\n%s", want, r.stdout)
		}
	}
	if strings.Contains(r.stdout, "DC gain") || strings.Contains(r.stdout, "100.000 dB)") {
		t.Errorf("a plain-dB gain for a V/A response:\n%s", r.stdout)
	}
	sw := runNodal(t, "", "sweep", "../../testdata/reference/circuits/photodiode_hybrid_pi.nodal", "--in", "Iph", "--out", "out", "--at", "1k")
	if sw.code != 0 || !strings.Contains(sw.stdout, "H = out / Iph  [V/A: mag in V/A, mag_db in dB re 1 V/A]") {
		t.Errorf("sweep of a V/A response: exit %d\n%s", sw.code, sw.stdout)
	}
	v := runNodal(t, "", "transfer", rcFile, "--out", "out")
	if !strings.Contains(v.stdout, "DC gain") || strings.Contains(v.stdout, "dB re") {
		t.Errorf("V/V response relabelled:\n%s", v.stdout)
	}
}

// TestDBReference: the reference a dB level of each kind of response
// states (IEC 60027-3 style, common practice).
func TestDBReference(t *testing.T) {
	for unit, want := range map[string]string{"V/V": "dB", "A/A": "dB", "Ω": "dBΩ", "V/A": "dB re 1 V/A", "A/V": "dB re 1 A/V"} {
		if got := dbReference(unit); got != want {
			t.Errorf("%s: %q, want %q", unit, got, want)
		}
	}
	rows := relabelForUnit([][2]string{{"peak gain", "no peaking (within 0.01 dB of the reference)"}, {"DC gain", "10000 (80.000 dB)"},
		{"peaking", "6.301 dB above the passband gain"}}, "Ω")
	if rows[0] != [2]string{"peak value", "no peaking (within 0.01 dB of the reference)"} || rows[1] != [2]string{"DC value", "10000 Ω (80.000 dBΩ)"} ||
		rows[2] != [2]string{"peaking", "6.301 dB above the passband gain"} {
		t.Errorf("%q", rows)
	}
}

// TestVerifyTransimpedanceLevels: a dB requirement or tolerance metric on
// a V/A response is shown in dB re 1 V/A (the photodiode TIA example, 100 kΩ feedback:
// 100 dB re 1 V/A), in text and in the JSON unit.
func TestVerifyTransimpedanceLevels(t *testing.T) {
	const file = "../../testdata/examples/photodiode_tia.nodal"
	r := runNodal(t, "", "verify", file, "--out", "out", "--runs", "20")
	if r.code != 0 || !strings.Contains(r.stdout, "100.00 dB re 1 V/A") {
		t.Errorf("exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
	j := runNodal(t, "", "verify", file, "--out", "out", "--runs", "20", "--format", "json")
	if !strings.Contains(j.stdout, `"unit": "dB re 1 V/A"`) {
		t.Errorf("json:\n%s", j.stdout)
	}
	tol := runNodal(t, "", "tolerance", file, "--out", "out", "--metric", "dc", "--runs", "20", "--worst-case")
	if tol.code != 0 || !strings.Contains(tol.stdout, "dc (dB re 1 V/A)") || strings.Contains(tol.stdout, "dc (dB)") {
		t.Errorf("tolerance: exit %d\n%s%s", tol.code, tol.stdout, tol.stderr)
	}
}
