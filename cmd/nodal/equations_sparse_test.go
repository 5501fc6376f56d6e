package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestEquationsSparseJSON: past maxDenseEquations unknowns the dense forms
// are refused with a pointer to sparse-json, which gives the non-zeros of
// a uniform RC ladder: per section the conductance stamp (common
// practice: 2/R on inner diagonals, −1/R beside them) and C on the
// diagonal of C.
func TestEquationsSparseJSON(t *testing.T) {
	const k = maxDenseEquations // k sections: k+1 nodes and the source branch
	var b strings.Builder
	b.WriteString("Vin: voltage source (n0, gnd) 1\n")
	for j := 1; j <= k; j++ {
		fmt.Fprintf(&b, "R%d: resistor (n%d, n%d) 2k\nC%d: capacitor (n%d, gnd) 10n\n", j, j-1, j, j, j)
	}
	path := filepath.Join(t.TempDir(), "ladder.nodal")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	r := runNodal(t, "", "equations", path, "--format", "json")
	if r.code != exitInput || !strings.Contains(r.stderr, "--format sparse-json") {
		t.Fatalf("dense JSON of %d unknowns: status %d, %q", k+2, r.code, r.stderr)
	}
	r = runNodal(t, "", "equations", path, "--format", "sparse-json")
	if r.code != 0 {
		t.Fatalf("status %d: %s", r.code, r.stderr)
	}
	var doc struct {
		Unknowns []string
		G, C     struct {
			Rows, Cols []int
			Vals       []float64
		}
	}
	if err := json.Unmarshal([]byte(r.stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Unknowns) != k+2 || len(doc.C.Vals) != k || len(doc.G.Vals) != 3*k+1+2 {
		t.Fatalf("%d unknowns, %d C and %d G non-zeros", len(doc.Unknowns), len(doc.C.Vals), len(doc.G.Vals))
	}
	for e, v := range doc.G.Vals {
		i, j := doc.G.Rows[e], doc.G.Cols[e]
		if i == 5 && j == 5 && v != 2/2e3 || i == 5 && j == 6 && v != -1/2e3 {
			t.Errorf("G[%d][%d] = %g", i, j, v)
		}
	}
	for e, v := range doc.C.Vals {
		if doc.C.Rows[e] != doc.C.Cols[e] || v != 10e-9 {
			t.Errorf("C[%d][%d] = %g", doc.C.Rows[e], doc.C.Cols[e], v)
		}
	}
}
