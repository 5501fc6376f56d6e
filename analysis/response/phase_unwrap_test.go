package response_test

import (
	"context"
	"fmt"
	"math"
	"testing"

	"nodal/analysis/response"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// bufferedRC is n stages of R 1 kΩ into C 1 µF, each read by a
// unity-gain VCVS that drives the next: H = ∏ 1/(1 + sRC), RC = 1 ms.
func bufferedRC(t testing.TB, n int) *mna.System {
	t.Helper()
	parts := []netlist.Part{testcircuit.V("V1", "m0", gnd, 1)}
	prev := "m0"
	for k := 1; k <= n; k++ {
		a, m := fmt.Sprint("a", k), fmt.Sprint("m", k)
		parts = append(parts, testcircuit.R(fmt.Sprint("R", k), prev, a, 1e3), testcircuit.C(fmt.Sprint("C", k), a, gnd, 1e-6),
			testcircuit.VCVS(fmt.Sprint("E", k), m, gnd, 1, a, gnd))
		prev = m
	}
	return testcircuit.Build(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: prev})
}

// bufferedRCPhaseDeg is the exact unwrapped phase of n buffered RC
// stages, −n·atan(ωRC) in degrees (closed form, common practice).
func bufferedRCPhaseDeg(n int, fHz float64) float64 {
	return -float64(n) * math.Atan(2*math.Pi*fHz*1e-3) * 180 / math.Pi
}

// TestPhaseUnwrapBufferedRC: ten buffered RC stages at one point a decade
// around the corner (159.155 Hz) give −57.106°, −450°, −842.894°, the sum
// of −atan(ωRC) (closed form, common practice), not the −90° and −122.9°
// a nearest-turn unwrap of the three values gives.
func TestPhaseUnwrapBufferedRC(t *testing.T) {
	fs := []float64{15.9155, 159.155, 1591.55}
	r, err := response.Sweep(context.Background(), bufferedRC(t, 10), fs, 1)
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range fs {
		if want := bufferedRCPhaseDeg(10, f); math.Abs(r.PhaseDeg[i]-want) > 1e-9 || r.PhaseUnresolved[i] {
			t.Errorf("%g Hz: phase %.12g° (unresolved %v), want %.12g°", f, r.PhaseDeg[i], r.PhaseUnresolved[i], want)
		}
	}
}
