package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"nodal/analysis/transfer"
)

// TestWithMultiplicity: equal factor texts are written once with their
// count, in the order of first occurrence; single ones stay as they are.
func TestWithMultiplicity(t *testing.T) {
	for _, c := range []struct{ in, want []string }{
		{nil, nil},
		{[]string{"(1 + s/1e3)"}, []string{"(1 + s/1e3)"}},
		{[]string{"(1 + s/1e3)", "(1 + s/1e3)", "(1 + s/1e3)"}, []string{"(1 + s/1e3)^3"}},
		{[]string{"(1 + s/2)", "(1 + s/1)", "(1 + s/2)", "(1 + s/1)", "(1 + s/3)"}, []string{"(1 + s/2)^2", "(1 + s/1)^2", "(1 + s/3)"}},
		{[]string{"(s + 5)", "(s² + 2·s + 9)", "(s + 5)"}, []string{"(s + 5)^2", "(s² + 2·s + 9)"}},
	} {
		if got := withMultiplicity(c.in); !reflect.DeepEqual(got, c.want) {
			t.Errorf("withMultiplicity(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}

// TestDistinctRoots: each distinct root once with its count, in order of
// first occurrence; a conjugate pair is two roots.
func TestDistinctRoots(t *testing.T) {
	p := complex(-1, 2)
	got := transfer.DistinctRoots([]complex128{-3, p, complex(-1, -2), -3, p, complex(-1, -2), -3, 0})
	want := []transfer.MultipleRoot{{Root: -3, Multiplicity: 3}, {Root: p, Multiplicity: 2}, {Root: complex(-1, -2), Multiplicity: 2}, {Root: 0, Multiplicity: 1}}
	if !reflect.DeepEqual(got, want) {
		t.Errorf("DistinctRoots = %v, want %v", got, want)
	}
	if d := transfer.DistinctRoots(nil); len(d) != 0 {
		t.Errorf("DistinctRoots(nil) = %v", d)
	}
}

// bufferedStages writes N identical RC sections (R = 1 kΩ, C = 1 µF,
// τ = 1 ms) separated by ideal followers: H = 1/(1 + sτ)^N (common
// practice).
func bufferedStages(t *testing.T, n int) string {
	t.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "title \"%d buffered RC stages\"\nVin: voltage source (b0, gnd) 1\n", n)
	for k := 1; k <= n; k++ {
		fmt.Fprintf(&b, "R%d: resistor (b%d, x%d) 1k\nC%d: capacitor (x%d, gnd) 1uF\nU%d: opamp (x%d, b%d, b%d)\n", k, k-1, k, k, k, k, k, k, k)
	}
	fmt.Fprintf(&b, "response out = v(b%d)\n", n)
	f := filepath.Join(t.TempDir(), fmt.Sprintf("stages%d.nodal", n))
	if err := os.WriteFile(f, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return f
}

// TestRepeatedPolePresented: N = 5, 10, 22 identical buffered RC stages
// have one pole −1/τ of multiplicity N. `nodal transfer` lists it once
// (table row and JSON entry with multiplicity N), writes it once as
// (1 + s/1e3)^N, and the forms it prints, pasted into `nodal check
// --tf`, agree; `nodal time` gives the Erlang distribution function
// 1 − e^(−t/τ)·Σ_{k<N}(t/τ)^k/k! (common practice) within 1e-9 of the
// final value 1.
func TestRepeatedPolePresented(t *testing.T) {
	const tau = 1e-3
	for _, n := range []int{5, 10, 22} {
		t.Run(fmt.Sprint(n), func(t *testing.T) {
			f := bufferedStages(t, n)
			tr := runNodal(t, "", "transfer", f)
			if tr.code != 0 {
				t.Fatalf("transfer: %d %s", tr.code, tr.stderr)
			}
			table := tr.stdout[strings.Index(tr.stdout, "\npoles\n"):]
			table = table[:strings.Index(table, "└")]
			rows := 0
			for _, l := range strings.Split(table, "\n") {
				if strings.HasPrefix(l, "│") && !strings.Contains(l, "re_rad_s") {
					rows++
					cells := strings.Split(l, "│")
					if len(cells) < 6 || strings.TrimSpace(cells[1]) != "-1000" || strings.TrimSpace(cells[4]) != fmt.Sprint(n) {
						t.Errorf("pole row %q, want -1000 with multiplicity %d", l, n)
					}
				}
			}
			if rows != 1 {
				t.Errorf("%d pole rows, want 1:\n%s", rows, table)
			}
			factored := formLine(t, tr.stdout, "factored:", false)
			if want := fmt.Sprintf("1 / (1 + s/1e3)^%d", n); factored != want { // exact: no trailing zeros
				t.Errorf("factored %q, want %q", factored, want)
			}
			js := runNodal(t, "", "transfer", f, "--format", "json")
			var doc struct {
				Poles []rootJSON `json:"poles"`
			}
			if err := json.Unmarshal([]byte(js.stdout), &doc); err != nil {
				t.Fatal(err)
			}
			if len(doc.Poles) != 1 || doc.Poles[0].Multiplicity != n || math.Abs(doc.Poles[0].Re+1/tau) > 1e-9/tau || doc.Poles[0].Im != 0 {
				t.Errorf("JSON poles %+v, want one −1000 of multiplicity %d", doc.Poles, n)
			}
			for _, form := range []string{"factored:", "zero-pole:", "expanded:"} {
				text := formLine(t, tr.stdout, form, false)
				r := runNodal(t, "", "check", f, "--tf", text)
				if r.code != 0 || !strings.Contains(r.stdout, "verdict: agrees") {
					t.Errorf("check --tf %q (%s): exit %d\n%s%s", text, form, r.code, r.stdout, r.stderr)
				}
			}
			tm := runNodal(t, "", "time", f, "--format", "json", "--points", "400")
			if tm.code != 0 {
				t.Fatalf("time: %d %s", tm.code, tm.stderr)
			}
			var st struct {
				Points []pointJSON `json:"points"`
			}
			if err := json.Unmarshal([]byte(tm.stdout), &st); err != nil || len(st.Points) != 400 {
				t.Fatalf("time JSON: %v, %d points", err, len(st.Points))
			}
			worst := 0.0
			for _, p := range st.Points {
				x := p.TS / tau
				sum, term := 0.0, 1.0
				for k := 0; k < n; k++ {
					sum += term
					term *= x / float64(k+1)
				}
				worst = math.Max(worst, math.Abs(p.Y-(1-math.Exp(-x)*sum)))
			}
			if worst > 1e-9 {
				t.Errorf("step response off the Erlang form by %g of the final value", worst)
			}
		})
	}
}
