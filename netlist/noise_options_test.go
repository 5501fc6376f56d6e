package netlist

import (
	"math"
	"testing"
)

// TestNoiseOptions reads the noise model of resistors and opamps: the
// noiseless flag, en=/in= with or without "/rtHz", prefixes and lets, the
// 1/f corners, and zero when absent.
func TestNoiseOptions(t *testing.T) {
	src := `let e = 4nV
V1: voltage source (in, gnd)
R1: resistor (in, a) 1k
R2: resistor (a, gnd) 1k noiseless
R3: resistor (a, out) 10k fixed noiseless
U1: opamp (a, out, out) en=e/rtHz in=0.5pA fen=100Hz fin=1kHz
U2: opamp (a, b, b) en=3nV/rtHz in=2fA
U3: opamp (a, c, c) gbw=1MHz
`
	c, err := Load("n.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		part             string
		noiseless, fixed bool
		en, in, fen, fin float64
	}{
		{"R1", false, false, 0, 0, 0, 0},
		{"R2", true, false, 0, 0, 0, 0},
		{"R3", true, true, 0, 0, 0, 0},
		{"U1", false, false, 4e-9, 0.5e-12, 100, 1000},
		{"U2", false, false, 3e-9, 2e-15, 0, 0},
		{"U3", false, false, 0, 0, 0, 0},
	} {
		p, ok := c.Part(tc.part)
		if !ok {
			t.Fatalf("no part %s", tc.part)
		}
		got := []float64{p.EnVPerRtHz, p.InAPerRtHz, p.FenHz, p.FinHz}
		for i, want := range []float64{tc.en, tc.in, tc.fen, tc.fin} {
			if math.Abs(got[i]-want) > 1e-12*math.Abs(want) {
				t.Errorf("%s noise values %v; want en=%g in=%g fen=%g fin=%g", tc.part, got, tc.en, tc.in, tc.fen, tc.fin)
				break
			}
		}
		if p.Noiseless != tc.noiseless || p.Fixed != tc.fixed {
			t.Errorf("%s noiseless=%v fixed=%v; want %v %v", tc.part, p.Noiseless, p.Fixed, tc.noiseless, tc.fixed)
		}
	}
	// en= from a let follows an override of that let.
	c2, err := Load("n.nodal", []byte(src), Overrides{"e": 8e-9})
	if err != nil {
		t.Fatal(err)
	}
	if got, _ := c2.Part("U1"); got.EnVPerRtHz != 8e-9 {
		t.Errorf("U1 en %g with e=8nV; want 8e-9", got.EnVPerRtHz)
	}
}

// TestNoiseRequirements reads the noise metrics of `require`: a density
// at a frequency with its limit in volts (per root hertz) and an RMS over a
// band written F1..F2.
func TestNoiseRequirements(t *testing.T) {
	src := "V1: voltage source (in, gnd)\nR1: resistor (in, out) 1k\nC1: capacitor (out, gnd) 1n\n" +
		"require noise_rms@20Hz..20kHz below 10uV\nrequire noise@1kHz within 1nV..5nV\n"
	c, err := Load("r.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	if len(c.Requirements) != 2 {
		t.Fatalf("requirements %+v", c.Requirements)
	}
	r0, r1 := c.Requirements[0], c.Requirements[1]
	if r0.Metric != "noise_rms@20Hz..20kHz" || r0.Op != Below || math.Abs(r0.Hi-10e-6) > 1e-20 || r0.Text != "require noise_rms@20Hz..20kHz below 10uV" {
		t.Errorf("band requirement %+v", r0)
	}
	if r1.Metric != "noise@1kHz" || r1.Op != Within || math.Abs(r1.Lo-1e-9) > 1e-24 || math.Abs(r1.Hi-5e-9) > 1e-24 {
		t.Errorf("density requirement %+v", r1)
	}
	m, p, err := ParseMetric(r0.Metric)
	if err != nil || m.Unit != UnitVolt || !m.Noise || p.LoHz != 20 || p.HiHz != 20e3 {
		t.Errorf("ParseMetric(%s) = %+v %+v %v", r0.Metric, m, p, err)
	}
	if u, _ := MetricUnit("noise@1kHz"); u != "V/√Hz" {
		t.Errorf("unit of noise@F %q", u)
	}
}
