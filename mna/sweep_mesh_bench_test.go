package mna

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"nodal/netlist"
)

// rcMesh is a side×side grid of nodes (a PCB ground plane's parasitic
// network, say): r between neighbours, c from every node to ground,
// driven at one corner through r and read at the opposite one.
func rcMesh(tb testing.TB, side int, r, c float64) *netlist.Circuit {
	tb.Helper()
	var b strings.Builder
	fmt.Fprintf(&b, "Vin: voltage source (drv, gnd) 1\nRs: resistor (drv, m0_0) %g\n", r)
	for i := range side {
		for j := range side {
			fmt.Fprintf(&b, "C%d_%d: capacitor (m%d_%d, gnd) %g\n", i, j, i, j, c)
			if i+1 < side {
				fmt.Fprintf(&b, "Rv%d_%d: resistor (m%d_%d, m%d_%d) %g\n", i, j, i, j, i+1, j, r)
			}
			if j+1 < side {
				fmt.Fprintf(&b, "Rh%d_%d: resistor (m%d_%d, m%d_%d) %g\n", i, j, i, j, i, j+1, r)
			}
		}
	}
	ckt, err := netlist.Load("mesh.nodal", []byte(b.String()), netlist.Overrides{})
	if err != nil {
		tb.Fatal(err)
	}
	return ckt
}

// BenchmarkEvalMesh times one frequency point (numeric refactorisation and
// solve on the held pattern) of square RC meshes, reporting the cost per
// n·log₂n, so the growth with n can be read across sizes. For a 2-D grid a
// direct LU cannot do better than about n^1.5 operations with the best
// ordering (nested dissection: George, SIAM J. Numer. Anal. 10 (1973)),
// fill n·log n; a ladder's is n (BenchmarkEvalPairLadder). nnz(L+U) is
// the held factorisation's (unit diagonal of L not counted, U's counted).
func BenchmarkEvalMesh(b *testing.B) {
	for _, side := range []int{16, 32, 64, 128} {
		sys, err := Build(rcMesh(b, side, 10, 1e-12), Input{}, Output{Kind: NodeVoltage, Node: fmt.Sprintf("m%d_%d", side-1, side-1)})
		if err != nil {
			b.Fatal(err)
		}
		n := sys.Size()
		b.Run(fmt.Sprintf("unknowns=%d", n), func(b *testing.B) {
			w := NewSweeper(sys)
			s := func(i int) complex128 { return complex(0, 2*math.Pi*math.Pow(10, 6+float64(i%100)/50)) }
			if _, _, err := w.Eval(s(0)); err != nil {
				b.Fatal(err)
			}
			b.ReportAllocs()
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				if _, _, err := w.Eval(s(i)); err != nil {
					b.Fatal(err)
				}
			}
			perPoint := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
			b.ReportMetric(perPoint/(float64(n)*math.Log2(float64(n))), "ns/nlogn")
			b.ReportMetric(float64(factorNNZ(b, w)), "nnz(L+U)")
		})
	}
}

// factorNNZ returns the entries of the sparse path's L and U as held after
// the last factorisation: L below its unit diagonal, U with its diagonal.
func factorNNZ(tb testing.TB, w *Sweeper) int {
	tb.Helper()
	f, ok := w.f.(*sparseLU)
	if !ok {
		tb.Fatalf("%T is not the sparse path", w.f)
	}
	return len(f.lIdx) + len(f.uIdx) + f.n
}
