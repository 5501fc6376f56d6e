package variation

import (
	"math"
	"strings"
	"testing"

	"nodal/mna"
)

func tolRel(got, want, rel float64) bool { return math.Abs(got-want) <= rel*math.Abs(want) }

func TestMetricEvaluatorClosedForms(t *testing.T) {
	const fc = 1 / (2 * math.Pi * 10e3 * 15.9155e-9)
	// Sallen-Key (see tolSallenKey): ω0 = 1/√(R1R2C1C2),
	// Q = √(R1R2C1C2)/(C2(R1+R2)) (unity-gain Sallen-Key low-pass; Sallen &
	// Key, IRE Trans. Circuit Theory, 1955; from memory); a second-order low-pass with Q > 1/√2
	// peaks at ω0·√(1 − 1/(2Q²)) with |H| = Q/√(1 − 1/(4Q²)) (closed form of
	// |1/(1 − u² + ju/Q)|, maximised over u = ω/ω0; Zverev, Handbook of
	// Filter Synthesis; from memory).
	t0 := math.Sqrt(10e3 * 22e3 * 20e-9 * 5e-9)
	q := t0 / (5e-9 * 32e3)
	f0 := 1 / (2 * math.Pi * t0)
	// Series RLC band-pass across R (R 100 Ω, L 10 mH, C 100 nF):
	// ω0 = 1/√(LC), Q = √(L/C)/R, lower −3 dB edge ω0(√(1 + 1/(4Q²)) − 1/(2Q))
	// (series resonance; Nilsson & Riedel, Electric Circuits; from memory).
	w0 := 1 / math.Sqrt(10e-3*100e-9)
	qb := math.Sqrt(10e-3/100e-9) / 100
	fLow := w0 * (math.Sqrt(1+1/(4*qb*qb)) - 1/(2*qb)) / (2 * math.Pi)
	cases := []struct {
		name, src string
		metrics   []string
		want      []float64
	}{
		{"rc", tolRC, []string{"gain@1kHz", "phase@1kHz", "dc", "f3db"}, []float64{
			-10 * math.Log10(1+math.Pow(1000/fc, 2)), -math.Atan(1000/fc) * 180 / math.Pi, 0, fc}},
		{"sallen-key", tolSallenKey, []string{"f0", "q", "peak", "fpeak"}, []float64{
			f0, q, 20 * math.Log10(q/math.Sqrt(1-1/(4*q*q))), f0 * math.Sqrt(1-1/(2*q*q))}},
		{"high-pass", `
Vin: voltage source (in, gnd) 1
C1: capacitor (in, out) 15.9155nF
R1: resistor (out, gnd) 10k
`, []string{"f3db", "gain@10kHz"}, []float64{fc, -10 * math.Log10(1+math.Pow(fc/10e3, 2))}},
		{"band-pass", `
Vin: voltage source (in, gnd) 1
L1: inductor (in, a) 10mH
C1: capacitor (a, out) 100nF
R1: resistor (out, gnd) 100
`, []string{"f3db", "fpeak", "peak", "f0", "q"}, []float64{fLow, w0 / (2 * math.Pi), 0, w0 / (2 * math.Pi), qb}},
	}
	for _, tc := range cases {
		c := tolLoad(t, tc.src)
		ev := tolEvaluator(t, c, "out", tc.metrics...)
		got, err := ev.Eval(c)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		for i, m := range tc.metrics {
			if math.Abs(got[i]-tc.want[i]) > 1e-9*math.Max(1, math.Abs(tc.want[i])) {
				t.Errorf("%s: %s = %.12g; want %.12g", tc.name, m, got[i], tc.want[i])
			}
		}
	}
}

func TestMetricEvaluatorErrors(t *testing.T) {
	c := tolLoad(t, tolRC)
	for _, tc := range []struct {
		metrics []string
		want    string
	}{
		{[]string{"bandwidth"}, "f3db"}, // lists the valid ones
		{[]string{"gain"}, "gain@F"},
		{nil, "no metric"},
		{[]string{"f0"}, "first-order: no pole pair"},
	} {
		_, err := NewMetricEvaluator(c, mna.Input{}, mna.Output{Node: "out"}, tc.metrics)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%v: error %v; want %q", tc.metrics, err, tc.want)
		}
	}
	hp := tolLoad(t, "Vin: voltage source (in, gnd) 1\nC1: capacitor (in, out) 1uF\nR1: resistor (out, gnd) 1k\n")
	if _, err := NewMetricEvaluator(hp, mna.Input{}, mna.Output{Node: "out"}, []string{"dc"}); err == nil {
		t.Error("dc of a high-pass accepted")
	}
	if _, err := NewMetricEvaluator(c, mna.Input{}, mna.Output{Node: "nowhere"}, []string{"dc"}); err == nil {
		t.Error("unknown output node accepted")
	}
}

func TestMetricEvaluatorPhaseBranch(t *testing.T) {
	// An inverting stage sits at ±180° (common practice: −R2/R1 is a
	// half-turn): every run must stay on the nominal's branch rather than
	// jump by 360° between draws.
	c := tolLoad(t, `
Vin: voltage source (in, gnd) 1
R1: resistor (in, m) 10k ±5%
R2: resistor (m, out) 10k ±5%
C1: capacitor (m, out) 1pF ±5%
U1: opamp (gnd, m, out)
`)
	res := tolMonteCarlo(t, c, tolEvaluator(t, c, "out", "phase@100Hz"), MonteCarloOptions{Runs: 200, Seed: 2})
	m := res.Metrics[0]
	if math.Abs(math.Abs(m.Nominal)-180) > 0.01 || m.Max-m.Min > 0.01 {
		t.Errorf("phase nominal %v, spread %v..%v; want ±180° on one branch", m.Nominal, m.Min, m.Max)
	}
}

func TestMetricEvaluatorSpotPathAgrees(t *testing.T) {
	// The direct solve for spot metrics must give what Metric.Eval gives
	// on the extracted transfer function, run by run.
	c := tolLoad(t, tol6thOrder)
	spot := tolEvaluator(t, c, "out", "gain@1kHz", "phase@1kHz", "phase@3kHz", "dc")
	full := tolEvaluator(t, c, "out", "gain@1kHz", "phase@1kHz", "phase@3kHz", "dc", "f0")
	if !spot.spot || full.spot {
		t.Fatal("paths not chosen as documented")
	}
	factors := make([]float64, len(c.Variations))
	for run := range 20 {
		drawFactors(c.Variations, 5, run, factors)
		vc, err := c.Vary(factors)
		if err != nil {
			t.Fatal(err)
		}
		a, err := spot.Eval(vc)
		if err != nil {
			t.Fatal(err)
		}
		b, err := full.Eval(vc)
		if err != nil {
			t.Fatal(err)
		}
		for i := range a {
			if math.Abs(a[i]-b[i]) > 1e-9*math.Max(1, math.Abs(b[i])) {
				t.Errorf("run %d %s: direct %v, transfer function %v", run, spot.Metrics()[i], a[i], b[i])
			}
		}
	}
}
