package noise

import (
	"context"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
	"testing"

	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

const roomK = 300.0

func load(t *testing.T, src string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.Load("t.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

func node(n string) mna.Observation { return mna.Observation{Kind: mna.NodeVoltage, Node: n} }

func analyzer(t *testing.T, c *netlist.Circuit, cfg Config) *Analyzer {
	t.Helper()
	if cfg.TempK == 0 {
		cfg.TempK = roomK
	}
	a, err := New(c, cfg)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

func relErr(got, want float64) float64 { return math.Abs(got-want) / math.Abs(want) }

// TestKTOverC: the noise of any resistor filtered by a capacitor C
// integrates to √(kT/C), whatever R (the kT/C result: J. B. Johnson,
// "Thermal agitation of electricity in conductors", and H. Nyquist,
// "Thermal agitation of electric charge in conductors", Physical Review 32,
// 1928). Over a finite band the exact value is
// kT/C·(2/π)·(atan(F2/fc) − atan(F1/fc)).
func TestKTOverC(t *testing.T) {
	const cF = 10e-9
	for _, r := range []float64{100, 10e3, 1e6} {
		c := testcircuit.New(testcircuit.V("V1", "in", "gnd", 1), testcircuit.R("R1", "in", "out", r), testcircuit.C("C1", "out", "gnd", cF))
		a := analyzer(t, c, Config{Out: node("out"), Input: "V1", HasInput: true})
		fc := 1 / (2 * math.Pi * r * cF)
		f1, f2 := fc*1e-4, fc*1e5
		got, err := a.Integrate(context.Background(), f1, f2)
		if err != nil {
			t.Fatal(err)
		}
		kTC := BoltzmannJPerK * roomK / cF
		exact := math.Sqrt(kTC * 2 / math.Pi * (math.Atan(f2/fc) - math.Atan(f1/fc)))
		if e := relErr(got.OutRMS, exact); e > 1e-5 {
			t.Errorf("R = %g: out_rms %.8g V; want %.8g (rel. error %.2g)", r, got.OutRMS, exact, e)
		}
		if e := relErr(got.OutRMS, math.Sqrt(kTC)); e > 1e-4 {
			t.Errorf("R = %g: out_rms %.6g V; want √(kT/C) = %.6g", r, got.OutRMS, math.Sqrt(kTC))
		}
		if got.RelErrorEstimate > 1e-3 {
			t.Errorf("R = %g: error estimate %g above 0.1 %%", r, got.RelErrorEstimate)
		}
		if len(got.Contributions) != 1 || got.Contributions[0].Source != "R1" || relErr(got.Contributions[0].Fraction, 1) > 1e-12 {
			t.Errorf("R = %g: contributions %+v; want R1 alone", r, got.Contributions)
		}
	}
}

// TestDividerDensity: two resistors from a shorted source form the
// Thévenin resistance R1∥R2, whose density is √(4kT·R1R2/(R1+R2)) at
// every frequency (Thévenin; common practice). A noiseless resistor adds
// nothing; the temperature enters as T.
func TestDividerDensity(t *testing.T) {
	for _, tc := range []struct {
		r1, r2, tempK float64
		quiet         bool
	}{{1e3, 1e3, 300, false}, {10e3, 2.2e3, 358.15, false}, {47e3, 4.7e3, 300, true}} {
		src := "V1: voltage source (in, gnd)\nR1: resistor (in, out) " + strconv.FormatFloat(tc.r1, 'g', -1, 64) + "\nR2: resistor (out, gnd) " + strconv.FormatFloat(tc.r2, 'g', -1, 64)
		if tc.quiet {
			src += " noiseless"
		}
		a := analyzer(t, load(t, src+"\n"), Config{Out: node("out"), TempK: tc.tempK})
		want := math.Sqrt(4 * BoltzmannJPerK * tc.tempK * tc.r1 * tc.r2 / (tc.r1 + tc.r2))
		if tc.quiet { // R1's current noise 4kT/R1 into R1∥R2
			want = math.Sqrt(4*BoltzmannJPerK*tc.tempK/tc.r1) * tc.r1 * tc.r2 / (tc.r1 + tc.r2)
		}
		sp, err := a.Spectrum(context.Background(), []float64{1, 1e3, 1e6})
		if err != nil {
			t.Fatal(err)
		}
		for i, d := range sp.OutDensity {
			if e := relErr(d, want); e > 1e-12 {
				t.Errorf("%+v at %g Hz: %.8g V/√Hz; want %.8g", tc, sp.FreqHz[i], d, want)
			}
		}
		if sp.InDensity != nil {
			t.Errorf("input-referred density without an input")
		}
	}
}

// TestENBWFirstOrder: the equivalent noise bandwidth of a first-order
// low-pass is (π/2)·f3dB (common practice); over a finite band it is
// fc·(atan(F2/fc) − atan(F1/fc)).
func TestENBWFirstOrder(t *testing.T) {
	c := load(t, "V1: voltage source (in, gnd)\nR1: resistor (in, out) 1.5k\nC1: capacitor (out, gnd) 22n\n")
	a := analyzer(t, c, Config{Out: node("out"), HasInput: true})
	fc := 1 / (2 * math.Pi * 1.5e3 * 22e-9)
	got, err := a.Integrate(context.Background(), fc*1e-6, fc*1e6)
	if err != nil {
		t.Fatal(err)
	}
	if !got.ENBWOfGain {
		t.Fatalf("ENBW not of |H|² with an input")
	}
	if e := relErr(got.ENBWHz, math.Pi/2*fc); e > 1e-5 {
		t.Errorf("ENBW %.8g Hz; want (π/2)·%.6g = %.8g (rel. error %.2g)", got.ENBWHz, fc, math.Pi/2*fc, e)
	}
	// Input-referred: the output density over |H| is R1's flat density.
	if want := math.Sqrt(4 * BoltzmannJPerK * roomK * 1.5e3 * (got.ToHz - got.FromHz)); relErr(got.InRMS, want) > 1e-5 {
		t.Errorf("in_rms %.8g; want √(4kTR·B) = %.8g", got.InRMS, want)
	}
}

// TestNonInvertingAmplifier: an ideal opamp with en, in, a source
// resistance Rs, gain resistors Rg (− to gnd) and Rf (out to −). From
// memory of op-amp application notes, with G = 1 + Rf/Rg the noise gain:
//
//	e_out² = (en·G)² + (in·Rs·G)² + (in·Rf)² + 4kT·Rs·G² + 4kT·Rg·(Rf/Rg)² + 4kT·Rf
//
// with en² and in² scaled by (1 + fc/f) below their corners.
func TestNonInvertingAmplifier(t *testing.T) {
	const rs, rg, rf, en, in, fen, fin = 2.2e3, 1e3, 9.1e3, 4e-9, 1.5e-12, 100.0, 1e3
	c := load(t, `V1: voltage source (src, gnd)
Rs: resistor (src, p) 2.2k
Rg: resistor (m, gnd) 1k
Rf: resistor (out, m) 9.1k
U1: opamp (p, m, out) en=4nV/rtHz in=1.5pA fen=100Hz fin=1kHz
`)
	a := analyzer(t, c, Config{Out: node("out"), HasInput: true})
	g := 1 + rf/rg
	kT4 := 4 * BoltzmannJPerK * roomK
	for _, f := range []float64{10, 1e3, 100e3} {
		en2, in2 := en*en*(1+fen/f), in*in*(1+fin/f)
		want := map[string]float64{
			"U1.en": en2 * g * g, "U1.in+": in2 * rs * rs * g * g, "U1.in-": in2 * rf * rf,
			"Rs": kT4 * rs * g * g, "Rg": kT4 * rg * (rf / rg) * (rf / rg), "Rf": kT4 * rf,
		}
		contrib := make([]float64, len(a.Sources))
		psd, gain, err := a.At(f, contrib)
		if err != nil {
			t.Fatal(err)
		}
		total := 0.0
		for i, s := range a.Sources {
			if e := relErr(contrib[i], want[s.Name]); e > 1e-9 {
				t.Errorf("%g Hz: %s gives %.6g V²/Hz; want %.6g", f, s.Name, contrib[i], want[s.Name])
			}
			total += want[s.Name]
		}
		if len(a.Sources) != len(want) {
			t.Errorf("%d sources; want %d", len(a.Sources), len(want))
		}
		if relErr(psd, total) > 1e-9 || relErr(gain, g) > 1e-12 {
			t.Errorf("%g Hz: total %.6g, |H| %.6g; want %.6g, %.6g", f, psd, gain, total, g)
		}
	}
}

// TestAdjointEqualsForward checks every source's transfer against a
// forward solve of the circuit with that source made explicit: an
// a current source in parallel for a resistor's thermal current, a voltage source in
// series for an opamp's en, a current source into the input for in. The
// circuit has finite-gain opamps, capacitors, an inductor, a resistor
// sensed by a cccs (so it has a branch current) and outputs that are a
// node voltage, a difference and the current through a noisy resistor.
func TestAdjointEqualsForward(t *testing.T) {
	T := testcircuit.New
	u1 := testcircuit.OpAmp("U1", "p", "m", "o1", 1e5, 1e6, 50)
	u1.EnVPerRtHz, u1.InAPerRtHz = 5e-9, 1e-12
	u2 := testcircuit.OpAmp("U2", "gnd", "m2", "o2", 2e5, 3e6, 0)
	u2.EnVPerRtHz, u2.InAPerRtHz, u2.FenHz = 8e-9, 2e-13, 50
	parts := []netlist.Part{
		testcircuit.V("V1", "in", "gnd", 1),
		testcircuit.R("R1", "in", "p", 1e3),
		testcircuit.C("C1", "p", "gnd", 1e-9),
		testcircuit.R("R2", "m", "gnd", 2.2e3),
		testcircuit.R("R3", "o1", "m", 10e3),
		testcircuit.C("C2", "o1", "m", 100e-12),
		u1,
		testcircuit.R("R4", "o1", "m2", 4.7e3),
		testcircuit.R("R5", "o2", "m2", 22e3),
		testcircuit.L("L1", "o2", "x", 1e-3),
		testcircuit.R("R6", "x", "gnd", 330),
		testcircuit.CCCS("F1", "x", "gnd", 0.1, "R6"),
		u2,
	}
	base := T(parts...)
	for _, ob := range []mna.Observation{node("o2"), {Kind: mna.NodeVoltage, Node: "o1", Ref: "x"},
		{Kind: mna.PartCurrent, Part: "R5"}, {Kind: mna.PartCurrent, Part: "R6"}} {
		a := analyzer(t, base, Config{Out: ob})
		if n := len(a.Sources); n != 6+3+2 { // U2's + input is on Ground: no U2.in+
			t.Fatalf("%d sources; want 11", n)
		}
		contrib := make([]float64, len(a.Sources))
		for _, f := range []float64{20, 3e3, 400e3} {
			if _, _, err := a.At(f, contrib); err != nil {
				t.Fatal(err)
			}
			s := complex(0, 2*math.Pi*f)
			for i, src := range a.Sources {
				c, drive := forwardCircuit(parts, src)
				sys, err := mna.Build(c, mna.Input{Source: drive}, ob)
				if err != nil {
					t.Fatal(err)
				}
				h, _, err := mna.NewSweeper(sys).Eval(s)
				if err != nil {
					t.Fatal(err)
				}
				want := cmplx.Abs(h) * cmplx.Abs(h) * src.PSD(f)
				if src.Kind == Thermal { // series voltage 4kTR
					want = cmplx.Abs(h) * cmplx.Abs(h) * 4 * BoltzmannJPerK * roomK * partValue(parts, src.Part)
				}
				if e := math.Abs(contrib[i]-want) / math.Max(want, 1e-30); e > 1e-8 {
					t.Errorf("%v at %g Hz: %s adjoint %.8g, forward %.8g", ob, f, src.Name, contrib[i], want)
				}
			}
		}
	}
}

func partValue(parts []netlist.Part, name string) float64 {
	for _, p := range parts {
		if p.Name == name {
			return p.Value
		}
	}
	return math.NaN()
}

// forwardCircuit returns the circuit with src made an explicit source of
// unit amplitude, and that source's name; every other source is zeroed by
// the drive. A resistor gets a series voltage source (the Thévenin form of its
// thermal noise, so that the current through it is its terminal current).
func forwardCircuit(parts []netlist.Part, src Source) (*netlist.Circuit, string) {
	var out []netlist.Part
	for _, p := range parts {
		p.Nodes = append([]string(nil), p.Nodes...)
		if p.Name == src.Part {
			switch src.Kind {
			case Thermal:
				out = append(out, testcircuit.V("Noise", "noise_mid", p.Nodes[1], 1))
				p.Nodes[1] = "noise_mid"
			case InputVoltage:
				out = append(out, testcircuit.V("Noise", "noise_mid", p.Nodes[0], 1))
				p.Nodes[0] = "noise_mid"
			case InputCurrent:
				in := p.Nodes[0]
				if strings.HasSuffix(src.Name, "-") {
					in = p.Nodes[1]
				}
				out = append(out, testcircuit.I("Noise", in, "gnd", 1))
			}
		}
		out = append(out, p)
	}
	return testcircuit.New(out...), "Noise"
}

// TestSourcesAndErrors: capacitors, inductors, sources and controlled
// sources are noiseless; a bad temperature or frequency is an error.
func TestSourcesAndErrors(t *testing.T) {
	c := load(t, "I1: current source (a, gnd)\nC1: capacitor (a, gnd) 1n\nL1: inductor (a, b) 1m\nG1: current source (b, gnd) 1mS*v(a)\nR1: resistor (b, gnd) 1k noiseless\nR2: resistor (a, gnd) 1M\n")
	a := analyzer(t, c, Config{Out: node("b"), HasInput: true})
	if len(a.Sources) != 1 || a.Sources[0].Name != "R2" {
		t.Errorf("sources %+v; want R2 alone", a.Sources)
	}
	if a.InUnit != "A" || a.OutUnit != "V" || a.Input != "I1" || a.Output != "v(b)" {
		t.Errorf("units %q/%q, names %q %q", a.OutUnit, a.InUnit, a.Input, a.Output)
	}
	if _, err := New(c, Config{Out: node("b"), TempK: -3}); err == nil {
		t.Errorf("negative temperature accepted")
	}
	if _, _, err := a.At(0, make([]float64, 1)); err == nil {
		t.Errorf("0 Hz accepted")
	}
	if _, err := a.Integrate(context.Background(), 10, 10); err == nil {
		t.Errorf("empty band accepted")
	}
	if _, err := New(c, Config{Out: node("nowhere"), TempK: 300}); err == nil || !strings.Contains(err.Error(), "nowhere") {
		t.Errorf("unknown node: %v", err)
	}
}

// TestEquipartitionResonant: the mean-square voltage on the capacitor of
// a series R-L-C loop is kT/C whatever R and L (equipartition, ½C⟨v²⟩ =
// ½kT; Nyquist 1928). Up to Q = 10⁵ the density is a peak far narrower
// than the start grid, and the band is chosen so that f0 is not one of its
// points: the adaptive integration must find and resolve it.
func TestEquipartitionResonant(t *testing.T) {
	const lH, cF = 10e-3, 100e-9
	f0 := 1 / (2 * math.Pi * math.Sqrt(lH*cF))
	for _, q := range []float64{0.5, 100, 1000, 10000, 1e5} {
		r := math.Sqrt(lH/cF) / q
		c := testcircuit.New(testcircuit.R("R1", "a", "gnd", r), testcircuit.L("L1", "a", "b", lH), testcircuit.C("C1", "b", "gnd", cF))
		a := analyzer(t, c, Config{Out: node("b")})
		got, err := a.Integrate(context.Background(), f0*1.3e-4, f0*1e4)
		if err != nil {
			t.Fatal(err)
		}
		want := math.Sqrt(BoltzmannJPerK * roomK / cF)
		if e := relErr(got.OutRMS, want); e > 2e-4 {
			t.Errorf("Q = %g: out_rms %.7g V; want √(kT/C) = %.7g (rel. error %.2g, %d evaluations)", q, got.OutRMS, want, e, got.Evaluations)
		}
		if got.RelErrorEstimate > 1e-3 {
			t.Errorf("Q = %g: error estimate %.2g above 0.1 %%", q, got.RelErrorEstimate)
		}
	}
}
