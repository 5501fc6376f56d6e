package transfer

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
)

// TestTinyGainsAndHighQ: responses far below the scale of the rest of the
// solution are exact, not zero (closed forms, common practice: divider
// ratio, series RC current, parallel RLC tank).
func TestTinyGainsAndHighQ(t *testing.T) {
	t.Run("1TΩ/0.1Ω divider with 1 nF", func(t *testing.T) {
		rt, rb, c := 1e12, 0.1, 1e-9
		sys := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.R("Rt", "in", "out", rt),
			testcircuit.R("Rb", "out", "gnd", rb), testcircuit.C("C1", "out", "gnd", c)), mna.Output{Kind: mna.NodeVoltage, Node: "out"})
		tf := mustExtract(t, sys)
		// H = (1/Rt)/(1/Rt + 1/Rb + sC): DC rb/(rt+rb), pole −(1/rt+1/rb)/c.
		dc := tf.DCGain()
		if want := rb / (rt + rb); dc.Power != 0 || math.Abs(dc.Gain-want) > 1e-9*want {
			t.Errorf("DC gain %v, want %g", dc, want)
		}
		if want := -(1/rt + 1/rb) / c; len(tf.Poles) != 1 || relErr(tf.Poles[0], complex(want, 0)) > 1e-9 {
			t.Errorf("poles %v, want [%g]", tf.Poles, want)
		}
	})
	t.Run("1 PΩ/0.1 Ω divider: exact or refused, never zero", func(t *testing.T) {
		rt, rb, c := 1e15, 0.1, 1e-9
		sys := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.R("Rt", "in", "out", rt),
			testcircuit.R("Rb", "out", "gnd", rb), testcircuit.C("C1", "out", "gnd", c)), mna.Output{Kind: mna.NodeVoltage, Node: "out"})
		tf, err := Extract(sys)
		if err != nil {
			if !errors.Is(err, ErrIllConditioned) {
				t.Errorf("error %v, want ErrIllConditioned", err)
			}
			return
		}
		if dc, want := tf.DCGain(), rb/(rt+rb); dc.Power != 0 || math.Abs(dc.Gain-want) > 1e-9*want {
			t.Errorf("DC gain %v, want %g", dc, want)
		}
	})
	t.Run("current through 2 TΩ into 1 pF", func(t *testing.T) {
		r, c := 2e12, 1e-12
		sys := testcircuit.Build(t, testcircuit.New(testcircuit.V("Vin", "in", "gnd", 1), testcircuit.R("Rt", "in", "out", r),
			testcircuit.C("C1", "out", "gnd", c)), mna.Output{Kind: mna.PartCurrent, Part: "Rt"})
		tf := mustExtract(t, sys)
		// i = V·sC/(1 + sRC): a zero at exactly 0, pole −1/(RC), i ≈ C·s·V at DC.
		if len(tf.Zeros) != 1 || tf.Zeros[0] != 0 {
			t.Errorf("zeros %v, want [0]", tf.Zeros)
		}
		if want := -1 / (r * c); len(tf.Poles) != 1 || relErr(tf.Poles[0], complex(want, 0)) > 1e-9 {
			t.Errorf("poles %v, want [%g]", tf.Poles, want)
		}
		if dc := tf.DCGain(); dc.Power != 1 || math.Abs(dc.Gain-c) > 1e-9*c {
			t.Errorf("DC asymptote %v, want %g·s", dc, c)
		}
		sv := complex(0, 1e6)
		if want := sv * complex(c, 0) / (1 + sv*complex(r*c, 0)); relErr(tf.EvalFactored(sv), want) > 1e-9 {
			t.Errorf("current at %v rad/s %v, want %v", sv, tf.EvalFactored(sv), want)
		}
	})
	t.Run("Q = 3e7 tank", func(t *testing.T) {
		r, l, c := 3e7, 1.0, 1.0
		sys := testcircuit.Build(t, testcircuit.New(testcircuit.I("Iin", "t", "gnd", 1), testcircuit.R("Rp", "t", "gnd", r),
			testcircuit.L("L1", "t", "gnd", l), testcircuit.C("C1", "t", "gnd", c)), mna.Output{Kind: mna.NodeVoltage, Node: "t"})
		tf := mustExtract(t, sys)
		// Z = (s/C)/(s² + s/(RC) + 1/(LC)) (common practice): poles
		// s = −ω0/(2Q) ± jω0·√(1 − 1/(4Q²)) with ω0 = 1/√(LC),
		// Q = R·√(C/L); gain (leading coefficient ratio) 1/C. The real
		// part, 1.7e-8 of |s|, must be right to 1e-9 of itself, not of |s|.
		w0, q0 := 1/math.Sqrt(l*c), r*math.Sqrt(c/l)
		re := -w0 / (2 * q0)
		p := complex(re, w0*math.Sqrt(1-1/(4*q0*q0)))
		if len(tf.Poles) != 2 || relErr(tf.Poles[0], p) > 1e-9 || math.Abs(real(tf.Poles[0])-re) > 1e-9*math.Abs(re) ||
			tf.Poles[1] != cmplx.Conj(tf.Poles[0]) {
			t.Fatalf("poles %v, want %v and its conjugate", tf.Poles, p)
		}
		if q := tf.PolePairs()[0].Q; math.Abs(q-q0) > 1e-9*q0 {
			t.Errorf("Q = %.12g, want %.12g", q, q0)
		}
		if math.Abs(tf.Gain-1/c) > 1e-9/c {
			t.Errorf("gain %.12g, want %.12g", tf.Gain, 1/c)
		}
		if len(tf.Zeros) != 1 || tf.Zeros[0] != 0 {
			t.Errorf("zeros %v, want [0]", tf.Zeros)
		}
		w := 0.999
		want := complex(0, w/c) / complex(1/(l*c)-w*w, w/(r*c))
		if got := tf.EvalFactored(complex(0, w)); relErr(got, want) > 1e-9 {
			t.Errorf("Z(j%g) = %v, want %v", w, got, want)
		}
	})
}

// TestSallenKeyCapacitorCurrent: the current through C1 of the README's
// Sallen-Key low-pass is C1·s·(v(a) − v(out)); with the unity-gain
// buffer both nodes follow the input at DC, so i(C1) ∝ s² (a double zero
// at s = 0; closed form, common practice), the DC
// gain is exactly 0 and the step response returns to 0.
func TestSallenKeyCapacitorCurrent(t *testing.T) {
	c := testcircuit.Load(t, "../../testdata/examples/tone_lowpass_ideal.nodal", nil)
	sys := testcircuit.Build(t, c, mna.Output{Kind: mna.PartCurrent, Part: "C1"})
	tf := mustExtract(t, sys)
	if len(tf.Zeros) != 2 || tf.Zeros[0] != 0 || tf.Zeros[1] != 0 {
		t.Fatalf("zeros %v, want a double zero at 0", tf.Zeros)
	}
	dc := tf.DCGain()
	if dc.Power != 2 {
		t.Errorf("DC asymptote %v, want s²", dc)
	}
	// Leading coefficient: i(C1) = C1·s·(v(a) − v(out)) and, at low
	// frequency, v(a) − v(out) = s·R2·C2·1 → H ≈ C1·R2·C2·s².
	if want := 10e-9 * 22e3 * 4.7e-9; math.Abs(dc.Gain-want) > 1e-9*want {
		t.Errorf("s² coefficient %g, want %g", dc.Gain, want)
	}
}
