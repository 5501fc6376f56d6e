package transient

import (
	"context"
	"errors"
	"fmt"
	"math"
	"testing"

	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
)

// loadLadderGolden reads testdata/reference/ladder_step/ladder_step.json,
// written by gen_ladder_step.py beside it (a modal solution of the
// hand-written ladder equations, checked there against scipy's expm).
func loadLadderGolden(t testing.TB) []testcircuit.LadderStep {
	t.Helper()
	g, err := testcircuit.LadderStepReference("../../testdata/reference/ladder_step/ladder_step.json")
	if err != nil {
		t.Fatal(err)
	}
	return g
}

// TestIntegrateLadderGolden: the integration of the full 300- and
// 1,000-section ladders (302 and 1,002 unknowns) agrees with the
// reference step and impulse responses to 2e-6 of their scale (16 steps a gap), and its
// own error estimate is not smaller than its actual error.
func TestIntegrateLadderGolden(t *testing.T) {
	g := loadLadderGolden(t)
	for _, lad := range g {
		sys := testcircuit.Build(t, testcircuit.RCLadder(lad.Sections, lad.ROhm, lad.CFarad), mna.Output{Kind: mna.NodeVoltage, Node: lad.Output})
		for _, tc := range []struct {
			impulse bool
			want    []float64
		}{{false, lad.Step}, {true, lad.Impulse}} {
			t.Run(fmt.Sprintf("%d/impulse=%v", lad.Sections, tc.impulse), func(t *testing.T) {
				in, err := Integrate(context.Background(), sys, tc.impulse, lad.TS[1:], 16)
				if err != nil {
					t.Fatal(err)
				}
				scale := 0.0
				for _, y := range tc.want {
					scale = math.Max(scale, math.Abs(y))
				}
				if math.Abs(in.Y0-tc.want[0]) > 2e-6*scale || in.Err0 > 1e-6*scale {
					t.Errorf("y(0+) = %.3g ± %.2g, reference %.3g", in.Y0, in.Err0, tc.want[0])
				}
				for k, y := range in.Y {
					d := math.Abs(y - tc.want[k+1])
					if d > 2e-6*scale {
						t.Errorf("t = %g s: %.10g, reference %.10g (off by %.2g of %g)", in.TimesS[k], y, tc.want[k+1], d/scale, scale)
					}
					if d > in.ErrEst[k]+1e-12*scale {
						t.Errorf("t = %g s: error %.2g above the estimate %.2g", in.TimesS[k], d, in.ErrEst[k])
					}
				}
			})
		}
	}
}

// TestCheckRefusesWrongModel: the time-domain check passes the step
// response of the ladder's own transfer function and refuses one whose
// poles are moved by 1 % (the same DC gain): a deliberately wrong model
// whose samples differ by about 1e-3 of the final value.
func TestCheckRefusesWrongModel(t *testing.T) {
	sys := testcircuit.Build(t, testcircuit.RCLadder(30, 1e3, 10e-9), mna.Output{Kind: mna.NodeVoltage, Node: "n30"})
	tf, err := transfer.Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	wrong := make([]complex128, len(tf.Poles))
	gain := tf.Gain
	for i, p := range tf.Poles {
		wrong[i] = p * 1.01
		gain *= 1.01 // Π(−p) grows by 1.01 per pole: the DC gain stays 1
	}
	bad := transfer.FromRoots(gain, tf.Zeros, wrong)
	for _, tc := range []struct {
		name string
		tf   *transfer.TransferFunction
		ok   bool
	}{{"own", tf, true}, {"poles ×1.01", bad, false}} {
		t.Run(tc.name, func(t *testing.T) {
			for _, kind := range []string{"step", "impulse"} {
				r, err := timeresp.Step(tc.tf, timeresp.TimeOptions{Points: 101})
				if kind == "impulse" {
					r, err = timeresp.Impulse(tc.tf, timeresp.TimeOptions{Points: 101})
				}
				if err != nil {
					t.Fatal(err)
				}
				res, err := Check(context.Background(), sys, r, Options{})
				if tc.ok {
					if err != nil {
						t.Fatalf("%s: %v", kind, err)
					}
					if res.MaxDiff > 1e-6 || res.Checked != 51 { // t = 0 and 50 more
						t.Errorf("%s: difference %.2g at %d times", kind, res.MaxDiff, res.Checked)
					}
					continue
				}
				if !errors.Is(err, ErrDisagree) || res == nil || res.Agree || !(res.MaxDiff > 1e-3) {
					t.Errorf("%s: a model off by 1 %% in its poles was not refused: %v, %+v", kind, err, res)
				}
			}
		})
	}
}

