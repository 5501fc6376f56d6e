package mna_test

import (
	"math"
	"math/cmplx"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

const gnd = netlist.Ground

// jw returns s = j·2π·f.
func jw(fHz float64) complex128 { return complex(0, 2*math.Pi*fHz) }

// build is Build with a node-voltage output, failing the test on error.
func build(t testing.TB, c *netlist.Circuit, in mna.Input, node, ref string) *mna.System {
	t.Helper()
	sys, err := mna.Build(c, in, mna.Output{Kind: mna.NodeVoltage, Node: node, Ref: ref})
	if err != nil {
		t.Fatalf("Build: %v", err)
	}
	return sys
}

// hAt returns H(j2πf).
func hAt(t testing.TB, sys *mna.System, fHz float64) complex128 {
	t.Helper()
	h, err := sys.H(jw(fHz))
	if err != nil {
		t.Fatalf("H(%g Hz): %v", fHz, err)
	}
	return h
}

func near(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(math.Abs(want), 1e-300)
}

func nearC(got, want complex128, rel float64) bool {
	return cmplx.Abs(got-want) <= rel*math.Max(cmplx.Abs(want), 1e-300)
}

func db(h complex128) float64    { return 20 * math.Log10(cmplx.Abs(h)) }
func phDeg(h complex128) float64 { return cmplx.Phase(h) * 180 / math.Pi }

func rcLowPass() (*netlist.Circuit, float64) {
	const r, c = 1e3, 100e-9
	return testcircuit.New(
		testcircuit.V("Vs", "in", gnd, 1),
		testcircuit.R("R1", "in", "out", r),
		testcircuit.C("C1", "out", gnd, c),
	), 1 / (2 * math.Pi * r * c)
}

// RC low-pass, common practice: −3.0103 dB and −45° at fc = 1/(2πRC);
// −20 dB/decade well above; one decade above fc |H| = 1/√101 and
// −84.29° (atan 10 = 84.2894°).
func TestRCLowPass(t *testing.T) {
	c, fc := rcLowPass()
	sys := build(t, c, mna.Input{}, "out", "")
	h := hAt(t, sys, fc)
	if !near(db(h), -3.0103, 1e-5) || !near(phDeg(h), -45, 1e-12) {
		t.Errorf("at fc: %.6f dB %.6f°, want −3.0103 dB −45°", db(h), phDeg(h))
	}
	h10 := hAt(t, sys, 10*fc)
	if !near(cmplx.Abs(h10), 1/math.Sqrt(101), 1e-12) || math.Abs(phDeg(h10)+84.29) > 0.005 {
		t.Errorf("at 10 fc: |H| %.6g %.4f°, want %.6g −84.29°", cmplx.Abs(h10), phDeg(h10), 1/math.Sqrt(101))
	}
	slope := db(hAt(t, sys, 1e4*fc)) - db(hAt(t, sys, 1e3*fc))
	if math.Abs(slope+20) > 1e-4 {
		t.Errorf("slope far above fc: %.6f dB/decade, want −20", slope)
	}
}

// Series RLC driven by a voltage source, output across R: a band-pass with
// |H| = 1 at f0 = 1/(2π√(LC)) and half-power points
// f0·(√(1 + 1/(4Q²)) ∓ 1/(2Q)), Q = √(L/C)/R (Nilsson & Riedel, Electric
// Circuits, series resonance).
func TestSeriesRLC(t *testing.T) {
	const r, l, cv = 50.0, 10e-3, 1e-6
	c := testcircuit.New(
		testcircuit.V("Vs", "in", gnd, 1),
		testcircuit.L("L1", "in", "a", l),
		testcircuit.C("C1", "a", "out", cv),
		testcircuit.R("R1", "out", gnd, r),
	)
	sys := build(t, c, mna.Input{}, "out", "")
	f0 := 1 / (2 * math.Pi * math.Sqrt(l*cv))
	q := math.Sqrt(l/cv) / r
	if h := hAt(t, sys, f0); !nearC(h, 1, 1e-10) {
		t.Errorf("H(f0) = %v, want 1", h)
	}
	k := math.Sqrt(1 + 1/(4*q*q))
	for _, f := range []float64{f0 * (k - 1/(2*q)), f0 * (k + 1/(2*q))} {
		if m := cmplx.Abs(hAt(t, sys, f)); !near(m, 1/math.Sqrt2, 1e-10) {
			t.Errorf("|H(%g Hz)| = %.12f, want 1/√2 (Q = %g)", f, m, q)
		}
	}
}

// Doubly terminated Butterworth ladder with g_k = 2 sin((2k−1)π/2n):
// |H| = ½/√(1 + (f/fc)^2n) (Matthaei, Young & Jones 1964).
func TestButterworthLadder(t *testing.T) {
	for _, n := range []int{3, 5} {
		const fc = 1e3
		sys := build(t, testcircuit.Ladder(n, fc, 600), mna.Input{}, "out", "")
		for _, f := range []float64{1, 100, 500, 1000, 2000, 5000, 1e5} {
			want := 0.5 / math.Sqrt(1+math.Pow(f/fc, float64(2*n)))
			if got := cmplx.Abs(hAt(t, sys, f)); !near(got, want, 1e-9) {
				t.Errorf("n=%d f=%g: |H| = %.12g, want %.12g", n, f, got, want)
			}
		}
	}
}

// Wien network (series RC then parallel RC): H(f0) = 1/3 at 0°,
// f0 = 1/(2πRC) (common practice).
func TestWien(t *testing.T) {
	const r, cv = 10e3, 10e-9
	sys := build(t, testcircuit.Wien(r, cv), mna.Input{}, "out", "")
	if h := hAt(t, sys, 1/(2*math.Pi*r*cv)); !nearC(h, 1.0/3, 1e-12) {
		t.Errorf("H(f0) = %v, want 1/3 at 0°", h)
	}
}

// Unloaded symmetric twin-T notch (R, R, 2C | C, C, R/2):
// H(s) = (s² + ω0²)/(s² + 4ω0·s + ω0²), ω0 = 1/(RC): a zero at f0
// (common practice; the denominator from memory).
func TestTwinT(t *testing.T) {
	const r, cv = 10e3, 10e-9
	c := testcircuit.New(
		testcircuit.V("Vs", "in", gnd, 1),
		testcircuit.R("R1", "in", "m", r),
		testcircuit.R("R2", "m", "out", r),
		testcircuit.C("C3", "m", gnd, 2*cv),
		testcircuit.C("C1", "in", "p", cv),
		testcircuit.C("C2", "p", "out", cv),
		testcircuit.R("R3", "p", gnd, r/2),
	)
	sys := build(t, c, mna.Input{}, "out", "")
	w0 := 1 / (r * cv)
	f0 := w0 / (2 * math.Pi)
	if m := cmplx.Abs(hAt(t, sys, f0)); m > 1e-12 {
		t.Errorf("|H(f0)| = %g, want 0", m)
	}
	for _, f := range []float64{f0 / 10, f0 / 2, 2 * f0, 10 * f0} {
		s := jw(f)
		want := (s*s + complex(w0*w0, 0)) / (s*s + complex(4*w0, 0)*s + complex(w0*w0, 0))
		if h := hAt(t, sys, f); !nearC(h, want, 1e-10) {
			t.Errorf("H(%g Hz) = %v, want %v", f, h, want)
		}
	}
}

// Op-amp amplifiers against the closed-loop formula A/(1 + Aβ),
// β = R1/(R1 + Rf), with A = ∞, A0, ωt/s and A0/(1 + s·A0/ωt); inverting
// gain −(Rf/(R1 + Rf))·A/(1 + Aβ) (Sedra & Smith, Microelectronic
// Circuits).
func TestOpAmpAmplifiers(t *testing.T) {
	const r1, rf = 1e3, 9e3
	const a0, gbw = 1e5, 1e6
	wt := 2 * math.Pi * gbw
	models := []struct {
		name    string
		a0, gbw float64
		gain    func(s complex128) complex128 // open-loop A(s); nil = ∞
	}{
		{"ideal", 0, 0, nil},
		{"a0", a0, 0, func(complex128) complex128 { return a0 }},
		{"gbw", 0, gbw, func(s complex128) complex128 { return complex(wt, 0) / s }},
		{"a0+gbw", a0, gbw, func(s complex128) complex128 { return a0 / (1 + s*complex(a0/wt, 0)) }},
	}
	beta := r1 / (r1 + rf)
	for _, m := range models {
		for _, inverting := range []bool{false, true} {
			var c *netlist.Circuit
			if inverting {
				c = testcircuit.New(testcircuit.V("Vs", "in", gnd, 1),
					testcircuit.R("R1", "in", "m", r1), testcircuit.R("Rf", "m", "out", rf),
					testcircuit.OpAmp("U1", gnd, "m", "out", m.a0, m.gbw, 0))
			} else {
				c = testcircuit.New(testcircuit.V("Vs", "in", gnd, 1),
					testcircuit.R("R1", "m", gnd, r1), testcircuit.R("Rf", "m", "out", rf),
					testcircuit.OpAmp("U1", "in", "m", "out", m.a0, m.gbw, 0))
			}
			sys := build(t, c, mna.Input{}, "out", "")
			for _, f := range []float64{10, 1e3, 1e5, 1e6} {
				s := jw(f)
				var want complex128 = complex(1/beta, 0)
				if m.gain != nil {
					a := m.gain(s)
					want = a / (1 + a*complex(beta, 0))
				}
				if inverting {
					want *= complex(-rf/(r1+rf), 0)
				}
				if h := hAt(t, sys, f); !nearC(h, want, 1e-10) {
					t.Errorf("%s inverting=%v f=%g: H = %v, want %v", m.name, inverting, f, h, want)
				}
			}
		}
	}
}

// Output resistance: a follower with rout Ro into a load RL is A/(1 + Aβ)
// with the loaded gain A·RL/(RL + Ro) and β = 1 (Sedra & Smith).
func TestOpAmpRout(t *testing.T) {
	const a0, ro, rl = 1e3, 100.0, 1e3
	c := testcircuit.New(testcircuit.V("Vs", "in", gnd, 1),
		testcircuit.OpAmp("U1", "in", "out", "out", a0, 0, ro),
		testcircuit.R("RL", "out", gnd, rl))
	sys := build(t, c, mna.Input{}, "out", "")
	a := a0 * rl / (rl + ro)
	if h := hAt(t, sys, 1e3); !nearC(h, complex(a/(1+a), 0), 1e-12) {
		t.Errorf("H = %v, want %v", h, a/(1+a))
	}
}

// Coupled inductors driven at the primary, resistive load R at the
// secondary: v2/v1 = (M/L1)·R/(R + sL2(1 − K²)), M = K√(L1L2), so K = 1
// gives the ideal-transformer ratio √(L2/L1) (common practice).
func TestCoupledInductors(t *testing.T) {
	const l1, l2, rl = 1e-3, 4e-3, 50.0
	for _, k := range []float64{1, 0.999, 0.5, -0.8} {
		c := testcircuit.New(testcircuit.V("Vs", "p", gnd, 1),
			testcircuit.L("L1", "p", gnd, l1), testcircuit.L("L2", "sec", gnd, l2),
			testcircuit.K("Link1", "L1", "L2", k), testcircuit.R("RL", "sec", gnd, rl))
		sys := build(t, c, mna.Input{}, "sec", "")
		m := k * math.Sqrt(l1*l2)
		for _, f := range []float64{10, 1e3, 1e5} {
			s := jw(f)
			want := complex(m/l1*rl, 0) / (complex(rl, 0) + s*complex(l2*(1-k*k), 0))
			if h := hAt(t, sys, f); !nearC(h, want, 1e-9) {
				t.Errorf("K=%g f=%g: H = %v, want %v", k, f, h, want)
			}
		}
		if k == 1 {
			if h := hAt(t, sys, 1e3); !nearC(h, complex(math.Sqrt(l2/l1), 0), 1e-12) {
				t.Errorf("K=1: ratio %v, want √(L2/L1) = %g", h, math.Sqrt(l2/l1))
			}
		}
	}
}

// Every controlled source and the sign conventions, each against Ohm's
// law applied to each branch (common practice). Vs = 1 V at "in", R1 = 2 kΩ from
// in to gnd carries i(R1) = 0.5 mA, R2 = 1 kΩ loads every output.
func TestControlledSources(t *testing.T) {
	const r1, r2 = 2e3, 1e3
	base := []netlist.Part{testcircuit.V("Vs", "in", gnd, 1), testcircuit.R("R1", "in", gnd, r1)}
	cases := []struct {
		name string
		part netlist.Part
		want float64 // v(out)
	}{
		{"voltage gain", testcircuit.VCVS("Gain1", "out", gnd, 5, "in", gnd), 5},
		{"voltage gain with v(gnd, in)", testcircuit.VCVS("Gain1", "out", gnd, 5, gnd, "in"), -5},
		// gm·v(in) is pushed into out (language: "pushes GM·(v_c − v_d) into a").
		{"transconductance", testcircuit.VCCS("Gm1", "out", gnd, 1e-3, "in", gnd), 1e-3 * r2},
		{"transresistance of a resistor", testcircuit.CCVS("Tz1", "out", gnd, 4e3, "R1"), 4e3 / r1},
		// i(Vs) enters the + terminal from the circuit: −1/R1.
		{"transresistance of a voltage source", testcircuit.CCVS("Tz1", "out", gnd, 4e3, "Vs"), -4e3 / r1},
		{"current gain", testcircuit.CCCS("Mirror1", "out", gnd, 10, "R1"), 10 * r2 / r1},
	}
	for _, tc := range cases {
		parts := append(append([]netlist.Part{}, base...), tc.part, testcircuit.R("R2", "out", gnd, r2))
		sys := build(t, testcircuit.New(parts...), mna.Input{}, "out", "")
		if h := hAt(t, sys, 1e3); !nearC(h, complex(tc.want, 0), 1e-12) {
			t.Errorf("%s: v(out) = %v, want %g", tc.name, h, tc.want)
		}
	}
}

// Part currents and the current-source direction (language convention: current
// through a part flows into its first terminal and out of its second; an
// current source pushes its value into the node on its first terminal, so the
// current through it is −J), common practice.
func TestPartCurrents(t *testing.T) {
	const r, cv, f = 1e3, 1e-6, 100.0
	rc := func() *netlist.Circuit {
		return testcircuit.New(testcircuit.V("Vs", "in", gnd, 2),
			testcircuit.R("R1", "in", "out", r), testcircuit.C("C1", "out", gnd, cv))
	}
	s := jw(f)
	iLoop := 1 / (complex(r, 0) + 1/(s*complex(cv, 0)))
	isrc := testcircuit.New(testcircuit.I("I1", "a", gnd, 1), testcircuit.R("R1", "a", gnd, r))
	cases := []struct {
		name string
		c    *netlist.Circuit
		part string
		want complex128
	}{
		{"resistor", rc(), "R1", iLoop},
		{"capacitor", rc(), "C1", iLoop},
		{"voltage source delivers", rc(), "Vs", -iLoop},
		{"current source", isrc, "I1", -1},
		{"resistor fed by a current source", isrc, "R1", 1},
	}
	for _, tc := range cases {
		sys, err := mna.Build(tc.c, mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: tc.part})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if h := hAt(t, sys, f); !nearC(h, tc.want, 1e-12) {
			t.Errorf("%s: i = %v, want %v", tc.name, h, tc.want)
		}
	}
	sys := build(t, isrc, mna.Input{}, "a", "")
	if h := hAt(t, sys, f); !nearC(h, r, 1e-12) {
		t.Errorf("current source into R: v(a) = %v, want +R = %g", h, r)
	}
	// Output impedance with the source shorted: Z = R/(1 + sRC).
	if z := hAt(t, build(t, rc(), mna.Input{Inject: "out"}, "out", ""), f); !nearC(z, complex(r, 0)/(1+s*complex(r*cv, 0)), 1e-12) {
		t.Errorf("output impedance %v, want R/(1 + sRC)", z)
	}
	// Inverting amplifier (Sedra & Smith): v(in)/R1 flows through R1 and
	// Rf into the output node and the op-amp sinks it, so the current it
	// pushes into its output is i(U1) = −1/R1 per volt of input.
	inv := testcircuit.New(testcircuit.V("Vs", "in", gnd, 1), testcircuit.R("R1", "in", "m", 1e3),
		testcircuit.R("Rf", "m", "out", 1e4), testcircuit.OpAmp("U1", gnd, "m", "out", 0, 0, 0))
	if sys, err := mna.Build(inv, mna.Input{}, mna.Output{Kind: mna.PartCurrent, Part: "U1"}); err != nil {
		t.Error(err)
	} else if i := hAt(t, sys, f); !nearC(i, -1e-3, 1e-12) {
		t.Errorf("i(U1) = %v, want −1 mA", i)
	}
	if sys := build(t, rc(), mna.Input{}, "out", ""); sys.SourceAmplitude != 2 {
		t.Errorf("SourceAmplitude = %v, want 2", sys.SourceAmplitude)
	}
}

