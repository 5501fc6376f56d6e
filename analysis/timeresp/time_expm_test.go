package timeresp

import (
	"nodal/mna/testcircuit"

	"nodal/analysis/transfer"

	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
)

// TestCascadeMatchesClosedForms: the matrix-exponential samples of the
// cascade realization against closed forms (common practice): a first-
// order low-pass step 1 − e^(−t/τ); a second-order pair's step response
// 1 − e^(−ζω0t)(cos ωd·t + ζ/√(1−ζ²)·sin ωd·t); a high-pass impulse
// δ − (1/τ)e^(−t/τ) (Dirac part excluded); and the 22-fold pole's
// Erlang step.
func TestCascadeMatchesClosedForms(t *testing.T) {
	tau, w0, zeta := 1e-3, 2*math.Pi*1e3, 0.3
	wd := w0 * math.Sqrt(1-zeta*zeta)
	pair := complex(-zeta*w0, wd)
	erlang := func(n int) func(float64) float64 {
		return func(tt float64) float64 {
			x, sum, term := tt/tau, 0.0, 1.0
			for k := 0; k < n; k++ {
				sum += term
				term *= x / float64(k+1)
			}
			return 1 - math.Exp(-x)*sum
		}
	}
	poles22 := make([]complex128, 22)
	for i := range poles22 {
		poles22[i] = complex(-1/tau, 0)
	}
	cases := []struct {
		name string
		tf   *transfer.TransferFunction
		step bool
		want func(float64) float64
	}{
		{"RC step", transfer.FromRoots(1/tau, nil, []complex128{complex(-1/tau, 0)}), true,
			func(tt float64) float64 { return 1 - math.Exp(-tt/tau) }},
		{"pair step", transfer.FromRoots(w0*w0, nil, []complex128{pair, cmplx.Conj(pair)}), true,
			func(tt float64) float64 {
				return 1 - math.Exp(-zeta*w0*tt)*(math.Cos(wd*tt)+zeta/math.Sqrt(1-zeta*zeta)*math.Sin(wd*tt))
			}},
		{"high-pass impulse", transfer.FromRoots(1, []complex128{0}, []complex128{complex(-1/tau, 0)}), false,
			func(tt float64) float64 { return -math.Exp(-tt/tau) / tau }},
		{"22-fold pole step", transfer.FromRoots(math.Pow(1/tau, 22), nil, poles22), true, erlang(22)},
	}
	for _, tc := range cases {
		c, err := newCascade(tc.tf)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		h := 60 * tau / 499
		ys, err := c.samples(tc.step, h, 500)
		if err != nil {
			t.Fatal(err)
		}
		scale := 0.0
		for i := range ys {
			scale = math.Max(scale, math.Abs(tc.want(float64(i)*h)))
		}
		for i, y := range ys {
			if want := tc.want(float64(i) * h); math.Abs(y-want) > 1e-9*scale {
				t.Errorf("%s: y(%g) = %.12g, want %.12g", tc.name, float64(i)*h, y, want)
				break
			}
		}
	}
}

// TestExpmStepFigures: step figures from the matrix exponential against
// closed forms (common practice for a second-order pair: overshoot
// 100·e^(−πζ/√(1−ζ²)) %, peak time π/ωd) and against the partial-fraction
// figures of a well-conditioned 22-section ladder.
func TestExpmStepFigures(t *testing.T) {
	w0, zeta := 2*math.Pi*1e3, 0.3
	wd := w0 * math.Sqrt(1-zeta*zeta)
	pair := complex(-zeta*w0, wd)
	tf := transfer.FromRoots(w0*w0, nil, []complex128{pair, cmplx.Conj(pair)})
	c, err := newCascade(tf)
	if err != nil {
		t.Fatal(err)
	}
	m, ok := expmStepMetrics(c, 1, 10/(zeta*w0))
	if !ok || m.OvershootPct == nil || m.PeakTimeS == nil {
		t.Fatalf("metrics %+v", m)
	}
	if want := 100 * math.Exp(-math.Pi*zeta/math.Sqrt(1-zeta*zeta)); math.Abs(*m.OvershootPct-want) > 1e-7*want {
		t.Errorf("overshoot %.10g %%, want %.10g %%", *m.OvershootPct, want)
	}
	if want := math.Pi / wd; math.Abs(*m.PeakTimeS-want) > 1e-6*want {
		t.Errorf("peak time %.10g s, want %.10g s", *m.PeakTimeS, want)
	}

	ltf := extractOut(t, testcircuit.RCLadder(22, 1e3, 10e-9), mna.Output{Kind: mna.NodeVoltage, Node: "n22"})
	st, err := Step(ltf, TimeOptions{})
	if err != nil || st.IllConditioned {
		t.Fatalf("22-section step: %v (ill-conditioned %v)", err, st != nil && st.IllConditioned)
	}
	lc, err := newCascade(ltf)
	if err != nil {
		t.Fatal(err)
	}
	em, ok := expmStepMetrics(lc, 1, st.SpanS)
	if !ok {
		t.Fatal("no figures")
	}
	for _, f := range []struct {
		name     string
		got, ref *float64
	}{{"rise", em.RiseTimeS, st.Metrics.RiseTimeS}, {"settling", em.SettlingTimeS, st.Metrics.SettlingTimeS}} {
		if f.got == nil || f.ref == nil || math.Abs(*f.got-*f.ref) > 1e-8**f.ref {
			t.Errorf("%s: matrix exponential %v, partial fractions %v", f.name, f.got, f.ref)
		}
	}
}
