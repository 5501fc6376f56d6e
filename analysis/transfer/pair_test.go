package transfer

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"
)

// PairOf against the closed forms of a series RLC (Dorf & Svoboda,
// Introduction to Electric Circuits, series resonance): the poles of
// s² + (R/L)s + 1/(LC) give ω0 = 1/√(LC), Q = (1/R)·√(L/C), ζ = 1/(2Q);
// an LC tank (R = 0) has its pair on the jω axis, Q = ∞ and ζ = 0; a
// negative R puts the pair in the right half-plane, Q < 0.
func TestPairOf(t *testing.T) {
	const L, C = 10e-3, 100e-9
	w0 := 1 / math.Sqrt(L*C)
	for _, R := range []float64{100, 10, 0, -50} {
		// roots of s² + (R/L)s + ω0²
		b := R / L
		r := complex(-b/2, math.Sqrt(w0*w0-b*b/4))
		p := PairOf(r)
		wantQ := math.Inf(1)
		if R != 0 {
			wantQ = math.Sqrt(L/C) / R
		}
		if math.Abs(p.OmegaRad-w0) > 1e-12*w0 || math.Abs(p.F0Hz-w0/(2*math.Pi)) > 1e-12*w0 {
			t.Errorf("R = %g: ω0 %g f0 %g, want %g", R, p.OmegaRad, p.F0Hz, w0)
		}
		if math.IsInf(wantQ, 1) {
			if !math.IsInf(p.Q, 1) || p.Zeta != 0 || math.Signbit(p.Zeta) {
				t.Errorf("LC tank: Q %g ζ %g, want +Inf and +0", p.Q, p.Zeta)
			}
		} else if math.Abs(p.Q-wantQ) > 1e-9*math.Abs(wantQ) || math.Abs(p.Zeta-1/(2*wantQ)) > 1e-9 {
			t.Errorf("R = %g: Q %g ζ %g, want %g and %g", R, p.Q, p.Zeta, wantQ, 1/(2*wantQ))
		}
		if p.Other != cmplx.Conj(r) || p.Root != r {
			t.Errorf("R = %g: members %v %v", R, p.Root, p.Other)
		}
	}
	// PolePairs reads the same numbers.
	tank := FromRoots(w0*w0, nil, []complex128{complex(0, w0), complex(0, -w0)})
	if ps := tank.PolePairs(); len(ps) != 1 || !math.IsInf(ps[0].Q, 1) || ps[0].Zeta != 0 {
		t.Errorf("tank pairs %+v", ps)
	}
}

// The q metric of an LC tank says why it has no number (Q = ∞ on the jω
// axis) instead of giving +Inf.
func TestMetricQOnAxis(t *testing.T) {
	w0 := 1e4
	tank := FromRoots(w0*w0, nil, []complex128{complex(0, w0), complex(0, -w0)})
	m, err := ParseMetric("q")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := m.Eval(tank); !errors.Is(err, ErrQInfinite) {
		t.Errorf("q of an LC tank: %v, want ErrQInfinite", err)
	}
	if f0, err := (Metric{}).Eval(tank); err == nil {
		t.Errorf("an unparsed metric gave %g", f0)
	}
}
