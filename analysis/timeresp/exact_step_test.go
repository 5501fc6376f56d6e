package timeresp

import (
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"testing"

	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

// ladderSteps is the step part of testdata/reference/ladder/ladders.json,
// written by gen_ladders.py (120-digit residue sums).
type ladderSteps struct {
	R     float64 `json:"r_ohm"`
	C     float64 `json:"c_farad"`
	Steps []struct {
		Sections int       `json:"sections"`
		TS       []float64 `json:"t_s"`
		YFar     []float64 `json:"y_far"`
	} `json:"steps"`
}

func readLadderSteps(t *testing.T) ladderSteps {
	t.Helper()
	raw, err := os.ReadFile("../../testdata/reference/ladder/ladders.json")
	if err != nil {
		t.Fatal(err)
	}
	var g ladderSteps
	if err := json.Unmarshal(raw, &g); err != nil {
		t.Fatal(err)
	}
	return g
}

// extractOut builds circ with the given output and extracts H(s).
func extractOut(t *testing.T, circ *netlist.Circuit, out mna.Output) *transfer.TransferFunction {
	t.Helper()
	sys, err := mna.Build(circ, mna.Input{}, out)
	if err != nil {
		t.Fatal(err)
	}
	tf, err := transfer.Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	return tf
}

func relErr(got, want complex128) float64 { return cmplx.Abs(got-want) / cmplx.Abs(want) }

// TestLadderStepResponse: the far-end step response of 22-, 64- and
// 100-section ladders against the 120-digit residue sum of the golden
// script, within 1e-9 of the final value. At 64 sections and more the
// gain in rad/s units leaves float64 and the samples come from the
// matrix exponential alone (time_expm.go); at 22 the partial fractions
// are cross-checked against it.
func TestLadderStepResponse(t *testing.T) {
	g := readLadderSteps(t)
	if len(g.Steps) < 3 {
		t.Fatalf("golden has %d step responses", len(g.Steps))
	}
	for _, st := range g.Steps {
		sys, err := mna.Build(testcircuit.RCLadder(st.Sections, g.R, g.C), mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprintf("n%d", st.Sections)})
		if err != nil {
			t.Fatal(err)
		}
		tf, err := transfer.Extract(sys)
		if err != nil {
			t.Fatal(err)
		}
		end := st.TS[len(st.TS)-1]
		n := 9*50 + 1 // the golden times fall on every 50th sample
		r, err := Step(tf, TimeOptions{UntilS: end, Points: n})
		if err != nil {
			t.Fatalf("K=%d: %v", st.Sections, err)
		}
		if len(r.Points) != n {
			t.Fatalf("K=%d: %d points", st.Sections, len(r.Points))
		}
		for i, want := range st.YFar {
			got := r.Points[50*i]
			if math.Abs(got.TS-st.TS[i]) > 1e-12*end || math.Abs(got.Y-want) > 1e-9 {
				t.Errorf("K=%d: y(%g s) = %.12g, golden y(%g s) = %.12g", st.Sections, got.TS, got.Y, st.TS[i], want)
			}
		}
		if r.Metrics.Final == nil || *r.Metrics.Final != 1 {
			t.Errorf("K=%d: final value %v, want 1", st.Sections, r.Metrics.Final)
		}
		if r.Metrics.RiseTimeS == nil || r.Metrics.OvershootPct == nil || *r.Metrics.OvershootPct != 0 {
			t.Errorf("K=%d: figures %+v, want a rise time and no overshoot (an RC ladder's step is monotone)", st.Sections, r.Metrics)
		}
	}
}

