package timeresp

import (
	"math"
	"math/cmplx"
	"nodal/analysis/transfer"
	"strings"
	"testing"
)

// tfRoots builds H(s) = gain·Π(s − zeros)/Π(s − poles) with consistent
// ascending coefficients (Den normalised to a lowest non-zero coefficient 1).
func tfRoots(gain float64, zeros, poles []complex128) *transfer.TransferFunction {
	return transfer.FromRoots(gain, zeros, poles)
}

func closeTo(t *testing.T, what string, got *float64, want, rel float64) {
	t.Helper()
	if got == nil {
		t.Errorf("%s: no value, want %g", what, want)
		return
	}
	if math.Abs(*got-want) > rel*math.Abs(want) {
		t.Errorf("%s = %.9g, want %.9g (rel %g)", what, *got, want, rel)
	}
}

// mustJSON checks that every figure of r is finite or absent, so that the
// JSON of `nodal step` (which never carries NaN or Inf) can be written.
func mustJSON(t *testing.T, r *TimeResponse) {
	t.Helper()
	m := r.Metrics
	for _, v := range []*float64{m.Final, m.RiseTimeS, m.Rise10S, m.Rise90S, m.OvershootPct, m.PeakTimeS, m.Peak, m.SettlingTimeS} {
		if v != nil && (math.IsNaN(*v) || math.IsInf(*v, 0)) {
			t.Errorf("metric %v in %+v", *v, m)
		}
	}
	for _, p := range r.Points {
		if math.IsNaN(p.Y) || math.IsInf(p.Y, 0) {
			t.Errorf("sample y(%g) = %v", p.TS, p.Y)
		}
	}
	for _, md := range r.Modes {
		if math.IsNaN(md.Cos+md.Sin+md.SigmaPerS+md.OmegaRad) || math.IsInf(md.Cos+md.Sin, 0) {
			t.Errorf("mode %+v", md)
		}
	}
}

