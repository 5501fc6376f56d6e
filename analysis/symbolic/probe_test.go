package symbolic

import (
	"context"
	"errors"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// The probe kinds of the symbolic engine against the closed forms of
// testcircuit.ProbeClosedForms (which names the sources), and a wrong name giving the
// numeric engine's *mna.LookupError unchanged.
func TestSymbolicProbes(t *testing.T) {
	gnd := netlist.Ground
	seriesRC := testcircuit.New(testcircuit.V("Vs", "in", gnd, 1), testcircuit.R("R1", "in", "m", 1e3), testcircuit.C("C1", "m", gnd, 1e-7))
	for _, tc := range testcircuit.ProbeClosedForms() {
		res, err := Transfer(context.Background(), tc.Circuit, tc.Probe.Ex, tc.Probe.Ob, Options{})
		if err != nil {
			t.Fatalf("%s: %v", tc.Name, err)
		}
		_, _, h, err := res.EvalNumeric(res.Values)
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []float64{30, 1e4, 3e6} {
			s := complex(0, w)
			if got, want := h(s), tc.Want(s); cmplx.Abs(got-want) > 1e-12*cmplx.Abs(want) {
				t.Errorf("%s at %g rad/s: %v, want %v", tc.Name, w, got, want)
			}
		}
	}
	_, err := Transfer(context.Background(), seriesRC, mna.Input{}, mna.Output{Node: "mm"}, Options{})
	var le *mna.LookupError
	if !errors.As(err, &le) || err.Error() != `no node "mm"; did you mean "m"?` {
		t.Errorf("wrong node: %v", err)
	}
}
