package loop

import (
	"math"
	"testing"

	"nodal/analysis/transfer"
)

// twoPole is T(s) = A0/((1 + s/p1)(1 + s/p2)) in factored form.
func twoPole(a0, p1, p2 float64) *transfer.TransferFunction {
	return transfer.FromRoots(a0*p1*p2, nil, []complex128{complex(-p1, 0), complex(-p2, 0)})
}

// TestTwoPoleLoop: |T(jω)| = 1 is the quadratic in x = ω²
//
//	x²/(p1²p2²) + x·(1/p1² + 1/p2²) + 1 − A0² = 0
//
// and PM = 180° − atan(ωc/p1) − atan(ωc/p2) (Ogata, Modern Control
// Engineering, frequency-response analysis; common practice). Two poles
// never reach −180°: no phase crossover.
func TestTwoPoleLoop(t *testing.T) {
	for _, tt := range []struct{ a0, p1, p2 float64 }{
		{1e3, 10, 1e4}, {100, 1e3, 1e3}, {1e5, 2 * math.Pi * 10, 2 * math.Pi * 1e6}, {3, 1, 5},
	} {
		a, b, c := 1/(tt.p1*tt.p1*tt.p2*tt.p2), 1/(tt.p1*tt.p1)+1/(tt.p2*tt.p2), 1-tt.a0*tt.a0
		x := (-b + math.Sqrt(b*b-4*a*c)) / (2 * a)
		wc := math.Sqrt(x)
		pm := 180 - (math.Atan(wc/tt.p1)+math.Atan(wc/tt.p2))*180/math.Pi
		g := twoPole(tt.a0, tt.p1, tt.p2)
		lo, hi := Span(g)
		f, err := Analyze(g, lo, hi)
		if err != nil {
			t.Fatal(err)
		}
		if len(f.Gain) != 1 || len(f.Phase) != 0 {
			t.Fatalf("%+v: crossovers %+v, phase crossovers %+v; want one and none", tt, f.Gain, f.Phase)
		}
		if got := f.Gain[0].FreqHz * 2 * math.Pi; math.Abs(got-wc) > 1e-9*wc {
			t.Errorf("%+v: crossover %.12g rad/s, want %.12g", tt, got, wc)
		}
		if got := f.Gain[0].PhaseMarginDeg; math.Abs(got-pm) > 1e-8 {
			t.Errorf("%+v: phase margin %.10g°, want %.10g°", tt, got, pm)
		}
	}
}

// TestThreeEqualPoles: T = K/(1 + s/p)³ reaches −180° at ω = √3·p, where
// |T| = K/8, so the gain margin is 20·log10(8/K) and the critical gain is
// 8 (the classic result; Ogata, Modern Control Engineering, Nyquist
// criterion examples).
func TestThreeEqualPoles(t *testing.T) {
	p := 1e3
	for _, k := range []float64{2, 8, 20} {
		g := transfer.FromRoots(k*p*p*p, nil, []complex128{complex(-p, 0), complex(-p, 0), complex(-p, 0)})
		lo, hi := Span(g)
		f, err := Analyze(g, lo, hi)
		if err != nil {
			t.Fatal(err)
		}
		if len(f.Phase) != 1 {
			t.Fatalf("K=%g: phase crossovers %+v, want one", k, f.Phase)
		}
		if got := f.Phase[0].FreqHz * 2 * math.Pi; math.Abs(got-math.Sqrt(3)*p) > 1e-9*p {
			t.Errorf("K=%g: phase crossover %.12g rad/s, want √3·p = %.12g", k, got, math.Sqrt(3)*p)
		}
		if got, want := f.Phase[0].GainMarginDB, 20*math.Log10(8/k); math.Abs(got-want) > 1e-9 {
			t.Errorf("K=%g: gain margin %.12g dB, want %.12g", k, got, want)
		}
		// The gain crossover: (1 + ω²/p²)^{3/2} = K.
		if wc := p * math.Sqrt(math.Pow(k, 2.0/3)-1); len(f.Gain) != 1 || math.Abs(f.Gain[0].FreqHz*2*math.Pi-wc) > 1e-9*wc {
			t.Errorf("K=%g: crossovers %+v, want one at %g rad/s", k, f.Gain, wc)
		}
	}
}

// TestNoCrossover: a loop whose |T| stays below 1, and one that stays
// above (an integrator-free loop can't; a pure gain can).
func TestNoCrossover(t *testing.T) {
	below := transfer.FromRoots(0.5e3, nil, []complex128{-1e3}) // 0.5/(1 + s/1e3)
	f, err := Analyze(below, 1, 1e7)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Gain) != 0 || f.Above {
		t.Errorf("below: %+v", f)
	}
	if _, ok := f.PhaseMarginDeg(); ok {
		t.Error("below: a phase margin without a crossover")
	}
	above := transfer.FromRoots(5, nil, nil)
	f, err = Analyze(above, 1, 1e7)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Gain) != 0 || !f.Above {
		t.Errorf("above: %+v", f)
	}
}

// TestPhaseUnwrapped: a phase that runs past −360° is not folded back:
// five equal poles end near −450°, so the only phase crossover is the
// −180° one, at 5·atan(ω/p) = 180°.
func TestPhaseUnwrapped(t *testing.T) {
	p := 10.0
	g := transfer.FromRoots(100*math.Pow(p, 5), nil, []complex128{-10, -10, -10, -10, -10})
	f, err := Analyze(g, 1e-2, 1e6)
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Phase) != 1 {
		t.Fatalf("phase crossovers %+v, want one", f.Phase)
	}
	// 5·atan(ω/p) = 180° → ω = p·tan 36°.
	if got, want := f.Phase[0].FreqHz*2*math.Pi, p*math.Tan(36*math.Pi/180); math.Abs(got-want) > 1e-9*want {
		t.Errorf("phase crossover %g rad/s, want %g", got, want)
	}
	if ph := f.PhaseDeg(g, 1e6); math.Abs(ph+450) > 0.01 {
		t.Errorf("phase at high frequency %g°, want about −450°", ph)
	}
}
