package main

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
)

// --vary on the RC low-pass of testdata/rc_lowpass.nodal (C = 15.9155 nF):
// the −3 dB corner of each variant is 1/(2πRC) (first-order RC low-pass;
// common practice), for a let (R) and for a part value (C1), over a list,
// a log-spaced range and the grid of both.
func TestVaryRCCorners(t *testing.T) {
	const c0 = 15.9155e-9
	type want struct{ r, c float64 }
	tests := []struct {
		args []string
		want []want
	}{
		{[]string{"--vary", "R=1k,4.7k,22k"}, []want{{1e3, c0}, {4.7e3, c0}, {22e3, c0}}},
		{[]string{"--vary", "R=1k..100k/3"}, []want{{1e3, c0}, {10e3, c0}, {100e3, c0}}},
		{[]string{"--vary", "R=1k,2k", "--vary", "C1=10n,47n"}, []want{{1e3, 10e-9}, {1e3, 47e-9}, {2e3, 10e-9}, {2e3, 47e-9}}},
	}
	for _, tc := range tests {
		args := append([]string{"transfer", rcFile, "--format", "json"}, tc.args...)
		r := runNodal(t, "", args...)
		if r.code != 0 {
			t.Fatalf("%v: exit %d: %s", args, r.code, r.stderr)
		}
		var docs []struct {
			Variant  []variantJSON `json:"variant"`
			Transfer struct {
				F3dBHz []float64 `json:"f3db_hz"`
			} `json:"transfer"`
		}
		if err := json.Unmarshal([]byte(r.stdout), &docs); err != nil {
			t.Fatalf("%v: %v\n%s", args, err, r.stdout)
		}
		if len(docs) != len(tc.want) {
			t.Fatalf("%v: %d variants, want %d", args, len(docs), len(tc.want))
		}
		for i, d := range docs {
			w := tc.want[i]
			fc := 1 / (2 * math.Pi * w.r * w.c)
			if len(d.Transfer.F3dBHz) != 1 || math.Abs(d.Transfer.F3dBHz[0]-fc) > 1e-9*fc {
				t.Errorf("%v variant %v: f3db %v, want %g", args, d.Variant, d.Transfer.F3dBHz, fc)
			}
			if d.Variant[0].Name != "R" || math.Abs(d.Variant[0].Value-w.r) > 1e-9*w.r {
				t.Errorf("%v variant %d: %v, want R=%g", args, i, d.Variant, w.r)
			}
		}
	}
	// sweep: one column group per value, at each variant's corner −3.01 dB.
	r := runNodal(t, "", "sweep", rcFile, "--vary", "R=1k,10k", "--at", "10k,1k")
	for _, s := range []string{"out R=1k mag_db", "out R=10k phase_deg"} {
		if !strings.Contains(r.stdout, s) {
			t.Errorf("sweep --vary table lacks %q:\n%s", s, r.stdout)
		}
	}
}

func TestVaryErrors(t *testing.T) {
	tests := []struct {
		args []string
		want string
	}{
		{[]string{"--vary", "R"}, "want NAME=V1,V2"},
		{[]string{"--vary", "R=1k..10k"}, "needs the number of values"},
		{[]string{"--vary", "R=10k..1k/3"}, "0 < LO < HI"},
		{[]string{"--vary", "R=1k,x"}, "--vary:1:6:"},
		{[]string{"--vary", "Rx=1k"}, "no top-level parameter or part value \"Rx\""},
		{[]string{"--vary", "R=1k", "--set", "R=2k"}, "also given by --set"},
		{[]string{"--vary", "R=1k", "--vary", "R=2k"}, "given twice"},
	}
	for _, tc := range tests {
		args := append([]string{"sweep", rcFile, "--at", "1k"}, tc.args...)
		r := runNodal(t, "", args...)
		if r.code != 2 || !strings.Contains(r.stderr, tc.want) {
			t.Errorf("%v: exit %d, stderr %q; want 2 and %q", args, r.code, r.stderr, tc.want)
		}
	}
}

// --vary on time: the step response of the RC low-pass has the one mode
// e^(−t/RC) (first-order RC; common practice) for each value; impedance,
// noise and loop run once per value through the same runner.
func TestVaryTimeAndOthers(t *testing.T) {
	const c0 = 15.9155e-9
	r := runNodal(t, "", "time", rcFile, "--vary", "R=1k,3k", "--points", "3", "--format", "json")
	if r.code != 0 {
		t.Fatalf("exit %d: %s", r.code, r.stderr)
	}
	var docs []struct {
		Variant []variantJSON `json:"variant"`
		Result  struct {
			Modes []struct {
				Sigma float64 `json:"sigma_per_s"`
			} `json:"modes"`
		} `json:"result"`
	}
	if err := json.Unmarshal([]byte(r.stdout), &docs); err != nil || len(docs) != 2 {
		t.Fatalf("%v\n%s", err, r.stdout)
	}
	for i, rv := range []float64{1e3, 3e3} {
		want := -1 / (rv * c0)
		found := false
		for _, m := range docs[i].Result.Modes {
			found = found || math.Abs(m.Sigma-want) < 1e-9*math.Abs(want)
		}
		if !found || docs[i].Variant[0].Value != rv {
			t.Errorf("R=%g: modes %+v, want σ = %g", rv, docs[i].Result.Modes, want)
		}
	}
	r = runNodal(t, "", "impedance", rcFile, "--node", "out", "--at", "1k", "--vary", "R=1k,2k")
	if r.code != 0 || !strings.Contains(r.stdout, "── R=1k ──") || !strings.Contains(r.stdout, "── R=2k ──") {
		t.Errorf("impedance --vary: exit %d\n%s%s", r.code, r.stdout, r.stderr)
	}
}