// First order H = 1/(1 + sτ): y(τ) = 1 − 1/e = 63.2 %, 10–90 % rise
// τ·ln 9 = 2.197τ, 2 % settling τ·ln 50 = 3.912τ, no overshoot
// (common practice).
func TestStepFirstOrder(t *testing.T) {
	const tau = 1e-3
	h := tfRoots(1/tau, nil, []complex128{-1 / tau})
	r, err := Step(h, TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if got := r.At(tau); math.Abs(got-(1-math.Exp(-1))) > 1e-12 {
		t.Errorf("y(τ) = %g, want 0.632", got)
	}
	m := r.Metrics
	closeTo(t, "final", m.Final, 1, 1e-12)
	closeTo(t, "rise", m.RiseTimeS, 2.1972246*tau, 1e-7)
	closeTo(t, "settling", m.SettlingTimeS, math.Log(50)*tau, 1e-9)
	closeTo(t, "overshoot+1", ptr(*m.OvershootPct+1), 1, 1e-12)
	if m.PeakTimeS != nil {
		t.Errorf("peak time %g for a monotone response", *m.PeakTimeS)
	}
	// default span: 7τ, 500 points
	if math.Abs(r.SpanS-7*tau) > 1e-15 || len(r.Points) != 500 || r.Points[499].TS != r.SpanS {
		t.Errorf("span %g points %d", r.SpanS, len(r.Points))
	}
	if r.Unstable || r.Dirac != 0 {
		t.Errorf("unstable %v dirac %v", r.Unstable, r.Dirac)
	}
	mustJSON(t, r)
}

// Impulse of 1/(1 + sτ) is (1/τ)·e^(−t/τ) (standard Laplace table, e.g.
// Ogata, Modern Control Engineering).
func TestImpulseFirstOrder(t *testing.T) {
	const tau = 2.2e-6
	h := tfRoots(1/tau, nil, []complex128{-1 / tau})
	r, err := Impulse(h, TimeOptions{Points: 50, UntilS: 1e-5})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range r.Points {
		if want := math.Exp(-p.TS/tau) / tau; math.Abs(p.Y-want) > 1e-12*want+1e-9 {
			t.Errorf("h(%g) = %g, want %g", p.TS, p.Y, want)
		}
	}
	if len(r.Points) != 50 || r.SpanS != 1e-5 || r.Dirac != 0 {
		t.Errorf("points %d span %g dirac %g", len(r.Points), r.SpanS, r.Dirac)
	}
	closeTo(t, "final", r.Metrics.Final, 0, 0)
	closeTo(t, "peak time", r.Metrics.PeakTimeS, 0, 0)
	if r.Metrics.RiseTimeS != nil || r.Metrics.OvershootPct != nil {
		t.Errorf("rise/overshoot for a zero final value")
	}
	// |h| falls to 2 % of its peak 1/τ at τ·ln 50.
	closeTo(t, "settling", r.Metrics.SettlingTimeS, math.Log(50)*tau, 1e-9)
}

// High-pass sτ/(1 + sτ): impulse δ(t) − (1/τ)e^(−t/τ), step e^(−t/τ), a
// jump to 1 at 0+ (Ogata, Modern Control Engineering, table of Laplace
// transform pairs).
func TestDirectTerm(t *testing.T) {
	const tau = 1e-3
	h := tfRoots(1, []complex128{0}, []complex128{-1 / tau})
	imp, err := Impulse(h, TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if imp.Dirac != 1 {
		t.Errorf("dirac %g", imp.Dirac)
	}
	if got := imp.At(tau); math.Abs(got+math.Exp(-1)/tau) > 1e-9 {
		t.Errorf("impulse at τ = %g", got)
	}
	st, err := Step(h, TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if st.At(0) != 1 || math.Abs(st.At(tau)-math.Exp(-1)) > 1e-12 || st.Dirac != 0 {
		t.Errorf("step y(0+) = %g, y(τ) = %g", st.At(0), st.At(tau))
	}
	closeTo(t, "final", st.Metrics.Final, 0, 0)
	closeTo(t, "settling", st.Metrics.SettlingTimeS, math.Log(50)*tau, 1e-9)
}

// Second order ω0²/(s² + 2ζω0 s + ω0²), underdamped: overshoot
// e^(−πζ/√(1−ζ²)), peak time π/(ω0√(1−ζ²)), step
// 1 − e^(−ζω0t)(cos ωd t + ζ/√(1−ζ²) sin ωd t) (Ogata, Modern Control
// Engineering, ch. 5); 2 % settling ≈ 4/(ζω0) (common practice, loose).
func TestStepSecondOrder(t *testing.T) {
	for _, zeta := range []float64{0.05, 0.2, 0.5, 0.7, 0.9} {
		w0 := 2 * math.Pi * 1e3
		wd := w0 * math.Sqrt(1-zeta*zeta)
		p := complex(-zeta*w0, wd)
		h := tfRoots(w0*w0, nil, []complex128{p, cmplx.Conj(p)})
		r, err := Step(h, TimeOptions{})
		if err != nil {
			t.Fatal(err)
		}
		for i := 0; i <= 300; i++ {
			tt := float64(i) * 10 / w0 / 30
			want := 1 - math.Exp(-zeta*w0*tt)*(math.Cos(wd*tt)+zeta/math.Sqrt(1-zeta*zeta)*math.Sin(wd*tt))
			if got := r.At(tt); math.Abs(got-want) > 1e-12 {
				t.Fatalf("ζ=%g: y(%g) = %.15g, want %.15g", zeta, tt, got, want)
			}
		}
		m := r.Metrics
		closeTo(t, "overshoot", m.OvershootPct, 100*math.Exp(-math.Pi*zeta/math.Sqrt(1-zeta*zeta)), 1e-9)
		closeTo(t, "peak time", m.PeakTimeS, math.Pi/wd, 1e-9)
		closeTo(t, "final", m.Final, 1, 1e-12)
		if m.SettlingTimeS == nil {
			t.Fatalf("ζ=%g: no settling time", zeta)
		}
		ts := *m.SettlingTimeS
		if rule := 4 / (zeta * w0); ts < 0.3*rule || ts > 1.3*rule {
			t.Errorf("ζ=%g: settling %g far from 4/(ζω0) = %g", zeta, ts, rule)
		}
		// exact definition: on the band edge at ts, inside after it
		if e := math.Abs(r.At(ts) - 1); math.Abs(e-0.02) > 1e-9 {
			t.Errorf("ζ=%g: |y(ts) − 1| = %g, want 0.02", zeta, e)
		}
		for i := 1; i <= 20000; i++ {
			tt := ts + float64(i)*50/(zeta*w0)/20000
			if math.Abs(r.At(tt)-1) > 0.02+1e-12 {
				t.Fatalf("ζ=%g: outside the band at %g after settling %g", zeta, tt, ts)
			}
		}
		// rise: the 10 % and 90 % crossings of the exact response
		if m.RiseTimeS == nil || *m.RiseTimeS <= 0 || *m.RiseTimeS > math.Pi/wd {
			t.Errorf("ζ=%g: rise %v", zeta, m.RiseTimeS)
		}
		mustJSON(t, r)
	}
}

// Repeated real poles (standard Laplace table, e.g. Ogata):
// 1/(1+sτ)² → 1 − (1 + t/τ)e^(−t/τ); 1/(1+sτ)³ → 1 − (1 + t/τ + (t/τ)²/2)e^(−t/τ).
// The poles are given split as a root finder returns them, and exactly.
func TestStepRepeatedPoles(t *testing.T) {
	const tau = 1e-3
	p := -1 / tau
	cases := []struct {
		name  string
		poles []complex128
		want  func(x float64) float64
	}{
		{"double exact", []complex128{complex(p, 0), complex(p, 0)},
			func(x float64) float64 { return 1 - (1+x)*math.Exp(-x) }},
		{"double split", []complex128{complex(p*(1+2e-8), 0), complex(p*(1-2e-8), 0)},
			func(x float64) float64 { return 1 - (1+x)*math.Exp(-x) }},
		{"double as a pair", []complex128{complex(p, 3e-6), complex(p, -3e-6)},
			func(x float64) float64 { return 1 - (1+x)*math.Exp(-x) }},
		{"triple split", []complex128{complex(p*(1+4e-6), 0), complex(p*(1-2e-6), 3.4e-6*p), complex(p*(1-2e-6), -3.4e-6*p)},
			func(x float64) float64 { return 1 - (1+x+x*x/2)*math.Exp(-x) }},
	}
	for _, c := range cases {
		gain := 1.0
		for range c.poles {
			gain /= tau
		}
		r, err := Step(tfRoots(gain, nil, c.poles), TimeOptions{})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		for i := 0; i <= 100; i++ {
			x := float64(i) * 0.1
			if got, want := r.At(x*tau), c.want(x); math.Abs(got-want) > 1e-9 {
				t.Errorf("%s: y(%gτ) = %.12g, want %.12g", c.name, x, got, want)
			}
		}
		if r.Unstable || r.Metrics.SettlingTimeS == nil {
			t.Errorf("%s: unstable %v settling %v", c.name, r.Unstable, r.Metrics.SettlingTimeS)
		}
	}
}

// Repeated complex pair: H = ω0⁴/(s² + ω0²)²·… is unstable; a damped
// repeated pair (s² + 2ζω0s + ω0²)⁻² is checked against the convolution
// identity impulse(H²) = impulse(H) * impulse(H), evaluated by quadrature.
func TestImpulseRepeatedPair(t *testing.T) {
	const zeta, w0 = 0.3, 1.0
	p := complex(-zeta*w0, w0*math.Sqrt(1-zeta*zeta))
	single, err := Impulse(tfRoots(1, nil, []complex128{p, cmplx.Conj(p)}), TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	double, err := Impulse(tfRoots(1, nil, []complex128{p, cmplx.Conj(p), p, cmplx.Conj(p)}), TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, tt := range []float64{0.5, 2, 5, 11} {
		// Simpson's rule of ∫0^t h(τ)h(t−τ)dτ
		const n = 2000
		sum := 0.0
		for i := 0; i <= n; i++ {
			x := tt * float64(i) / n
			w := 2.0
			if i == 0 || i == n {
				w = 1
			} else if i%2 == 1 {
				w = 4
			}
			sum += w * single.At(x) * single.At(tt-x)
		}
		conv := sum * tt / n / 3
		if got := double.At(tt); math.Abs(got-conv) > 1e-9 {
			t.Errorf("h²(%g) = %.12g, convolution %.12g", tt, got, conv)
		}
	}
}

// Integrator 1/(sτ): the step ramps t/τ, no final value (Ogata, Modern
// Control Engineering, table of Laplace transform pairs).
// With a second pole it ramps after a lag; 1/s alone has no time scale.
func TestStepIntegrator(t *testing.T) {
	const tau = 1e-3
	r, err := Step(tfRoots(1/tau, nil, []complex128{0}), TimeOptions{UntilS: 5e-3})
	if err != nil {
		t.Fatal(err)
	}
	if r.Metrics.Final != nil || !strings.Contains(r.Metrics.Note, "ramps") {
		t.Errorf("metrics %+v", r.Metrics)
	}
	if got := r.At(2e-3); math.Abs(got-2) > 1e-12 {
		t.Errorf("y(2ms) = %g", got)
	}
	if len(r.AxisPoles) != 1 || r.Unstable {
		t.Errorf("axis poles %v unstable %v", r.AxisPoles, r.Unstable)
	}
	if _, err := Step(tfRoots(1, nil, []complex128{0}), TimeOptions{}); err == nil || !strings.Contains(err.Error(), "no time scale") {
		t.Errorf("no span error: %v", err)
	}
	// 1/(s(1+sτ)): step t − τ(1 − e^(−t/τ)); impulse 1 − e^(−t/τ) settles.
	h := tfRoots(1/tau, nil, []complex128{0, -1 / tau})
	st, err := Step(h, TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if want := 3e-3 - tau*(1-math.Exp(-3)); math.Abs(st.At(3e-3)-want) > 1e-15 {
		t.Errorf("ramp with lag: %g, want %g", st.At(3e-3), want)
	}
	imp, err := Impulse(h, TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	closeTo(t, "impulse final", imp.Metrics.Final, 1, 1e-12)
	mustJSON(t, st)
}

// Unstable and marginal circuits: no settling figures, poles named.
func TestStepUnstable(t *testing.T) {
	const tau = 1e-3
	r, err := Step(tfRoots(-1/tau, nil, []complex128{1 / tau}), TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !r.Unstable || len(r.UnstablePoles) != 1 || real(r.UnstablePoles[0]) != 1/tau || r.Metrics.SettlingTimeS != nil || r.Metrics.Final != nil {
		t.Errorf("unstable %+v", r)
	}
	// 1/(1 − sτ) step: 1 − e^(t/τ) (Ogata, Modern Control Engineering, table
	// of Laplace transform pairs)
	if got := r.At(tau); math.Abs(got-(1-math.E)) > 1e-12 {
		t.Errorf("y(τ) = %g", got)
	}
	if !strings.Contains(r.Metrics.Note, "grows") {
		t.Errorf("note %q", r.Metrics.Note)
	}
	// lossless tank ω0²/(s² + ω0²): step 1 − cos ω0t, oscillates forever
	w0 := 1e4
	lc, err := Step(tfRoots(w0*w0, nil, []complex128{complex(0, w0), complex(0, -w0)}), TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if lc.Unstable || len(lc.AxisPoles) != 2 || lc.Metrics.Final != nil || !strings.Contains(lc.Metrics.Note, "oscillating") {
		t.Errorf("tank %+v", lc.Metrics)
	}
	if got := lc.At(1e-3); math.Abs(got-(1-math.Cos(10))) > 1e-12 {
		t.Errorf("tank y = %g", got)
	}
	if math.Abs(lc.SpanS-10*2*math.Pi/w0) > 1e-15 {
		t.Errorf("tank span %g", lc.SpanS)
	}
	// a repeated pair on the axis grows like t·sin: unstable
	rep, err := Impulse(tfRoots(1, nil, []complex128{complex(0, w0), complex(0, -w0), complex(0, w0), complex(0, -w0)}), TimeOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !rep.Unstable || len(rep.UnstablePoles) != 2 || rep.Metrics.Final != nil {
		t.Errorf("repeated axis pair %+v", rep)
	}
	// overflow stops the samples instead of giving +Inf
	big, err := Step(tfRoots(-1/tau, nil, []complex128{1 / tau}), TimeOptions{UntilS: 1})
	if err != nil {
		t.Fatal(err)
	}
	if !big.Overflow || len(big.Points) == 0 || len(big.Points) >= 500 {
		t.Errorf("overflow %v points %d", big.Overflow, len(big.Points))
	}
	mustJSON(t, big)
}

func TestTimeResponseErrors(t *testing.T) {
	improper := tfRoots(1, []complex128{-1, -2}, []complex128{-3})
	if _, err := Impulse(improper, TimeOptions{}); err == nil {
		t.Error("improper H accepted")
	}
	h := tfRoots(1, nil, []complex128{-1})
	for _, o := range []TimeOptions{{Points: 1}, {UntilS: -1}, {UntilS: math.Inf(1)}} {
		if _, err := Step(h, o); err == nil {
			t.Errorf("options %+v accepted", o)
		}
	}
	if _, err := Step(tfRoots(1, nil, []complex128{complex(-1, 1)}), TimeOptions{}); err == nil {
		t.Error("pole without conjugate accepted")
	}
	if _, err := Step(nil, TimeOptions{}); err == nil {
		t.Error("nil accepted")
	}
}

// BenchmarkStepEighthOrder measures a full step response (expansion, 500
// samples, metrics) of four damped pairs with a double pair among them.
func BenchmarkStepEighthOrder(b *testing.B) {
	var poles []complex128
	for _, p := range []complex128{complex(-100, 2e3), complex(-300, 5e3), complex(-300, 5e3), complex(-1e3, 1e4)} {
		poles = append(poles, p, cmplx.Conj(p))
	}
	h := tfRoots(1, []complex128{-50}, poles)
	for b.Loop() {
		if _, err := Step(h, TimeOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// Two real poles decades apart, H = p1·p2/((s − p1)(s − p2)): the step is
// y(t) = 1 + (p2·e^(p1·t) − p1·e^(p2·t))/(p1 − p2) (standard Laplace
// table, common practice). The first row is a 1 TΩ·1 pF electrometer input
// behind a 1 kΩ·1 nF filter: D(s) = s² + 1001000001·s + 10⁶ (hand-written
// node equations), roots from the quadratic formula with mpmath at 40
// digits. A floor of 10⁻¹² of the largest pole once put the slow pole at
// s = 0 and printed the step as a ramp t/1ks; then the matrix exponential,
// off by 1.5e-4 at twelve decades of stiffness, replaced the exact partial
// fractions. The slow pole must stay a pole, the closed form must be kept,
// and the samples, final value, rise and settling times must match.
func TestStepWidelySeparatedPoles(t *testing.T) {
	for _, c := range []struct {
		name   string
		p1, p2 float64
	}{
		{"electrometer 1e-3 and 1e9 rad/s", -9.990009980039930119780419e-4, -1001000000.999000999001996},
		{"1 and 1e14 rad/s", -1, -1e14},
		{"1e-6 and 1e6 rad/s", -1e-6, -1e6},
	} {
		t.Run(c.name, func(t *testing.T) {
			h := tfRoots(c.p1*c.p2, nil, []complex128{complex(c.p1, 0), complex(c.p2, 0)})
			r, err := Step(h, TimeOptions{})
			if err != nil {
				t.Fatal(err)
			}
			if r.ClosedFormWithheld != "" || r.IllConditioned {
				t.Errorf("closed form withheld: %q", r.ClosedFormWithheld)
			}
			for _, m := range r.Modes {
				if m.SigmaPerS == 0 && m.Power > 0 {
					t.Errorf("mode %+v: a ramp, the slow pole taken for s = 0", m)
				}
			}
			tau := -1 / c.p1
			if math.Abs(r.SpanS-7*tau) > 1e-9*7*tau {
				t.Errorf("span %g s, want 7 slow time constants %g s", r.SpanS, 7*tau)
			}
			exact := func(t float64) float64 {
				return 1 + (c.p2*math.Exp(c.p1*t)-c.p1*math.Exp(c.p2*t))/(c.p1-c.p2)
			}
			for _, p := range r.Points {
				if d := math.Abs(p.Y - exact(p.TS)); d > 1e-9 {
					t.Fatalf("y(%g) = %.12g, want %.12g", p.TS, p.Y, exact(p.TS))
				}
			}
			m := r.Metrics
			closeTo(t, "final", m.Final, 1, 1e-12)
			// the fast pole delays the slow exponential by 1/|p2|, negligible here
			closeTo(t, "rise", m.RiseTimeS, math.Log(9)*tau, 1e-6)
			closeTo(t, "settling", m.SettlingTimeS, math.Log(50)*tau, 1e-6)
			mustJSON(t, r)
		})
	}
}
