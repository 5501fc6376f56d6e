package main

import (
	"bytes"
	"context"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// runCaptured runs the command line and returns its exit status and
// output streams.
func runCaptured(t *testing.T, stdin string, args ...string) (int, string, string) {
	t.Helper()
	var out, errOut bytes.Buffer
	e := &env{ctx: context.Background(), stdin: strings.NewReader(stdin), stdout: &out, stderr: &errOut}
	code := run(e, args)
	return code, out.String(), errOut.String()
}

// The bridge circuits have f3db = 1/(2π·10 kΩ·10 nF) = 1591.5 Hz (first-order
// RC low-pass); with ±1 % parts the worst case is f0/1.01² .. f0/0.99² =
// 1560.1 .. 1623.8 Hz, with ±5 % f0/1.05² .. f0/0.95² = 1443.6 .. 1763.49 Hz.
func TestVerifyExitStatus(t *testing.T) {
	tests := []struct {
		file   string
		strict bool
		code   int
		want   []string
	}{
		{"bridge_pass.nodal", false, 0, []string{"1.592 kHz", "1.56 kHz .. 1.624 kHz", "verdict: pass at nominal values and in the worst case"}},
		{"bridge_pass.nodal", true, 0, []string{"100.0 %"}},
		{"bridge_fail.nodal", false, 1, []string{"FAIL", "verdict: FAIL at nominal values"}},
		{"bridge_worst.nodal", false, 0, []string{"1.444 kHz .. 1.763 kHz", "verdict: pass at nominal values; FAIL in the worst case"}},
		{"bridge_worst.nodal", true, 1, []string{"FAIL in the worst case"}},
	}
	for _, tc := range tests {
		args := []string{"verify", filepath.Join("testdata", tc.file), "--runs", "200"}
		if tc.strict {
			args = append(args, "--strict")
		}
		code, out, errOut := runCaptured(t, "", args...)
		if code != tc.code {
			t.Errorf("%v: exit %d, want %d\n%s%s", args, code, tc.code, out, errOut)
		}
		for _, w := range tc.want {
			if !strings.Contains(out, w) {
				t.Errorf("%v: output lacks %q:\n%s", args, w, out)
			}
		}
	}
}

func TestVerifyJSON(t *testing.T) {
	code, out, errOut := runCaptured(t, "", "verify", "testdata/bridge_worst.nodal", "--runs", "400", "--seed", "3", "--format", "json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep verifyReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if s := rep.Requirements[0]; s.Requirement != "stable (implicit)" || !s.NominalPass || !s.WorstPass || rep.Stability != "stable" {
		t.Errorf("implicit stable requirement %+v, stability %q", s, rep.Stability)
	}
	r := rep.Requirements[1]
	if !r.NominalPass || r.WorstPass || rep.PassWorst || !rep.PassNominal || rep.Corners != 4 {
		t.Errorf("verdicts %+v", rep)
	}
	// P(1.5 kHz ≤ f3db ≤ 1.7 kHz) for uniform ±5 % R and C is
	// P(XY ≥ f0/1700) − P(XY ≥ f0/1500) = 0.85885 from the closed form of
	// the product of two uniforms derived in analysis.rcPassProbability;
	// with 400 runs σ = 0.0174, and 4.5σ is allowed.
	if y := r.Yield; y == nil || y.Runs != 400 || !(y.Lo95 < y.Fraction && y.Fraction < y.Hi95) || y.Fraction < 0.85885-4.5*0.0174 || y.Fraction > 0.85885+4.5*0.0174 {
		t.Errorf("yield %+v", r.Yield)
	}
}

func TestVerifyBadInput(t *testing.T) {
	dir := t.TempDir()
	write := func(name, src string) string {
		p := filepath.Join(dir, name)
		if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	rc := "Vb: voltage source (in, gnd) 1\nRf: resistor (in, out) 10k\nCf: capacitor (out, gnd) 10nF\n"
	tests := []struct {
		name string
		args []string
		want []string
	}{
		{"no requirements", []string{"verify", write("none.nodal", rc)}, []string{"has no require statements"}},
		{"syntax", []string{"verify", write("syntax.nodal", rc+"require f3db within 1.9kHz\n")}, []string{"syntax.nodal:4:", "within needs a range"}},
		{"syntax col", []string{"verify", write("op.nodal", rc+"\nrequire f3db beyond 2kHz\n")}, []string{"op.nodal:5:14:", "unexpected \"beyond\""}},
		{"unknown metric", []string{"verify", write("metric.nodal", rc+"require bandwidth below 2kHz\n")}, []string{"metric.nodal:4:9", "unknown metric \"bandwidth\"", "f3db", "gain@F", "q"}},
		{"no out node", []string{"verify", write("noout.nodal", strings.ReplaceAll(rc, "out", "v2")+"require f3db below 2kHz\n")}, []string{"no node named out", "--out"}},
		{"bad runs", []string{"verify", "testdata/bridge_pass.nodal", "--runs", "-1"}, []string{"--runs"}},
	}
	for _, tc := range tests {
		code, _, errOut := runCaptured(t, "", tc.args...)
		if code != exitInput {
			t.Errorf("%s: exit %d, want 2 (%s)", tc.name, code, errOut)
		}
		for _, w := range tc.want {
			if !strings.Contains(errOut, w) {
				t.Errorf("%s: stderr lacks %q:\n%s", tc.name, w, errOut)
			}
		}
	}
}

func TestVerifyWithoutTolerances(t *testing.T) {
	// No part carries a tolerance: the worst case and the yield are the
	// nominal circuit, said in words, with no corner count and no runs.
	src := "Vb: voltage source (in, gnd) 1\nRf: resistor (in, out) 10k\nCf: capacitor (out, gnd) 10nF\nrequire f3db within 1.5kHz..1.7kHz\nrequire q below 1\n"
	r := runNodal(t, src, "verify", "-")
	if r.code != exitVerdict {
		t.Fatalf("exit %d (q of a first-order circuit fails)\n%s%s", r.code, r.stdout, r.stderr)
	}
	for _, w := range []string{"no toleranced parts: worst case and yield equal nominal", "as nominal", "first-order: no pole pair"} {
		if !strings.Contains(r.stdout, w) {
			t.Errorf("output lacks %q:\n%s", w, r.stdout)
		}
	}
	if strings.Contains(r.stdout, "0 corners") || strings.Contains(r.stdout, "Monte Carlo") {
		t.Errorf("corner or run count printed:\n%s", r.stdout)
	}
	r = runNodal(t, src, "verify", "-", "--format", "json")
	var doc verifyReport
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	// The requirements: the implicit stable, f3db, q.
	if doc.Toleranced != 0 || doc.Runs != 0 || doc.Yield != nil || len(doc.Requirements) != 3 || doc.Requirements[2].NominalReason != "q: first-order: no pole pair" {
		t.Errorf("JSON %+v", doc)
	}
}

// TestVerifyLoopOnlyHeader: a file whose requirements are all loop metrics
// has no response to name; the header says so instead of leaving a blank.
func TestVerifyLoopOnlyHeader(t *testing.T) {
	src, err := os.ReadFile("../../testdata/examples/photodiode_frontend.nodal")
	if err != nil {
		t.Fatal(err)
	}
	var keep []string
	for _, line := range strings.Split(string(src), "\n") {
		if !strings.HasPrefix(strings.TrimSpace(line), "require ") {
			keep = append(keep, line)
		}
	}
	keep = append(keep, "require phase_margin@U1 above 45deg")
	f := writeTemp(t, t.TempDir(), "pd.nodal", strings.Join(keep, "\n")+"\n")
	res := runNodal(t, "", "verify", f)
	first, _, _ := strings.Cut(res.stdout, "\n")
	if res.code != 0 || !strings.HasSuffix(first, ": requirements on the circuit's loops") || strings.Contains(first, "  ") {
		t.Errorf("exit %d, header %q (stderr %s)", res.code, first, res.stderr)
	}
}
