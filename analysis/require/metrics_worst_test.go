package require

import (
	"context"
	"math"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// TestWorstCaseQThroughRealPoles: a unity-gain Sallen-Key with nominal
// Q = √(C1/C2)·√(R1R2)/(R1+R2) = 0.505 crosses into real poles at some
// tolerance corners. Q rises with C1 and falls with C2, and √(R1R2)/(R1+R2)
// is smallest at the most unequal R (closed form, Sedra & Smith, from
// memory), so the worst-case minimum is at C1 −5 %, C2 +5 %, R1 +1 %,
// R2 −1 %: 0.4803, with real poles. Before q was defined for real poles
// those corners were NaN and the reported minimum was 0.5049.
func TestWorstCaseQThroughRealPoles(t *testing.T) {
	const src = `title "vibration logger critically damped stage"
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 10k ±1%
R2: resistor (a, b) 10k ±1%
C1: capacitor (a, out) 10.2nF ±5%
C2: capacitor (b, gnd) 10nF ±5%
U1: opamp (b, out, out)
require q above 0.5
`
	c, err := netlist.Load("sk4.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	rm, err := NewRequirementMetrics(c, c.Requirements, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Verify(context.Background(), c, rm, VerifyOptions{Runs: 0, Seed: 1, Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	q := func(r1, r2, c1, c2 float64) float64 { return math.Sqrt(r1*r2*c1*c2) / (c2 * (r1 + r2)) }
	wantMin := q(10.1e3, 9.9e3, 10.2e-9*0.95, 10e-9*1.05)
	wantMax := q(10e3, 10e3, 10.2e-9*1.05, 10e-9*0.95)
	v := res.Verdicts[0]
	if res.Failed != 0 || math.Abs(v.WorstMin-wantMin) > 1e-9 || math.Abs(v.WorstMax-wantMax) > 1e-9 || v.WorstPass {
		t.Errorf("worst case q %.10g .. %.10g (pass %v, %d failed: %v); want %.10g .. %.10g, fail",
			v.WorstMin, v.WorstMax, v.WorstPass, res.Failed, res.FirstFailure, wantMin, wantMax)
	}
}
