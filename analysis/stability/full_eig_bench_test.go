package stability

import (
	"os"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// BenchmarkFullEigenvalues300: every natural frequency of the 300-unknown
// cable ladder (testdata/perf/cable_ladder_298.nodal: 298 RC sections, a
// voltage source), the full eigenvalue problem of the pencil (G, C). The
// same pencil with scipy.linalg.eig: testdata/perf/pencil_eig.py (the
// issue's target: within 2× scipy's time).
func BenchmarkFullEigenvalues300(b *testing.B) {
	src, err := os.ReadFile("../../testdata/perf/cable_ladder_298.nodal")
	if err != nil {
		b.Fatal(err)
	}
	c, err := netlist.Load("cable_ladder_298.nodal", src, netlist.Overrides{})
	if err != nil {
		b.Fatal(err)
	}
	m, err := mna.BuildMatrices(c)
	if err != nil {
		b.Fatal(err)
	}
	if m.Size() != 300 {
		b.Fatalf("%d unknowns, want 300", m.Size())
	}
	g, cm := m.G.Dense(), m.C.Dense()
	roots, _, err := FiniteEigenvalues(g, cm)
	if err != nil || len(roots) != 298 {
		b.Fatalf("%d roots, %v; want 298", len(roots), err)
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, _, err := FiniteEigenvalues(g, cm); err != nil {
			b.Fatal(err)
		}
	}
}
