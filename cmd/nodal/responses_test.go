package main

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const crossoverFile = "../../testdata/examples/speaker_crossover.nodal"

// A second-order Linkwitz–Riley crossover (Q = 0.5, equal corners ωc) has
// LP = 1/(1 + x)², HP = x²/(1 + x)² with x = s/ωc. With the tweeter in
// inverted polarity the sum LP − HP = (1 − x)/(1 + x) is all-pass: 0 dB
// and phase −2·atan(f/fc); with the same polarity LP + HP = (1 + x²)/(1 + x)²
// has a notch (a zero) at fc (common practice for the classic second-order
// crossover alignments).
func TestCrossoverSumClosedForm(t *testing.T) {
	const fc = 2500.0
	freqs := []float64{100, 700, 2000, 3100, 9000, 30000}
	at := make([]string, len(freqs))
	for i, f := range freqs {
		at[i] = trimFloat(f, 6)
	}
	r := runNodal(t, "", "sweep", crossoverFile, "--out", "woofer+tweeter", "--out", "woofer+tweeter_direct", "--at", strings.Join(at, ","), "--format", "json")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var docs []sweepJSON
	if err := json.Unmarshal([]byte(r.stdout), &docs); err != nil || len(docs) != 2 {
		t.Fatalf("want two documents: %v\n%s", err, r.stdout)
	}
	want := []func(x complex128) complex128{
		func(x complex128) complex128 { return (1 - x) / (1 + x) },
		func(x complex128) complex128 { return (1 + x*x) / ((1 + x) * (1 + x)) },
	}
	for d, doc := range docs {
		if len(doc.Points) != len(freqs) {
			t.Fatalf("%s: %d points", doc.Output, len(doc.Points))
		}
		for i, p := range doc.Points {
			h := want[d](complex(0, freqs[i]/fc))
			db := 20 * math.Log10(cmplx.Abs(h))
			ph := cmplx.Phase(h) * 180 / math.Pi
			if p.MagDB == nil || math.Abs(*p.MagDB-db) > 1e-6 || math.Abs(p.PhaseDeg-ph) > 1e-6 {
				t.Errorf("%s at %g Hz: %v dB %g°, want %g dB %g°", doc.Output, freqs[i], p.MagDB, p.PhaseDeg, db, ph)
			}
		}
	}
	// The notch: exactly at fc the same-polarity sum vanishes.
	r = runNodal(t, "", "sweep", crossoverFile, "--out", "woofer+tweeter_direct", "--at", "2.5k", "--format", "json")
	var one sweepJSON
	if err := json.Unmarshal([]byte(r.stdout), &one); err != nil {
		t.Fatal(err)
	}
	if one.Points[0].Mag > 1e-9 {
		t.Errorf("same-polarity sum at fc: |H| = %g, want a notch", one.Points[0].Mag)
	}
}

// verify covers the requirements on both named responses in one table:
// each way is −6.02 dB at the crossover (|1/(1 + j)²| = 1/2) and the
// low-pass −3 dB point is fc·√(√2 − 1) = 1.609 kHz (two equal real poles).
func TestVerifyNamedResponses(t *testing.T) {
	r := runNodal(t, "", "verify", crossoverFile, "--runs", "50", "--format", "json")
	if r.code != 0 {
		t.Fatalf("exit %d: %s%s", r.code, r.stdout, r.stderr)
	}
	var rep verifyReport
	if err := json.Unmarshal([]byte(r.stdout), &rep); err != nil {
		t.Fatal(err)
	}
	want := map[string]struct {
		resp string
		val  float64
	}{
		"require woofer.f3db within 1.5kHz..1.7kHz":         {"woofer", 2500 * math.Sqrt(math.Sqrt2-1)},
		"require woofer.gain@2.5kHz within -6.2dB..-5.8dB":  {"woofer", -20 * math.Log10(2)},
		"require tweeter.gain@2.5kHz within -6.2dB..-5.8dB": {"tweeter", -20 * math.Log10(2)},
		"require tweeter.gain@250Hz below -38dB":            {"tweeter", 20 * math.Log10(0.01/1.01)},
	}
	if len(rep.Requirements) != len(want)+1 || rep.Requirements[0].Response != "circuit" {
		t.Fatalf("%d requirements, want the implicit stable and %d", len(rep.Requirements), len(want))
	}
	for _, v := range rep.Requirements[1:] {
		w, ok := want[v.Requirement]
		if !ok {
			t.Errorf("unexpected requirement %q", v.Requirement)
			continue
		}
		if v.Response != w.resp || v.Nominal == nil || math.Abs(*v.Nominal-w.val) > 1e-6*math.Max(1, math.Abs(w.val)) {
			t.Errorf("%s: on %s = %v, want on %s = %g", v.Requirement, v.Response, v.Nominal, w.resp, w.val)
		}
	}
	r = runNodal(t, "", "verify", crossoverFile, "--runs", "0")
	for _, s := range []string{"response", "woofer", "tweeter", "requirements on woofer, tweeter"} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("verify table lacks %q:\n%s", s, r.stdout)
		}
	}
}

