package main

import (
	"math"
	"strings"
	"testing"

	"nodal/analysis/signal"
	"nodal/analysis/steady"
	"nodal/analysis/transfer"
)

// steadyLowPass is H(s) = 1/(1 + s/ωc), a first-order low-pass.
func steadyLowPass(omegaC float64) *transfer.TransferFunction {
	return transfer.FromRoots(omegaC, nil, []complex128{complex(-omegaC, 0)})
}

func steadySignal(t *testing.T, src string) *signal.Signal {
	t.Helper()
	s, err := signal.Parse("--signal", src)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

// steadyText writes the drive's own style: a first-order low-pass one
// decade above its corner passes 1/√101 = 0.0995 at −atan 10 = −84.29°
// (common practice); a drive at a pole on the jω axis is named.
func TestSteadyText(t *testing.T) {
	const w0 = 2 * math.Pi * 159.0
	tank := &transfer.TransferFunction{Num: []float64{1}, Den: []float64{1, 0, 1 / (w0 * w0)},
		Poles: []complex128{complex(0, w0), complex(0, -w0)}, Gain: w0 * w0}
	integ := &transfer.TransferFunction{Num: []float64{1}, Den: []float64{0, 1}, Poles: []complex128{0}, Gain: 1}
	for _, c := range []struct {
		h      *transfer.TransferFunction
		signal string
		want   string
	}{
		{steadyLowPass(2 * math.Pi * 1000), "sin(2*pi*10k*t)", "y(t) = 0.0995*sin(2*pi*10k*t - 84.3°)"},
		{tank, "sin(2*pi*159*t) + 0.1*sin(2*pi*50*t)", "y(t) unbounded: sin(2*pi*159*t) drives a pole on the jω axis"},
		{integ, "2 + sin(t)", "y(t) unbounded: the constant drives a pole on the jω axis"},
	} {
		st, err := steady.SteadyState(c.h.Eval, steadySignal(t, c.signal))
		if err != nil {
			t.Fatal(err)
		}
		if got := steadyText(st); got != c.want {
			t.Errorf("%s: %q, want %q", c.signal, got, c.want)
		}
	}
}

// Superposition: the printed steady state of a several-term drive into
// dy/dt = ωc·(u − y) must satisfy that differential equation (the defining
// property of a steady-state solution; common practice). The derivative is
// taken by a central difference of the re-parsed printed output, so the
// check covers SteadyState, steadyText and the 4-digit rounding.
func TestSteadyStateSuperpositionSatisfiesODE(t *testing.T) {
	const wc = 2 * math.Pi * 100
	h := steadyLowPass(wc)
	drive := steadySignal(t, "1.5*cos(2*pi*50*t + 30deg) + 0.2*sin(2*pi*150*t) - sin(2*pi*100*t - 0.5) + 2")
	st, err := steady.SteadyState(h.Eval, drive)
	if err != nil {
		t.Fatal(err)
	}
	if len(st.Terms) != 3 || *st.DCOut != 2 {
		t.Fatalf("terms %d dc %v", len(st.Terms), *st.DCOut)
	}
	// At the corner: gain 1/√2, shift −45° (common practice).
	if r := st.Terms[2]; math.Abs(*r.Gain-1/math.Sqrt2) > 1e-12 || math.Abs(*r.ShiftDeg+45) > 1e-9 {
		t.Errorf("corner term gain %v shift %v", *r.Gain, *r.ShiftDeg)
	}
	text := steadyText(st)
	y := steadySignal(t, strings.TrimPrefix(text, "y(t) = "))
	const dt = 1e-7
	worst := 0.0
	for i := 0; i < 200; i++ {
		tt := float64(i) * 1.37e-4
		dy := (y.At(tt+dt) - y.At(tt-dt)) / (2 * dt)
		res := dy - wc*(drive.At(tt)-y.At(tt))
		worst = math.Max(worst, math.Abs(res)/wc)
	}
	// 4 significant digits on amplitudes ≈ 1e-3 of the largest term (1.5).
	if worst > 2e-3 {
		t.Errorf("ODE residual %g (relative to ωc) too large for %s", worst, text)
	}
}
