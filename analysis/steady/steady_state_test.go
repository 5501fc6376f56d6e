package steady

import (
	"math"
	"nodal/analysis/transfer"
	"testing"

	"nodal/analysis/signal"
)

// lowPass1 is H(s) = 1/(1 + s/ωc), a first-order low-pass with corner ωc.
func lowPass1(omegaC float64) *transfer.TransferFunction {
	return &transfer.TransferFunction{
		Num: []float64{1}, Den: []float64{1, 1 / omegaC},
		Poles: []complex128{complex(-omegaC, 0)}, Gain: omegaC,
	}
}

func mustSignal(t *testing.T, src string) *signal.Signal {
	t.Helper()
	s, err := signal.Parse("signal", src)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func relNear(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(math.Abs(want), 1e-300)
}

// A first-order low-pass driven one decade above its corner passes
// 1/√101 = 0.0995 with a shift of −atan(10) = −84.29° (common practice).
func TestSteadyStateDecadeAboveCorner(t *testing.T) {
	const fc = 1000.0
	h := lowPass1(2 * math.Pi * fc)
	st, err := SteadyState(h.Eval, mustSignal(t, "sin(2*pi*10k*t)"))
	if err != nil {
		t.Fatal(err)
	}
	r := st.Terms[0]
	if r.Unbounded || !relNear(*r.Gain, 0.0995037, 1e-5) || math.Abs(*r.ShiftDeg-(-84.2894)) > 1e-3 {
		t.Fatalf("gain %v shift %v, want 0.0995 and −84.29°", *r.Gain, *r.ShiftDeg)
	}
	if !relNear(r.FreqHz, 10e3, 1e-12) || r.Function != "sin" {
		t.Errorf("term %+v", r)
	}
}

// A drive at a pole on the jω axis has no steady state: H = 1/(1 + s²/ω0²)
// at ω0, and H = 1/s (a pole at 0) for the constant (common practice).
func TestSteadyStateAtPole(t *testing.T) {
	const w0 = 2 * math.Pi * 159.0
	tank := &transfer.TransferFunction{Num: []float64{1}, Den: []float64{1, 0, 1 / (w0 * w0)},
		Poles: []complex128{complex(0, w0), complex(0, -w0)}, Gain: w0 * w0}
	st, err := SteadyState(tank.Eval, mustSignal(t, "sin(2*pi*159*t) + 0.1*sin(2*pi*50*t)"))
	if err != nil {
		t.Fatal(err)
	}
	if !st.Terms[0].Unbounded || st.Terms[0].Gain != nil || st.Terms[1].Unbounded {
		t.Fatalf("terms %+v", st.Terms)
	}
	if !st.Unbounded() {
		t.Error("Unbounded() is false for a drive at a pole")
	}
	integ := &transfer.TransferFunction{Num: []float64{1}, Den: []float64{0, 1}, Poles: []complex128{0}, Gain: 1}
	st, err = SteadyState(integ.Eval, mustSignal(t, "2 + sin(t)"))
	if err != nil {
		t.Fatal(err)
	}
	if !st.DCUnbounded || st.DCOut != nil {
		t.Errorf("DC through an integrator: %+v", st)
	}
	// sin(t) through 1/s is −cos(t) = sin(t − 90°).
	if r := st.Terms[0]; !relNear(*r.Gain, 1, 1e-12) || math.Abs(*r.OutPhaseDeg+90) > 1e-9 {
		t.Errorf("integrator term %+v", r)
	}
}

func TestWrapDeg(t *testing.T) {
	for _, c := range [][2]float64{{190, -170}, {-180, 180}, {180, 180}, {-190, 170}, {725, 5}, {0, 0}} {
		if got := wrapDeg(c[0]); math.Abs(got-c[1]) > 1e-12 {
			t.Errorf("wrapDeg(%g) = %g, want %g", c[0], got, c[1])
		}
	}
}