// Named responses give the default output and the same errors as --out.
func TestResponseStatementErrors(t *testing.T) {
	dir := t.TempDir()
	rc := "V: voltage source (in, gnd) 1\nR: resistor (in, o) 1k\nC: capacitor (o, gnd) 1u\n"
	tests := []struct {
		name, body string
		args       []string
		code       int
		want       []string
	}{
		{"default", rc + "response vo = v(o)\n", []string{"transfer"}, 0, []string{"H(s) = o / V"}},
		{"current", rc + "response ic = i(C)\n", []string{"transfer"}, 0, []string{"H(s) = i(C) / V"}},
		{"node hint", rc + "response x = v(oo)\n", []string{"sweep"}, 2, []string{":4:14: response x: no node \"oo\"; did you mean \"o\"?"}},
		{"source hint", rc + "response y = v(o) from VV\n", []string{"sweep"}, 2, []string{":4:24: response y: no source \"VV\"; did you mean \"V\"?"}},
		{"part hint", rc + "response z = i(RR)\n", []string{"sweep"}, 2, []string{"no part \"RR\"; did you mean \"R\"?"}},
		{"bad fn", rc + "response z = w(o)\n", []string{"sweep"}, 2, []string{"a voltage v( ) or a current i( )"}},
		{"duplicate", rc + "response z = v(o)\nresponse z = v(in)\n", []string{"sweep"}, 2, []string{"second response named \"z\""}},
		{"require unknown", rc + "response vo = v(o)\nrequire vv.f3db above 1Hz\n", []string{"verify"}, 2, []string{"no response \"vv\"", "did you mean \"vo\"?"}},
		{"in block", rc + "block b (x)\nresponse q = v(x)\nend\n", []string{"sweep"}, 2, []string{"belong at the top level"}},
		{"out typo", rc + "response vo = v(o)\n", []string{"sweep", "--out", "voo"}, 2, []string{"no response or node \"voo\"; did you mean \"vo\"?"}},
		{"sum in transfer", rc + "response a = v(o)\nresponse b = v(in)\n", []string{"transfer", "--out", "a+b"}, 2, []string{"a sum of responses is shown by sweep and compare"}},
		{"sum from two sources", rc + "W: current source (gnd, o) 1m\nresponse a = v(o) from V\nresponse b = v(o) from W\n", []string{"sweep", "--out", "a+b", "--at", "1k"}, 2, []string{"a sum adds responses from the same input"}},
		{"sum of nodes", rc + "response vo = v(o)\n", []string{"sweep", "--out", "vo+in"}, 2, []string{"\"in\" is not one"}},
	}
	for _, tc := range tests {
		path := writeTemp(t, dir, strings.ReplaceAll(tc.name, " ", "_")+".nodal", tc.body)
		r := runNodal(t, "", append([]string{tc.args[0], path}, tc.args[1:]...)...)
		if r.code != tc.code {
			t.Errorf("%s: exit %d, want %d\n%s%s", tc.name, r.code, tc.code, r.stdout, r.stderr)
		}
		for _, w := range tc.want {
			if !strings.Contains(r.stdout+r.stderr, w) {
				t.Errorf("%s: output lacks %q:\n%s%s", tc.name, w, r.stdout, r.stderr)
			}
		}
	}
}

// writeTemp writes body to dir/name and returns the path.
func writeTemp(t *testing.T, dir, name, body string) string {
	t.Helper()
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// report covers every named response: a section group each, and one
// requirements table.
func TestReportNamedResponses(t *testing.T) {
	r := runNodal(t, "", "report", crossoverFile, "--format", "text", "--runs", "20")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	for _, s := range []string{"3 named responses: woofer, tweeter, tweeter_direct", "woofer: Transfer function", "tweeter: Frequency response",
		"tweeter: Step response", "tweeter_direct: Transfer function", "H(s) = tweeter = hpi / Vin", "woofer: Tolerances (Monte Carlo)"} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("report lacks %q", s)
		}
	}
	if n := strings.Count(r.stdout, "\nRequirements\n"); n != 1 {
		t.Errorf("%d requirements sections, want 1", n)
	}
	r = runNodal(t, "", "report", crossoverFile, "--format", "text", "--runs", "0", "--out", "tweeter")
	if r.code != 0 || strings.Contains(r.stdout, "woofer: Transfer function") || !strings.Contains(r.stdout, "H(s) = hpi / Vin") {
		t.Errorf("report --out tweeter: exit %d\n%s", r.code, r.stdout)
	}
}

// tune offers the named responses and judges a requirement on its own
// response whichever one is shown: woofer.f3db is fc·√(√2 − 1) with the
// tweeter on screen.
func TestTuneNamedResponses(t *testing.T) {
	r := runNodal(t, "", "tune", crossoverFile, "--print", "@out=tweeter")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var doc struct {
		Requirements []struct {
			Requirement string   `json:"requirement"`
			Value       *float64 `json:"value"`
		} `json:"requirements"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil || len(doc.Requirements) == 0 {
		t.Fatalf("%v\n%s", err, r.stdout)
	}
	want := 2500 * math.Sqrt(math.Sqrt2-1)
	if v := doc.Requirements[0].Value; v == nil || math.Abs(*v-want) > 1e-6*want {
		t.Errorf("%s with the tweeter shown: %v, want %g", doc.Requirements[0].Requirement, v, want)
	}
}