// TestIntegrateBadTimes: times that are not positive and increasing are
// refused.
func TestIntegrateBadTimes(t *testing.T) {
	sys := testcircuit.Build(t, testcircuit.RCLadder(3, 1e3, 10e-9), mna.Output{Kind: mna.NodeVoltage, Node: "n3"})
	for _, ts := range [][]float64{nil, {0, 1}, {2, 1}, {1, 1}, {1, math.Inf(1)}, {math.NaN()}} {
		if _, err := Integrate(context.Background(), sys, false, ts, 8); !errors.Is(err, ErrBadTimes) {
			t.Errorf("%v: %v", ts, err)
		}
	}
}

// BenchmarkCheckLadder10000 is the time-domain check of the step
// response of the 10,000-section ladder (its own reduced-order response
// stands in for the samples: only the check's cost is measured).
func BenchmarkCheckLadder10000(b *testing.B) {
	sys := testcircuit.Build(b, testcircuit.RCLadder(10000, 1e3, 10e-9), mna.Output{Kind: mna.NodeVoltage, Node: "n10000"})
	r := &timeresp.TimeResponse{Kind: "step"}
	for i := 0; i <= 200; i++ {
		ts := 2800.0 * float64(i) / 200
		r.Points = append(r.Points, timeresp.Point{TS: ts, Y: 1 - math.Exp(-ts/405)})
	}
	b.ReportAllocs()
	for i := 0; i < b.N; i++ {
		if _, err := Check(context.Background(), sys, r, Options{Tol: 1}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestCheckDiracAndJump: an RC high-pass (series 1 nF, shunt 1 kΩ) has
// H = sτ/(1 + sτ): its step jumps to y(0⁺) = 1 and its impulse response
// is δ(t) − e^(−t/τ)/τ (common practice), so y(0⁺) = −1/τ, read after
// the second step (the first holds the δ). Both pass the check, t = 0
// included, and the step with a wrong jump (y(0) = 0) does not.
func TestCheckDiracAndJump(t *testing.T) {
	c := testcircuit.New(testcircuit.V("V1", "in", "gnd", 1), testcircuit.C("C1", "in", "out", 1e-9), testcircuit.R("R1", "out", "gnd", 1e3))
	sys := testcircuit.Build(t, c, mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	tf, err := transfer.Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	st, err := timeresp.Step(tf, timeresp.TimeOptions{Points: 41})
	if err != nil {
		t.Fatal(err)
	}
	im, err := timeresp.Impulse(tf, timeresp.TimeOptions{Points: 41})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(im.Dirac-1) > 1e-12 || math.Abs(im.Points[0].Y+1e6) > 1e-3 || math.Abs(st.Points[0].Y-1) > 1e-12 {
		t.Fatalf("dirac %g, impulse y(0+) %g, step y(0+) %g", im.Dirac, im.Points[0].Y, st.Points[0].Y)
	}
	for _, r := range []*timeresp.TimeResponse{st, im} {
		res, err := Check(context.Background(), sys, r, Options{})
		// 1e-5: the impulse's first step puts 1/h₀ (h₀ ≈ 10⁻¹¹·τ) into the
		// source's branch, and its rounding is left in y(0⁺) (2.5e-6 here).
		if err != nil || res.TimesS[0] != 0 || math.Abs(res.Full[0]-r.Points[0].Y) > 1e-5*res.Scale {
			t.Errorf("%s: %v, y(0+) %g against %g", r.Kind, err, res.Full[0], r.Points[0].Y)
		}
	}
	st.Points[0].Y = 0
	if _, err := Check(context.Background(), sys, st, Options{}); !errors.Is(err, ErrDisagree) {
		t.Errorf("a step without its jump at t = 0 passed: %v", err)
	}
}
