package transfer

import (
	"math"
	"testing"
)

// secondOrderLowPass builds H = ω0²/(s² + (ω0/Q)s + ω0²) directly.
func secondOrderLowPass(w0, q float64) *TransferFunction {
	re := -w0 / (2 * q)
	im := w0 * math.Sqrt(1-1/(4*q*q))
	p := complex(re, im)
	return newTransferFunction(w0*w0, nil, []complex128{p, complex(re, -im)}, nil)
}

func TestSecondOrderPeakAndBandwidth(t *testing.T) {
	// Source: common practice — for H = ω0²/(s²+(ω0/Q)s+ω0²) with Q > 1/√2
	// the peak is Q/√(1−1/(4Q²)) at ω0√(1−1/(2Q²)); the −3 dB frequency
	// (re DC) is ω0·√(1−1/(2Q²) + √((1−1/(2Q²))²+1)).
	const w0 = 2 * math.Pi * 1e3
	for _, q := range []float64{0.5, 0.7071067811865476, 1, 2, 10, 100} {
		tf := secondOrderLowPass(w0, q)
		a := 1 - 1/(2*q*q)
		bw, err := tf.F3dB()
		if err != nil {
			t.Fatal(err)
		}
		want := w0 * math.Sqrt(a+math.Sqrt(a*a+1)) / (2 * math.Pi)
		if len(bw.CrossingsHz) != 1 || math.Abs(bw.CrossingsHz[0]/want-1) > 1e-12 {
			t.Errorf("Q=%g: −3 dB %v Hz, want [%g]", q, bw.CrossingsHz, want)
		}
		pk, err := tf.Peak()
		if err != nil {
			t.Fatal(err)
		}
		if q > 1/math.Sqrt2+1e-9 {
			wantG := q / math.Sqrt(1-1/(4*q*q))
			wantW := w0 * math.Sqrt(a)
			if math.Abs(pk.Gain/wantG-1) > 1e-12 || math.Abs(pk.OmegaRad/wantW-1) > 1e-9 {
				t.Errorf("Q=%g: peak %g at %g rad/s, want %g at %g", q, pk.Gain, pk.OmegaRad, wantG, wantW)
			}
			if math.Abs(pk.FreqHz-pk.OmegaRad/(2*math.Pi)) > 1e-9*pk.FreqHz || math.Abs(pk.GainDB-20*math.Log10(wantG)) > 1e-10 {
				t.Errorf("Q=%g: peak units %+v", q, pk)
			}
		} else if pk.OmegaRad != 0 || math.Abs(pk.Gain-1) > 1e-12 {
			t.Errorf("Q=%g: no peaking expected, got %+v", q, pk)
		}
		pp := tf.PolePairs()
		if q == 0.5 {
			if len(pp) != 0 || len(tf.RealPoles()) != 2 {
				t.Errorf("Q=1/2 (critical damping): pairs %+v, want a double real pole", pp)
			}
			continue
		}
		if len(pp) != 1 || math.Abs(pp[0].Q/q-1) > 1e-12 || math.Abs(pp[0].F0Hz-1e3) > 1e-9 ||
			math.Abs(pp[0].Zeta-1/(2*q)) > 1e-12 || math.Abs(pp[0].OmegaRad-w0) > 1e-9 {
			t.Errorf("Q=%g: pairs %+v", q, pp)
		}
	}
}

func TestButterworthBandwidthAndSlopes(t *testing.T) {
	// Source: common practice — a Butterworth low-pass of order n is 3.01 dB
	// down at its cutoff for every n, falls at −20n dB/decade, and its phase
	// at the cutoff is −n·45°.
	const fc = 1e3
	sys := butterworthLadder(5, 2*math.Pi*fc, 600)
	tf := mustExtract(t, sys)
	bw, err := tf.F3dB()
	if err != nil {
		t.Fatal(err)
	}
	if len(bw.CrossingsHz) != 1 || math.Abs(bw.CrossingsHz[0]/fc-1) > 1e-10 || math.Abs(bw.RefGain-0.5) > 1e-12 {
		t.Errorf("bandwidth %+v, want one crossing at %g Hz re 0.5", bw, fc)
	}
	hf := tf.HighFreqAsymptote()
	if hf.Power != -5 || hf.SlopeDBPerDecade != -100 {
		t.Errorf("high-frequency asymptote %+v", hf)
	}
	dc := tf.DCGain()
	if dc.Power != 0 || math.Abs(dc.Gain-0.5) > 1e-12 || math.Abs(dc.GainDB-20*math.Log10(0.5)) > 1e-10 {
		t.Errorf("dc %+v", dc)
	}
	if ph := tf.PhaseDeg(2 * math.Pi * fc); math.Abs(ph+225) > 1e-8 {
		t.Errorf("phase at cutoff %g°, want −225°", ph)
	}
	pk, err := tf.Peak()
	if err != nil || pk.OmegaRad != 0 || math.Abs(pk.Gain-0.5) > 1e-12 {
		t.Errorf("Butterworth peak %+v %v, want 0.5 at DC (maximally flat)", pk, err)
	}
	if rc := tf.RealPoles(); len(rc) != 1 || math.Abs(rc[0].FreqHz/fc-1) > 1e-10 {
		t.Errorf("real poles %+v, want one at %g Hz", rc, fc)
	}
}

