package main

import (
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// stabilityCircuits is where the stability test circuits live.
const stabilityCircuits = "../../analysis/stability/testdata/circuits"

// TestSwappedInputs: the inverting gain stage with its op-amp inputs
// swapped (a0=100k, gbw=1MHz) has a natural frequency at
// s = ωt/11 − ωt/A0 ≈ +571 krad/s (closed form): verify fails `stable`
// (exit 1), drive refuses (exit 2), tf JSON says unstable and names it;
// with an ideal op-amp H = −10 either way and the polarity warning names
// U1.
func TestSwappedInputs(t *testing.T) {
	sw := filepath.Join(stabilityCircuits, "swapped_inverting.nodal")
	dir := t.TempDir()
	req := filepath.Join(dir, "swapped_req.nodal")
	src, err := os.ReadFile(sw)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(req, append(src, []byte("require dc within 19dB..21dB\n")...), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "verify", req, "--runs", "20")
	if r.code != exitVerdict || !strings.Contains(r.stdout, "stable (implicit)") || !strings.Contains(r.stdout, "not stable") ||
		!strings.Contains(r.stdout, "verdict: FAIL at nominal values") {
		t.Errorf("verify: exit %d, stdout\n%s", r.code, r.stdout)
	}
	if !strings.Contains(r.stderr, "571136 rad/s") || !strings.Contains(r.stderr, "90.9 kHz") || !strings.Contains(r.stderr, "U1") {
		t.Errorf("verify: the warning should name the frequency in rad/s and Hz and U1: %q", r.stderr)
	}
	r = runNodal(t, "", "verify", req, "--runs", "20", "--format", "json")
	var vr verifyReport
	if err := json.Unmarshal([]byte(r.stdout), &vr); err != nil {
		t.Fatal(err)
	}
	// No part is toleranced: no Monte Carlo runs, the yield is the nominal
	// verdict ("no toleranced parts: worst case and yield equal nominal").
	if vr.Requirements[0].NominalPass || vr.Requirements[1].NominalPass || vr.Toleranced != 0 || vr.Yield != nil || vr.PassWorst {
		t.Errorf("verify json: an unstable build must fail every requirement: %+v", vr)
	}
	r = runNodal(t, "", "drive", sw, "--out", "out", "--signal", "sin(2*pi*1k*t)")
	if r.code != exitInput || !strings.Contains(r.stderr, "no steady state exists") || r.stdout != "" {
		t.Errorf("drive: exit %d, stdout %q, stderr %q", r.code, r.stdout, r.stderr)
	}
	// transfer, noise and impedance state the stability: the warning
	// beside the table, the keys in JSON (the root a(s)·β = 1,
	// s = ωt/11 − ωt/A0, closed form). impedance printed no warning and
	// "stability": "" before.
	for _, args := range [][]string{{"transfer", sw, "--out", "out"}, {"noise", sw, "--out", "out"}, {"impedance", sw, "--port", "Vin"}} {
		if args[0] != "transfer" {
			r = runNodal(t, "", args...)
			if r.code != 0 || !strings.Contains(r.stderr, "the circuit is unstable") || !strings.Contains(r.stderr, "571136 rad/s") {
				t.Errorf("%s: exit %d, stderr %q", args[0], r.code, r.stderr)
			}
		}
		st, poles := stabilityKeys(t, runNodal(t, "", append(args, "--format", "json")...).stdout)
		if st != "unstable" || len(poles) != 1 || real(poles[0]) < 5.71e5 || real(poles[0]) > 5.712e5 {
			t.Errorf("%s json: stability %q, unstable_poles %v", args[0], st, poles)
		}
	}
	st, poles := stabilityKeys(t, runNodal(t, "", "impedance", "../../testdata/examples/tone_lowpass_ideal.nodal", "--port", "Vin", "--format", "json").stdout)
	if st != "stable" || poles == nil || len(poles) != 0 {
		t.Errorf("impedance json of a stable filter: stability %q, unstable_poles %v", st, poles)
	}
	r = runNodal(t, "", "transfer", filepath.Join(stabilityCircuits, "swapped_ideal.nodal"), "--out", "out")
	if r.code != 0 || !strings.Contains(r.stderr, "U1: the loop around U1 is unstable with a finite-gain op-amp") || !strings.Contains(r.stderr, "are its inputs swapped?") {
		t.Errorf("ideal swapped: exit %d, stderr %q", r.code, r.stderr)
	}
	r = runNodal(t, "", "transfer", "../../testdata/examples/tone_lowpass_ideal.nodal", "--out", "out")
	if r.code != 0 || r.stderr != "" {
		t.Errorf("a correct ideal-op-amp filter draws no warning: exit %d, stderr %q", r.code, r.stderr)
	}
}

// TestMarginalDrive: a lossless tank (±j·100 krad/s) driven at its own
// frequency has no steady state; driven elsewhere it has one, with a
// warning.
func TestMarginalDrive(t *testing.T) {
	tank := filepath.Join(stabilityCircuits, "pickup_tank.nodal")
	r := runNodal(t, "", "drive", tank, "--out", "t", "--signal", "sin(1e5*t)")
	if r.code != exitInput || !strings.Contains(r.stderr, "undamped natural frequency") {
		t.Errorf("at resonance: exit %d, stderr %q", r.code, r.stderr)
	}
	r = runNodal(t, "", "drive", tank, "--out", "t", "--signal", "sin(2e5*t)", "--format", "json")
	if r.code != 0 || !strings.Contains(r.stdout, `"stability": "marginal"`) {
		t.Errorf("off resonance: exit %d, stdout %q", r.code, r.stdout)
	}
}

// TestToleranceUnstableFraction: K = 2.9 ±5 % (uniform) around a Wien
// network oscillates for K > 3: P = (3.045 − 3)/0.29 = 0.155; 400 runs
// give σ = 0.018, 4.5σ allowed.
func TestToleranceUnstableFraction(t *testing.T) {
	src, err := os.ReadFile(filepath.Join(stabilityCircuits, "wien_oscillator.nodal"))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "wien.nodal")
	if err := os.WriteFile(path, []byte(strings.Replace(string(src), "let K = 3\n", "let K = 2.9 ±5%\n", 1)), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "tolerance", path, "--out", "o", "--metric", "gain@1k", "--runs", "400", "--worst-case", "--format", "json")
	var doc struct {
		UnstableRuns     int     `json:"unstable_runs"`
		UnstableFraction float64 `json:"unstable_fraction"`
		UnstableCorners  *int    `json:"unstable_corners"`
		Stability        string  `json:"stability"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatalf("%v: %s %s", err, r.stdout, r.stderr)
	}
	if doc.UnstableFraction < 0.155-4.5*0.018 || doc.UnstableFraction > 0.155+4.5*0.018 || doc.UnstableCorners == nil || *doc.UnstableCorners != 1 || doc.Stability != "stable" {
		t.Errorf("tolerance: %+v", doc)
	}
}

// TestReportStability: an unstable circuit's report opens with a banner;
// a loop requirement gives the report a loop section with the margins.
func TestReportStability(t *testing.T) {
	r := runNodal(t, "", "report", filepath.Join(stabilityCircuits, "swapped_inverting.nodal"), "--format", "text")
	heads := strings.SplitN(r.stdout, "\n\n", 3)
	if r.code != 0 || len(heads) < 2 || !strings.HasPrefix(heads[1], "Warning: this circuit is not stable as drawn") {
		t.Errorf("report of an unstable circuit: exit %d, no banner first:\n%s", r.code, r.stdout)
	}
	r = runNodal(t, "", "report", "../../testdata/examples/photodiode_frontend.nodal", "--format", "text")
	for _, want := range []string{"Stability: stable", "Loop gain around U1", "phase margin 58.06°", "phase_margin@U1 above 45deg"} {
		if r.code != 0 || !strings.Contains(r.stdout, want) {
			t.Errorf("report: exit %d, no %q in\n%s", r.code, want, r.stdout)
		}
	}
	if strings.Contains(r.stdout, "not stable as drawn") {
		t.Error("report: banner on a stable circuit")
	}
}

// stabilityKeys reads "stability" and "unstable_poles" of a JSON
// document; poles is nil when the key is absent or null.
func stabilityKeys(t *testing.T, doc string) (string, []complex128) {
	t.Helper()
	var d struct {
		Stability     string                     `json:"stability"`
		UnstablePoles []struct{ Re, Im float64 } `json:"unstable_poles"`
	}
	if err := json.Unmarshal([]byte(doc), &d); err != nil {
		t.Fatalf("%v\n%s", err, doc)
	}
	if d.UnstablePoles == nil {
		return d.Stability, nil
	}
	out := []complex128{}
	for _, p := range d.UnstablePoles {
		out = append(out, complex(p.Re, p.Im))
	}
	return d.Stability, out
}