// TestBufferedStagesErlang: N identical RC stages separated by ideal
// buffers have H = 1/(1 + sτ)^N, one pole of multiplicity N, and the step
// response 1 − e^(−t/τ)·Σ_{k<N}(t/τ)^k/k! (the Erlang distribution
// function; common practice).
func TestBufferedStagesErlang(t *testing.T) {
	const r, c = 1e3, 1e-6
	tau := r * c
	for _, n := range []int{5, 10, 22} {
		parts := []netlist.Part{testcircuit.V("Vin", "b0", "gnd", 1)}
		for i := 1; i <= n; i++ {
			x, b := fmt.Sprintf("x%d", i), fmt.Sprintf("b%d", i)
			parts = append(parts, testcircuit.R(fmt.Sprintf("R%d", i), fmt.Sprintf("b%d", i-1), x, r),
				testcircuit.C(fmt.Sprintf("C%d", i), x, "gnd", c), testcircuit.OpAmp(fmt.Sprintf("U%d", i), x, b, b, 0, 0, 0))
		}
		tf := extractOut(t, testcircuit.New(parts...), mna.Output{Kind: mna.NodeVoltage, Node: fmt.Sprintf("b%d", n)})
		d := tf.DistinctPoles()
		if len(d) != 1 || d[0].Multiplicity != n || relErr(d[0].Root, complex(-1/tau, 0)) > 1e-9 {
			t.Errorf("N = %d: poles %v, want one pole −1/τ of multiplicity %d", n, d, n)
			continue
		}
		st, err := Step(tf, TimeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		worst := 0.0
		for i := 0; i <= 400; i++ {
			tt := st.SpanS * float64(i) / 400
			x := tt / tau
			sum, term := 0.0, 1.0
			for k := 0; k < n; k++ {
				sum += term
				term *= x / float64(k+1)
			}
			want := 1 - math.Exp(-x)*sum
			worst = math.Max(worst, math.Abs(st.At(tt)-want))
		}
		if worst > 1e-9 {
			t.Errorf("N = %d: step response off the Erlang form by %g", n, worst)
		}
	}
}

// TestSallenKeyCapacitorCurrentStep: the current through C1 of the
// Sallen-Key example has a double zero at s = 0 (see the transfer test),
// so its step response starts at the value C1 passes and returns to 0.
func TestSallenKeyCapacitorCurrentStep(t *testing.T) {
	c := testcircuit.Load(t, "../../testdata/examples/tone_lowpass_ideal.nodal", nil)
	tf := extractOut(t, c, mna.Output{Kind: mna.PartCurrent, Part: "C1"})
	st, err := Step(tf, TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if st.Metrics.Final == nil || *st.Metrics.Final != 0 {
		t.Errorf("final value %v, want 0", st.Metrics.Final)
	}
	// The peak is 1e-4 A at t = 0+ (C1 passes the step, then decays).
	if y := st.At(10 * st.SpanS); math.Abs(y) > 1e-12*1e-4 {
		t.Errorf("y(%g s) = %g, want ≈ 0", 10*st.SpanS, y)
	}
}

// TestSallenKeyFiniteCapacitorCurrentStep: with a finite op-amp (the
// README's example, a0 = 200k, gbw = 1 MHz) the current through C1 has
// one zero exactly at s = 0 and one at −0.089 rad/s, so the DC gain is
// exactly 0 and the step response returns to exactly 0. Against the
// golden of analysis/transfer/testdata/cap_current_golden.py (sympy:
// exact nodal equations, the step response as residues of H(s)e^(st)/s),
// within 1e-9 of the peak, with the closed form shown: the zero at
// 6.30107e6 rad/s almost cancels the pole at 6.30112e6, and a cascade
// that gave that zero to the complex pair's section was off by 5e-5 of
// the peak, so the (correct) partial fractions were withheld.
func TestSallenKeyFiniteCapacitorCurrentStep(t *testing.T) {
	raw, err := os.ReadFile("../transfer/testdata/cap_current_golden.json")
	if err != nil {
		t.Fatal(err)
	}
	var g struct {
		Step [][2]float64 `json:"step"`
	}
	if err := json.Unmarshal(raw, &g); err != nil || len(g.Step) == 0 {
		t.Fatalf("golden: %v (%d step samples)", err, len(g.Step))
	}
	c := testcircuit.Load(t, "../transfer/testdata/logger_finite.nodal", nil)
	tf := extractOut(t, c, mna.Output{Kind: mna.PartCurrent, Part: "C1"})
	if dc := tf.DCGain(); dc.Power != 1 {
		t.Errorf("DC asymptote power %d, want 1 (one zero at s = 0)", dc.Power)
	}
	st, err := Step(tf, TimeOptions{Points: 200}) // the default of nodal time
	if err != nil {
		t.Fatal(err)
	}
	if st.ClosedFormWithheld != "" {
		t.Errorf("closed form withheld: %s", st.ClosedFormWithheld)
	}
	if st.Metrics.Final == nil || *st.Metrics.Final != 0 {
		t.Errorf("final value %v, want exactly 0", st.Metrics.Final)
	}
	peak := g.Step[0][1] // 1/R1 at t = 0+: the largest |y|
	for _, p := range g.Step {
		if y := st.At(p[0]); math.Abs(y-p[1]) > 1e-9*peak {
			t.Errorf("y(%g s) = %.12g, golden %.12g (off by %.2g of the peak)", p[0], y, p[1], math.Abs(y-p[1])/peak)
		}
	}
	cs, err := newCascade(tf)
	if err != nil {
		t.Fatal(err)
	}
	h := 4e-6
	ys, err := cs.samples(true, h, 251)
	if err != nil {
		t.Fatal(err)
	}
	for i, y := range ys {
		if d := math.Abs(y - st.At(h*float64(i))); d > 1e-9*peak {
			t.Fatalf("matrix exponential at %g s: %.12g, closed form %.12g (off by %.2g of the peak)", h*float64(i), y, st.At(h*float64(i)), d/peak)
		}
	}
}