func TestBandPassFeatures(t *testing.T) {
	// Source: common practice — second-order band-pass
	// H = (ω0/Q)s/(s²+(ω0/Q)s+ω0²): peak 1 at ω0; −3 dB points
	// ω0(√(1+1/(4Q²)) ∓ 1/(2Q)); +20 dB/dec below, −20 dB/dec above.
	const w0, q = 2 * math.Pi * 2e3, 5.0
	re, im := -w0/(2*q), w0*math.Sqrt(1-1/(4*q*q))
	tf := newTransferFunction(w0/q, []complex128{0}, []complex128{complex(re, im), complex(re, -im)}, nil)
	bw, err := tf.F3dB()
	if err != nil {
		t.Fatal(err)
	}
	lo := w0 * (math.Sqrt(1+1/(4*q*q)) - 1/(2*q)) / (2 * math.Pi)
	hi := w0 * (math.Sqrt(1+1/(4*q*q)) + 1/(2*q)) / (2 * math.Pi)
	if len(bw.CrossingsHz) != 2 || math.Abs(bw.CrossingsHz[0]/lo-1) > 1e-12 || math.Abs(bw.CrossingsHz[1]/hi-1) > 1e-12 {
		t.Errorf("crossings %v, want [%g %g]", bw.CrossingsHz, lo, hi)
	}
	pk, _ := tf.Peak()
	if math.Abs(pk.Gain-1) > 1e-12 || math.Abs(pk.FreqHz/2e3-1) > 1e-9 {
		t.Errorf("peak %+v, want 1 at 2 kHz", pk)
	}
	dc := tf.DCGain()
	if dc.Power != 1 || dc.SlopeDBPerDecade != 20 || math.Abs(dc.Gain-1/(q*w0)) > 1e-15 {
		t.Errorf("dc asymptote %+v, want (1/(Qω0))·s", dc)
	}
	if hf := tf.HighFreqAsymptote(); hf.Power != -1 || math.Abs(hf.Gain-w0/q) > 1e-9 {
		t.Errorf("hf asymptote %+v", hf)
	}
	if ph := tf.PhaseDeg(w0); math.Abs(ph) > 1e-9 {
		t.Errorf("phase at centre %g°, want 0", ph)
	}
}

func TestODECoefficients(t *testing.T) {
	// Source: common practice — the RC low-pass obeys RC·y′ + y = u.
	const r, c = 2.2e3, 100e-9
	sys := newStamper().V("in", "0").R("in", "out", r).C("out", "0", c).Out("out", "0").System()
	ode := mustExtract(t, sys).ODE()
	if len(ode.A) != 2 || ode.A[0] != 1 || math.Abs(ode.A[1]/(r*c)-1) > 1e-13 || len(ode.B) != 1 || math.Abs(ode.B[0]-1) > 1e-13 {
		t.Errorf("ODE %+v, want A=[1 %g] B=[1]", ode, r*c)
	}
}

func TestNotchBandwidth(t *testing.T) {
	// Twin-T notch (Q = 1/4): the −3 dB points re the DC gain 1 are the
	// roots of ω⁴ − 18ω0²ω² + ω0⁴ = 0 from |s²+ω0²|² = ½|s²+4ω0s+ω0²|²,
	// i.e. ω = ω0(√5 ∓ 2) (derived by hand from the closed form).
	const r, c = 16e3, 10e-9
	w0 := 1 / (r * c)
	sys := newStamper().V("in", "0").R("in", "m", r).R("m", "out", r).C("m", "0", 2*c).
		C("in", "k", c).C("k", "out", c).R("k", "0", r/2).Out("out", "0").System()
	tf := mustExtract(t, sys)
	bw, err := tf.F3dB()
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := w0*(math.Sqrt(5)-2)/(2*math.Pi), w0*(math.Sqrt(5)+2)/(2*math.Pi)
	if len(bw.CrossingsHz) != 2 || math.Abs(bw.CrossingsHz[0]/lo-1) > 1e-10 || math.Abs(bw.CrossingsHz[1]/hi-1) > 1e-10 {
		t.Errorf("notch crossings %v, want [%g %g]", bw.CrossingsHz, lo, hi)
	}
	if g := tf.GainDB(w0); !math.IsInf(g, -1) && g > -200 {
		t.Errorf("notch depth %g dB, want −∞", g)
	}
}
