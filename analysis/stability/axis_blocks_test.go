package stability

import (
	"fmt"
	"testing"

	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// ladderWithTanks is a k-section RC ladder (1 kΩ, 10 nF) whose far end
// drives, through a gain-2 VCVS and 1 nF, a lossless tank (1 mH ∥ 1 nF);
// a second identical tank hangs either beside the first on the same
// buffer (chained false: two independent modes at ω0 = 1/√(L·2C)) or is
// driven through a unity buffer by the first tank's voltage (chained
// true: a Jordan chain at ω0, responses growing as t·sin ω0t).
func ladderWithTanks(k int, chained bool) *netlist.Circuit {
	parts := []netlist.Part{testcircuit.V("V1", "n0", "gnd", 1)}
	for j := 1; j <= k; j++ {
		parts = append(parts, testcircuit.R(fmt.Sprint("R", j), fmt.Sprint("n", j-1), fmt.Sprint("n", j), 1e3),
			testcircuit.C(fmt.Sprint("C", j), fmt.Sprint("n", j), "gnd", 10e-9))
	}
	tank := func(tag, from string) []netlist.Part {
		t := "t" + tag
		return []netlist.Part{testcircuit.C("Cc"+tag, from, t, 1e-9), testcircuit.L("L"+tag, t, "gnd", 1e-3), testcircuit.C("Ct"+tag, t, "gnd", 1e-9)}
	}
	parts = append(parts, testcircuit.VCVS("E1", "b", "gnd", 2, fmt.Sprint("n", k), "gnd"))
	parts = append(parts, tank("a", "b")...)
	if chained {
		parts = append(parts, testcircuit.VCVS("E2", "c", "gnd", 1, "ta", "gnd"))
		parts = append(parts, tank("b", "c")...)
	} else {
		parts = append(parts, tank("b", "b")...)
	}
	return testcircuit.New(parts...)
}

// TestAxisRepeatsAcrossBlocks: a natural frequency repeated on the jω axis
// in two diagonal blocks is marginal when the blocks carry independent
// modes and unstable when one drives the other (a Jordan chain; common
// practice: a repeated eigenvalue grows only through a chain). The
// large-circuit path (1002-section ladder, past MaxUnknowns) must give the
// class the dense path gives on a 5-section version of the same circuit.
func TestAxisRepeatsAcrossBlocks(t *testing.T) {
	for _, tc := range []struct {
		chained bool
		want    Class
	}{{false, Marginal}, {true, Unstable}} {
		for _, k := range []int{5, 1002} {
			res, err := Analyze(ladderWithTanks(k, tc.chained), Options{})
			if err != nil {
				t.Fatal(err)
			}
			if res.Class != tc.want {
				t.Errorf("chained %v, %d sections: class %v (%v), want %v", tc.chained, k, res.Class, res.Reason, tc.want)
			}
		}
	}
}
