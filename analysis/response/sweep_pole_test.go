package response

import (
	"context"
	"math"
	"math/cmplx"
	"testing"

	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/mna/testcircuit"
)

func relErr(got, want complex128) float64 { return cmplx.Abs(got-want) / cmplx.Abs(want) }

// TestSweepSurvivesAxisPole: a lossless series L driving a shunt C has
// H = 1/(1 − ω²LC) (closed form, common practice), a pole pair on the jω
// axis at ω0 = 1/√(LC). A point exactly on it is +Inf and marked, and the
// sweep goes on to the neighbour, which is exact.
func TestSweepSurvivesAxisPole(t *testing.T) {
	l, c := 1.0, 1.0 // ω0 = 1 rad/s exactly
	sys := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.L("L1", "in", "out", l),
		testcircuit.C("C1", "out", "gnd", c)), mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	f0 := 1 / (2 * math.Pi)
	fs := []float64{f0 / 2, f0, f0 * 1.001}
	r, err := Sweep(context.Background(), sys, fs, 1)
	if err != nil {
		t.Fatal(err)
	}
	if !r.AtPole[1] || !math.IsInf(r.Mag[1], 1) || r.AtPole[0] || r.AtPole[2] {
		t.Fatalf("AtPole %v Mag %v, want only the middle point on the pole", r.AtPole, r.Mag)
	}
	for _, i := range []int{0, 2} {
		w := 2 * math.Pi * fs[i]
		if want := 1 / math.Abs(1-w*w*l*c); math.Abs(r.Mag[i]-want) > 1e-9*want {
			t.Errorf("|H| at %g Hz = %g, want %g", fs[i], r.Mag[i], want)
		}
	}
	if math.IsNaN(r.PhaseDeg[2]) {
		t.Errorf("phase after the pole is NaN")
	}
}

// TestExtremeValuesSolve: 10⁻¹⁵ Ω with 10¹² F is a valid RC low-pass with
// τ = 1 ms, H = 1/(1 + jωτ) (closed form, common practice); the sweep,
// a direct solve and the extracted H agree on it.
func TestExtremeValuesSolve(t *testing.T) {
	r, c := 1e-15, 1e12
	tau := r * c
	sys := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.R("R1", "in", "out", r),
		testcircuit.C("C1", "out", "gnd", c)), mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	fs := []float64{1, 100, 331.131, 1e4}
	resp, err := Sweep(context.Background(), sys, fs, 1)
	if err != nil {
		t.Fatal(err)
	}
	tf, err := transfer.Extract(sys)
	if err != nil {
		t.Fatal(err)
	}
	for i, f := range fs {
		s := complex(0, 2*math.Pi*f)
		want := 1 / (1 + s*complex(tau, 0))
		if resp.AtPole[i] || relErr(resp.H[i], want) > 1e-12 {
			t.Errorf("sweep at %g Hz: %v, want %v", f, resp.H[i], want)
		}
		d, err := sys.H(s)
		if err != nil || relErr(d, want) > 1e-12 {
			t.Errorf("solve at %g Hz: %v %v, want %v", f, d, err, want)
		}
		if relErr(tf.EvalFactored(s), want) > 1e-9 {
			t.Errorf("transfer at %g Hz: %v, want %v", f, tf.EvalFactored(s), want)
		}
	}
}
