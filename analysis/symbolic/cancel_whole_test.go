package symbolic

import (
	"testing"

	"nodal/netlist"
)

// A first-order RC section read at its own node a, with a loaded buffer
// stage hanging off it that a does not see: H = 1/(1 + s·R1·C1) (common
// practice). The stage's factor R2 + s·L1·(1 + Mirror1) appears in both N and D
// of the determinant quotient and must be cancelled as a whole.
func TestCancelWholeNumerator(t *testing.T) {
	src := `Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 1k
C1: capacitor (a, gnd) 1n
Buf1: voltage source (b, gnd) 2*v(a)
R2: resistor (b, out) 1k
L1: inductor (out, gnd) 1m
Mirror1: current source (out, gnd) 0.5*i(R2)
`
	c, err := netlist.Load("stage.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	r := mustTransfer(t, c, nodeOut("a"), Options{})
	wantDen := []Poly{Int(1), prod(1, "R1", "C1")}
	if len(r.Num) != 1 || !r.Num[0].Equal(Int(1)) || len(r.Den) != 2 || !r.Den[0].Equal(wantDen[0]) || !r.Den[1].Equal(wantDen[1]) {
		t.Fatalf("H = %v / %v, want 1 / (1 + R1*C1*s)", r.NumStrings(), r.DenStrings())
	}
	if len(r.Cancelled) == 0 {
		t.Error("the cancelled factor is not reported")
	}
}
