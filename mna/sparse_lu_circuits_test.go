package mna_test

import (
	"fmt"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// relDiffC is |a − b| / max(|a|, |b|), 0 when both are 0.
func relDiffC(a, b complex128) float64 {
	d := cmplx.Abs(a - b)
	if d == 0 {
		return 0
	}
	return d / math.Max(cmplx.Abs(a), cmplx.Abs(b))
}

// TestSparseMatchesDenseOnTestCircuits: on every circuit of
// mna/testcircuit (the Butterworth ladders, Tow–Thomas cascades with
// finite-gain op-amps, RC ladders, the Wien network and each probe kind
// of ProbeClosedForms) the compressed-column path and the dense path give
// H(s) and dH/ds to 1e-12 relative, over six decades on the jω axis and
// off it, and X, the whole solution, to 1e-12 of its largest entry.
func TestSparseMatchesDenseOnTestCircuits(t *testing.T) {
	type tcase struct {
		name string
		sys  *mna.System
	}
	var cases []tcase
	for n := 2; n <= 7; n++ {
		cases = append(cases, tcase{fmt.Sprint("butterworth", n), build(t, testcircuit.Ladder(n, 1e3, 50), mna.Input{}, "out", "")})
	}
	for k := 1; k <= 4; k++ {
		cases = append(cases, tcase{fmt.Sprint("towthomas", k), build(t, testcircuit.TowThomas(k, 1e3, 2, 1e5, 1e6), mna.Input{}, fmt.Sprint("lp", k), "")})
	}
	for _, k := range []int{1, 5, 30} {
		cases = append(cases, tcase{fmt.Sprint("rcladder", k), build(t, testcircuit.RCLadder(k, 1e3, 10e-9), mna.Input{}, fmt.Sprint("n", k), "")})
	}
	cases = append(cases, tcase{"wien", build(t, testcircuit.Wien(10e3, 10e-9), mna.Input{}, "out", "")})
	for _, pc := range testcircuit.ProbeClosedForms() {
		sys, err := mna.Build(pc.Circuit, pc.Probe.Ex, pc.Probe.Ob)
		if err != nil {
			t.Fatalf("%s: %v", pc.Name, err)
		}
		cases = append(cases, tcase{"probe " + pc.Name, sys})
	}
	for _, tc := range cases {
		ws, wd := mna.NewSparseSweeper(tc.sys), mna.NewDenseSweeper(tc.sys)
		for k := 0; k <= 30; k++ {
			w := 2 * math.Pi * math.Pow(10, float64(k)/5)
			for _, s := range []complex128{complex(0, w), complex(-w/3, w)} {
				hd, dd, err1 := wd.Eval(s)
				hs, ds, err2 := ws.Eval(s)
				if err1 != nil || err2 != nil {
					t.Fatalf("%s at s=%v: dense %v, sparse %v", tc.name, s, err1, err2)
				}
				scale := cmplx.Abs(dd)
				if relDiffC(hd, hs) > 1e-12 || cmplx.Abs(dd-ds) > 1e-12*scale {
					t.Errorf("%s at s=%v: H %v / %v (rel %.1e), dH %v / %v", tc.name, s, hd, hs, relDiffC(hd, hs), dd, ds)
				}
				xd, xs := wd.X(), ws.X()
				var num, den float64
				for i := range xd {
					num = math.Max(num, cmplx.Abs(xd[i]-xs[i]))
					den = math.Max(den, cmplx.Abs(xd[i]))
				}
				if num > 1e-12*den {
					t.Errorf("%s at s=%v: solutions differ by %.1e of %.1e", tc.name, s, num, den)
				}
			}
		}
	}
}
