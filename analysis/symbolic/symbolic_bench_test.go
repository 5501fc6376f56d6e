package symbolic

import (
	"context"
	"errors"
	"fmt"
	"testing"

	"nodal/netlist"
)

// BenchmarkStateVariable derives H(s) of the 20-part state-variable
// filter, every part symbolic (target: under 1 s per derivation).
func BenchmarkStateVariable(b *testing.B) {
	c := stateVariable()
	for _, method := range []Method{Bareiss, Minors} {
		b.Run(method.String(), func(b *testing.B) {
			for b.Loop() {
				if _, err := Transfer(context.Background(), c, inputAuto, nodeOut("lp"), Options{Method: method}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// rcLadder is n RC low-pass sections in cascade, unbuffered: the
// denominator's term count grows like the Catalan-type ladder numbers,
// so it measures where expressions explode.
func rcLadder(n int) *netlist.Circuit {
	parts := []netlist.Part{vsrc("V1", "n0", "gnd")}
	for i := 1; i <= n; i++ {
		parts = append(parts,
			res(fmt.Sprintf("R%d", i), fmt.Sprintf("n%d", i-1), fmt.Sprintf("n%d", i), 1e3),
			capa(fmt.Sprintf("C%d", i), fmt.Sprintf("n%d", i), "gnd", 1e-9))
	}
	return circuit(parts...)
}

// BenchmarkRCLadder measures growth with the number of sections; the
// custom metric den-terms is the total number of terms of D.
func BenchmarkRCLadder(b *testing.B) {
	for _, n := range []int{4, 6, 8, 9} {
		for _, method := range []Method{Bareiss, Minors} {
			if method == Bareiss && n > 8 {
				continue // measured once: 41 s per derivation at 9 sections
			}
			b.Run(fmt.Sprintf("sections=%d/%s", n, method), func(b *testing.B) {
				c := rcLadder(n)
				out := nodeOut(fmt.Sprintf("n%d", n))
				var r *Result
				for b.Loop() {
					var err error
					r, err = Transfer(context.Background(), c, inputAuto, out, Options{Method: method, MaxTerms: 1 << 30, MaxWork: -1})
					if err != nil {
						b.Fatal(err)
					}
				}
				terms := 0
				for _, p := range r.Den {
					terms += p.Len()
				}
				b.ReportMetric(float64(terms), "den-terms")
			})
		}
	}
}

// BenchmarkWorkBudgetStop is the fully symbolic 20-stage finite-gain
// chain (61 parts), which must stop at DefaultMaxWork (issue 19 target:
// under 2 s and 500 MB from the command line), and the same chain with
// two parts kept, which must complete.
func BenchmarkWorkBudgetStop(b *testing.B) {
	c := opampChain(20)
	for _, tc := range []struct {
		name string
		keep []string
	}{{"all-symbolic", nil}, {"keep-two", []string{"R1a", "R1b"}}} {
		b.Run(tc.name, func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				_, err := Transfer(context.Background(), c, inputAuto, nodeOut("n20"), Options{Keep: tc.keep})
				var se *SizeError
				if (tc.keep == nil) != errors.As(err, &se) {
					b.Fatalf("%s: %v", tc.name, err)
				}
			}
		})
	}
}
