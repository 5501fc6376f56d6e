package response

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// tenStages is H = (1 + sT)^−10 and dH/ds = −10T(1 + sT)^−11 with
// T = 1 ms (ten buffered RC stages; closed form, common practice) at
// s = j2πf, over freqsHz.
func tenStages(freqsHz []float64) (h, dh []complex128) {
	const tau = 1e-3
	for _, f := range freqsHz {
		d := 1 + complex(0, 2*math.Pi*f*tau)
		h = append(h, cmplx.Pow(d, -10))
		dh = append(dh, -10*tau*cmplx.Pow(d, -11))
	}
	return h, dh
}

// TestPhaseUnresolvedWithoutSystem: a Sum of responses with no system
// behind them cannot be refined between its points, so the steps of
// −393° and −393° (ten stages a decade apart around the corner; closed
// form −10·atan(ωRC), common practice) are marked unresolved and their
// points keep the principal value rather than a guessed turn.
func TestPhaseUnresolvedWithoutSystem(t *testing.T) {
	fs := []float64{15.9155, 159.155, 1591.55}
	h, dh := tenStages(fs)
	half := func() *Response {
		hh, dd := make([]complex128, len(h)), make([]complex128, len(h))
		for i := range h {
			hh[i], dd[i] = h[i]/2, dh[i]/2
		}
		return newResponse("V1", "half", fs, hh, dd, make([]bool, len(fs)), make([]bool, len(fs)))
	}
	r, err := Sum(context.Background(), "sum", half(), half())
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []bool{false, true, true} {
		principal := cmplx.Phase(h[i]) * 180 / math.Pi
		if r.PhaseUnresolved[i] != want || math.Abs(r.PhaseDeg[i]-principal) > 1e-9 {
			t.Errorf("%g Hz: phase %g° unresolved %v, want %g° unresolved %v", fs[i], r.PhaseDeg[i], r.PhaseUnresolved[i], principal, want)
		}
	}
}

// TestPhaseRefinementCancelled: the refinement between points stops with
// the context's error.
func TestPhaseRefinementCancelled(t *testing.T) {
	sys := testcircuit.Build(t, testcircuit.RCLadder(200, 1e3, 10e-9), mna.Output{Kind: mna.NodeVoltage, Node: "n200"})
	r, err := Sweep(context.Background(), sys, []float64{10, 1e4}, 1)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	err = r.unwrapPhase(ctx, 1, func() pointEval { return sweeperEval(mna.NewSweeper(sys)) })
	if !errors.Is(err, context.Canceled) {
		t.Errorf("error %v, want context.Canceled", err)
	}
}
