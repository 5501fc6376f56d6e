package main

import (
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
)

// The closed forms of textbook responses (standard Laplace table, e.g.
// Ogata, Modern Control Engineering): 1/(1 + sτ) steps to 1 − e^(−t/τ) and
// has the impulse (1/τ)·e^(−t/τ); s/(s + 1/τ) has the impulse
// δ(t) − (1/τ)·e^(−t/τ); 1/(1 + sτ)² steps to 1 − (1 + t/τ)·e^(−t/τ) and
// 1/(1 + sτ)³ to 1 − (1 + t/τ + (t/τ)²/2)·e^(−t/τ); a second-order
// low-pass with ζ = 0.5 steps to 1 − e^(−ζω0t)/√(1−ζ²)·sin(ωd·t + acos ζ),
// 1/√0.75 = 1.155 and acos 0.5 = 60°; an integrator steps to a ramp; a
// pole at +1/τ grows as e^(t/τ).
func TestClosedForm(t *testing.T) {
	const tau = 1e-3
	p := -1 / tau
	zeta, wd := 0.5, 2*math.Pi*500
	w0 := wd / math.Sqrt(1-zeta*zeta)
	pair := complex(-zeta*w0, wd)
	pz, pw0 := 0.3, 1.0
	rp := complex(-pz*pw0, pw0*math.Sqrt(1-pz*pz))
	for _, c := range []struct {
		name    string
		h       *transfer.TransferFunction
		impulse bool
		opt     timeresp.TimeOptions
		want    string
		prefix  bool // want is a prefix, or (with contains) a fragment
		contain bool
	}{
		{name: "first-order step", h: transfer.FromRoots(1/tau, nil, []complex128{-1 / tau}), want: "y(t) = 1 − e^(−t/1ms)"},
		{name: "first-order impulse", h: transfer.FromRoots(1/2.2e-6, nil, []complex128{-1 / 2.2e-6}), impulse: true,
			opt: timeresp.TimeOptions{Points: 50, UntilS: 1e-5}, want: "y(t) = 454545·e^(−t/2.2µs)"},
		{name: "direct term", h: transfer.FromRoots(1, []complex128{0}, []complex128{-1 / tau}), impulse: true,
			want: "y(t) = δ(t) − 1000·e^(−t/1ms)", prefix: true},
		{name: "second order", h: transfer.FromRoots(w0*w0, nil, []complex128{pair, cmplx.Conj(pair)}),
			want: "y(t) = 1 − 1.155·e^(−t/551µs)·sin(2π·500Hz·t + 60.0°)"},
		{name: "double exact", h: transfer.FromRoots(1/(tau*tau), nil, []complex128{complex(p, 0), complex(p, 0)}),
			want: "y(t) = 1 − (1 + t/1ms)·e^(−t/1ms)"},
		{name: "double split", h: transfer.FromRoots(1/(tau*tau), nil, []complex128{complex(p*(1+2e-8), 0), complex(p*(1-2e-8), 0)}),
			want: "y(t) = 1 − (1 + t/1ms)·e^(−t/1ms)"},
		{name: "double as a pair", h: transfer.FromRoots(1/(tau*tau), nil, []complex128{complex(p, 3e-6), complex(p, -3e-6)}),
			want: "y(t) = 1 − (1 + t/1ms)·e^(−t/1ms)"},
		{name: "triple split", h: transfer.FromRoots(1/(tau*tau*tau), nil, []complex128{complex(p*(1+4e-6), 0), complex(p*(1-2e-6), 3.4e-6*p), complex(p*(1-2e-6), -3.4e-6*p)}),
			want: "y(t) = 1 − (1 + t/1ms + 0.5·(t/1ms)²)·e^(−t/1ms)"},
		{name: "repeated pair", h: transfer.FromRoots(1, nil, []complex128{rp, cmplx.Conj(rp), rp, cmplx.Conj(rp)}), impulse: true,
			want: "·(t/3.33s)·e^(−t/3.33s)·sin(2π·152mHz·t", contain: true},
		// 1/(sτ)² steps to t²/(2τ²) = (t/(√2·τ))², with no t¹ term (two
		// ideal integrators in cascade; the zero t coefficient once printed
		// as "t/+Inffs").
		{name: "double integrator", h: transfer.FromRoots(1/(tau*tau), nil, []complex128{0, 0}), opt: timeresp.TimeOptions{UntilS: 5e-3}, want: "y(t) = (t/1.41ms)²"},
		{name: "integrator", h: transfer.FromRoots(1/tau, nil, []complex128{0}), opt: timeresp.TimeOptions{UntilS: 5e-3}, want: "y(t) = t/1ms"},
		{name: "unstable", h: transfer.FromRoots(-1/tau, nil, []complex128{1 / tau}), want: "y(t) = 1 − e^(t/1ms)"},
	} {
		var r *timeresp.TimeResponse
		var err error
		if c.impulse {
			r, err = timeresp.Impulse(c.h, c.opt)
		} else {
			r, err = timeresp.Step(c.h, c.opt)
		}
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		got := closedFormText(r)
		ok := got == c.want
		if c.prefix {
			ok = strings.HasPrefix(got, c.want)
		}
		if c.contain {
			ok = strings.Contains(got, c.want)
		}
		if !ok {
			t.Errorf("%s: closed form %q, want %q", c.name, got, c.want)
		}
	}
}
