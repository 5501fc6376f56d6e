package timeresp

import (
	"math"
	"testing"

	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
)

// TestResiduesOverflow: the 200-section RC ladder read at its first node
// has a gain that fits a float64 but residues that do not (NaN modes):
// the samples then come from the matrix exponential, every one of them
// (they used to stop at the first NaN, leaving none, with figures made
// up from nothing), and the closed form is withheld. The step rises
// from y(0⁺) = 0 (a capacitor at the node) towards the DC gain 1.
func TestResiduesOverflow(t *testing.T) {
	sys := testcircuit.Build(t, testcircuit.RCLadder(200, 1e3, 10e-9), mna.Output{Kind: mna.NodeVoltage, Node: "n1"})
	tf, err := transfer.Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	r, err := Step(tf, TimeOptions{Points: 21})
	if err != nil {
		t.Fatal(err)
	}
	if len(r.Points) != 21 || !r.IllConditioned || r.Modes != nil || r.ClosedFormWithheld == "" {
		t.Fatalf("%d points, ill-conditioned %v, %d modes, withheld %q", len(r.Points), r.IllConditioned, len(r.Modes), r.ClosedFormWithheld)
	}
	for _, p := range r.Points {
		if math.IsNaN(p.Y) || p.Y < -1e-9 || p.Y > 1+1e-9 {
			t.Errorf("y(%g) = %g", p.TS, p.Y)
		}
	}
	if math.Abs(r.Points[0].Y) > 1e-9 || r.Points[20].Y < 0.999 {
		t.Errorf("y(0) = %g, y(end) = %g", r.Points[0].Y, r.Points[20].Y)
	}
	if r.Metrics.Final == nil || *r.Metrics.Final != 1 {
		t.Errorf("final value %v, want exactly 1", r.Metrics.Final)
	}
}