// Impedance scaling: multiplying every R and L by k and dividing every C
// by k leaves voltage ratios unchanged (common practice).
func TestImpedanceScaling(t *testing.T) {
	const k = 1e3
	c := testcircuit.Ladder(5, 1e3, 50)
	scaled := c.Clone()
	for i := range scaled.Parts {
		switch p := &scaled.Parts[i]; p.Kind {
		case netlist.Resistor, netlist.Inductor:
			p.Value *= k
		case netlist.Capacitor:
			p.Value /= k
		}
	}
	a := build(t, c, mna.Input{}, "out", "")
	b := build(t, scaled, mna.Input{}, "out", "")
	for _, f := range []float64{10, 700, 1e3, 3e3, 1e5} {
		if ha, hb := hAt(t, a, f), hAt(t, b, f); !nearC(hb, ha, 1e-10) {
			t.Errorf("f=%g: scaled %v, original %v", f, hb, ha)
		}
	}
}

// Reciprocity of passive RLC networks, coupled inductors included: the
// transfer impedance z21 = v2/i1 equals z12 = v1/i2 (common practice;
// reciprocity theorem).
func TestReciprocity(t *testing.T) {
	c := testcircuit.New(
		testcircuit.R("R1", "a", gnd, 1e3), testcircuit.C("C1", "a", "b", 47e-9),
		testcircuit.L("L1", "b", "c", 10e-3), testcircuit.R("R2", "c", gnd, 220),
		testcircuit.C("C2", "b", gnd, 10e-9), testcircuit.L("L2", "a", "d", 3e-3),
		testcircuit.R("R3", "d", "c", 470), testcircuit.K("Link1", "L1", "L2", 0.4),
	)
	z21 := build(t, c, mna.Input{Inject: "a"}, "d", "")
	z12 := build(t, c, mna.Input{Inject: "d"}, "a", "")
	for _, f := range []float64{100, 5e3, 2e4, 1e6} {
		h21, h12 := hAt(t, z21, f), hAt(t, z12, f)
		if !nearC(h21, h12, 1e-10) || cmplx.Abs(h21) == 0 {
			t.Errorf("f=%g: z21 = %v, z12 = %v", f, h21, h12)
		}
	}
}
