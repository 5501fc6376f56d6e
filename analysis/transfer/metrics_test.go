package transfer

import (
	"errors"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
	"testing"

	"nodal/netlist"
)

func TestParseMetric(t *testing.T) {
	cases := []struct {
		in     string
		kind   string
		freqHz float64
		unit   string
	}{
		{"gain@1kHz", "gain", 1e3, "dB"},
		{"gain@20k", "gain", 20e3, "dB"},
		{"gain@500Hz", "gain", 500, "dB"},
		{"gain@2.2MHz", "gain", 2.2e6, "dB"},
		{"gain@100mHz", "gain", 0.1, "dB"},
		{"phase@1kHz", "phase", 1e3, "deg"},
		{"phase@50", "phase", 50, "deg"},
		// 1k5 is 1.5 kHz in the file format (netlist.ParseValue); a
		// requirement that parses in a file must parse here too.
		{"gain@1k5", "gain", 1.5e3, "dB"},
		{"phase@4u7Hz", "phase", 4.7e-6, "deg"},
		{"f3db", "f3db", 0, "Hz"},
		{"peak", "peak", 0, "dB"},
		{"fpeak", "fpeak", 0, "Hz"},
		{"f0", "f0", 0, "Hz"},
		{"q", "q", 0, ""},
		{"dc", "dc", 0, "dB"},
	}
	for _, c := range cases {
		m, err := ParseMetric(c.in)
		if err != nil {
			t.Errorf("%s: %v", c.in, err)
			continue
		}
		if m.Spec.Name != c.kind || math.Abs(m.FreqHz-c.freqHz) > 1e-12*c.freqHz || m.Unit() != c.unit || m.String() != c.in {
			t.Errorf("%s: got %+v unit %q", c.in, m, m.Unit())
		}
	}
	for _, bad := range []string{"", "gain", "gain@", "gain@-1k", "gain@0", "gain@1kk", "gain@Hz", "F3DB", "Q", "band@1k", "gain@infHz", "gain@0x10", "f3db@1k", "gain@1e400"} {
		_, err := ParseMetric(bad)
		if err == nil {
			t.Errorf("%q: no error", bad)
		}
	}
	_, err := ParseMetric("bandwidth")
	if err == nil || !strings.Contains(err.Error(), "gain@F") || !strings.Contains(err.Error(), "fpeak") {
		t.Errorf("unknown metric error should list the valid ones: %v", err)
	}
}

// FuzzParseMetric: analysis.ParseMetric accepts exactly what the file
// format's netlist.ParseMetric accepts, with the same frequency, and keeps
// the Metric invariant.
func FuzzParseMetric(f *testing.F) {
	for _, s := range []string{"gain@1kHz", "phase@20k", "f3db", "q", "gain@1e3", "gain@µHz", "dc@", "gain@1k5"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		m, err := ParseMetric(s)
		_, pn, errN := netlist.ParseMetric(s)
		fn := pn.FreqHz
		if (err == nil) != (errN == nil) || (err == nil && m.FreqHz != fn) {
			t.Fatalf("%q: analysis %+v %v, netlist %g %v", s, m, err, fn, errN)
		}
		if err != nil {
			return
		}
		hasFreq := m.Spec.Param == netlist.MetricParamFreq
		if hasFreq != (m.FreqHz > 0) || math.IsInf(m.FreqHz, 0) || math.IsNaN(m.FreqHz) || m.String() != s {
			t.Fatalf("%q parsed to %+v", s, m)
		}
	})
}

func TestMetricEval(t *testing.T) {
	// Unity-gain Sallen-Key low-pass (formulas as in TestSallenKeyUnityGain,
	// Sedra & Smith, from memory): f0 = 1/(2π√(R1R2C1C2)), Q as there;
	// peak and −3 dB frequency from the second-order closed forms (common
	// practice, see TestSecondOrderPeakAndBandwidth); gain@f0 = 20·log10 Q
	// and phase@f0 = −90° for any second-order low-pass (common practice).
	const r1, r2, c1, c2 = 10e3, 10e3, 47e-9, 4.7e-9
	sys := newStamper().V("in", "0").R("in", "a", r1).R("a", "b", r2).
		C("a", "out", c1).C("b", "0", c2).Amp("b", "out", "out", math.Inf(1)).Out("out", "0").System()
	tf := mustExtract(t, sys)
	w0 := 1 / math.Sqrt(r1*r2*c1*c2)
	q := math.Sqrt(r1*r2*c1*c2) / (c2 * (r1 + r2))
	f0 := w0 / (2 * math.Pi)
	a := 1 - 1/(2*q*q)
	want := map[string]float64{
		"f0":    f0,
		"q":     q,
		"dc":    0,
		"peak":  20 * math.Log10(q/math.Sqrt(1-1/(4*q*q))),
		"fpeak": f0 * math.Sqrt(a),
		"f3db":  f0 * math.Sqrt(a+math.Sqrt(a*a+1)),
	}
	for name, w := range want {
		m, err := ParseMetric(name)
		if err != nil {
			t.Fatal(err)
		}
		got, err := m.Eval(tf)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if math.Abs(got-w) > 1e-9*math.Max(1, math.Abs(w)) {
			t.Errorf("%s = %.12g, want %.12g", name, got, w)
		}
	}
	fs := strconv.FormatFloat(f0, 'g', 15, 64)
	g, _ := ParseMetric("gain@" + fs)
	ph, _ := ParseMetric("phase@" + fs)
	if v, _ := g.Eval(tf); math.Abs(v-20*math.Log10(q)) > 1e-6 {
		t.Errorf("gain@f0 = %g dB, want %g", v, 20*math.Log10(q))
	}
	if v, _ := ph.Eval(tf); math.Abs(v+90) > 1e-6 {
		t.Errorf("phase@f0 = %g°, want −90", v)
	}
	// A first-order low-pass has no pole pair.
	rc := mustExtract(t, newStamper().V("in", "0").R("in", "o", 1e3).C("o", "0", 1e-6).Out("o", "0").System())
	qm, _ := ParseMetric("q")
	if _, err := qm.Eval(rc); err == nil || !strings.Contains(err.Error(), "first-order: no pole pair") {
		t.Errorf("q of a first-order circuit: error %v, want first-order: no pole pair", err)
	}
}

func TestPeaking(t *testing.T) {
	// Second-order low-pass ω0²/(s² + (ω0/Q)s + ω0²): the peak above the
	// DC gain is 20·log10(Q/√(1 − 1/(4Q²))) for Q > 1/√2, none below
	// (common practice). The high-pass s²/(s² + (ω0/Q)s + ω0²) has the same
	// peaking above its high-frequency gain (the mirror ω → ω0²/ω).
	const w0 = 2 * math.Pi * 1e3
	for _, q := range []float64{0.5, 1 / math.Sqrt2, 1, 2, 10} {
		p := complex(-w0/(2*q), w0*math.Sqrt(math.Max(0, 1-1/(4*q*q))))
		poles := []complex128{p, cmplx.Conj(p)}
		if q == 0.5 {
			poles = []complex128{complex(-w0, 0), complex(-w0, 0)}
		}
		want := 0.0
		if q > 1/math.Sqrt2 {
			want = 20 * math.Log10(q/math.Sqrt(1-1/(4*q*q)))
		}
		lp := newTransferFunction(w0*w0, nil, poles, nil)
		hp := newTransferFunction(1, []complex128{0, 0}, poles, nil)
		for name, h := range map[string]*TransferFunction{"low-pass": lp, "high-pass": hp} {
			m, _ := ParseMetric("peaking")
			got, err := m.Eval(h)
			if err != nil || math.Abs(got-want) > 1e-9 {
				t.Errorf("%s Q=%g: peaking %v dB, %v; want %v dB", name, q, got, err, want)
			}
		}
		// A band-pass (ω0/Q)s/(...) has a peak but no passband reference.
		bp := newTransferFunction(w0/q, []complex128{0}, poles, nil)
		if _, err := bp.PeakingDB(); !errors.Is(err, ErrNoPassband) {
			t.Errorf("band-pass Q=%g: peaking error %v, want ErrNoPassband", q, err)
		}
	}
}

func TestDominantPair(t *testing.T) {
	// Sixth-order cascade with section Q 0.5176, 0.7071, 1.9319 at equal ω0
	// (Butterworth section Qs, common practice): the dominant pair is the
	// one closest to the jω axis, the Q = 1.9319 section.
	tf := mustExtract(t, sixthOrderCascade())
	p, err := tf.DominantPair()
	if err != nil || math.Abs(p.Q-1.9319) > 1e-9 {
		t.Errorf("dominant %+v %v, want Q 1.9319", p, err)
	}
}

// TestDominantPairRealPoles: a unity-gain Sallen-Key low-pass with
// Q = √(R1R2C1C2)/(C2(R1+R2)) < 0.5 has two real poles; q and f0 are those
// of its section s² + (ω0/Q)s + ω0², ω0 = 1/√(R1R2C1C2) (Sedra & Smith,
// from memory), not undefined. For a complex pair the same formula holds,
// so the last case (Q above 0.5) checks the complex branch.
func TestDominantPairRealPoles(t *testing.T) {
	const r1, r2 = 10e3, 22e3
	for _, tc := range []struct{ c1, c2 float64 }{
		{4.7e-9, 10e-9},    // Q 0.338: well separated real poles
		{9.69e-9, 10.5e-9}, // Q 0.4803
		{1e-9, 47e-9},      // Q 0.0687
		{40e-9, 10e-9},     // Q 0.932: complex pair
	} {
		sys := newStamper().V("in", "0").R("in", "a", r1).R("a", "b", r2).
			C("a", "out", tc.c1).C("b", "0", tc.c2).Amp("b", "out", "out", math.Inf(1)).Out("out", "0").System()
		tf := mustExtract(t, sys)
		w0 := 1 / math.Sqrt(r1*r2*tc.c1*tc.c2)
		q := math.Sqrt(r1*r2*tc.c1*tc.c2) / (tc.c2 * (r1 + r2))
		for name, want := range map[string]float64{"q": q, "f0": w0 / (2 * math.Pi)} {
			m, err := ParseMetric(name)
			if err != nil {
				t.Fatal(err)
			}
			got, err := m.Eval(tf)
			if err != nil || math.Abs(got-want) > 1e-9*want {
				t.Errorf("C1 %g C2 %g: %s = %.12g (%v), want %.12g", tc.c1, tc.c2, name, got, err, want)
			}
		}
		p, err := tf.DominantPair()
		if err != nil {
			t.Fatal(err)
		}
		if q < 0.5 && (imag(p.Root) != 0 || imag(p.Other) != 0 || cmplx.Abs(p.Root) > cmplx.Abs(p.Other) || p.Q > 0.5) {
			t.Errorf("Q %g: pair %+v, want two real poles, smaller first, Q ≤ 0.5", q, p)
		}
		if math.Abs(p.Zeta-1/(2*q)) > 1e-9/q {
			t.Errorf("Q %g: ζ %g, want %g", q, p.Zeta, 1/(2*q))
		}
	}
}

// TestDominantPairRule: with no complex pair the two real poles of
// smallest magnitude are taken, −1 and −10 here (ω0 = √10, Q = √10/11);
// one real pole, real poles of opposite sign or a double pole at s = 0
// have no section.
func TestDominantPairRule(t *testing.T) {
	tf := newTransferFunction(1, nil, []complex128{-1, -10, -100}, nil)
	p, err := tf.DominantPair()
	if err != nil || p.Root != -1 || p.Other != -10 || math.Abs(p.OmegaRad-math.Sqrt(10)) > 1e-15 || math.Abs(p.Q-math.Sqrt(10)/11) > 1e-15 {
		t.Errorf("got %+v, %v", p, err)
	}
	for _, poles := range [][]complex128{{-1}, {-1, 2}, {0, 0}} {
		if _, err := newTransferFunction(1, nil, poles, nil).DominantPair(); !errors.Is(err, ErrNoPolePair) {
			t.Errorf("poles %v: error %v, want ErrNoPolePair", poles, err)
		}
	}
	// A complex pair wins over closer real poles.
	tf = newTransferFunction(1, nil, []complex128{-1, -2, complex(-50, 100), complex(-50, -100)}, nil)
	if p, err := tf.DominantPair(); err != nil || p.Root != complex(-50, 100) || p.Other != complex(-50, -100) {
		t.Errorf("got %+v, %v; want the complex pair", p, err)
	}
}

// stubCircuit answers the circuit quantities with fixed values.
type stubCircuit struct{}

func (stubCircuit) Stable() (bool, error)                  { return true, nil }
func (stubCircuit) PhaseMarginDeg(string) (float64, error) { return 60, nil }
func (stubCircuit) GainMarginDB(string) (float64, error)   { return 12, nil }
func (stubCircuit) CrossoverHz(string) (float64, error)    { return 1e5, nil }

// TestCircuitMetrics: stable and the loop metrics are read from the
// circuit given to EvalIn; on a transfer function alone they are an error
// saying they are judged on the circuit, never a number.
func TestCircuitMetrics(t *testing.T) {
	h := FromRoots(1e3, nil, []complex128{-1e3})
	for _, tc := range []struct {
		metric string
		want   float64
	}{{"stable", 1}, {"phase_margin@U1", 60}, {"gain_margin@U1", 12}, {"crossover@U1", 1e5}} {
		m, err := ParseMetric(tc.metric)
		if err != nil {
			t.Fatal(err)
		}
		if !m.Spec.Circuit {
			t.Errorf("%s is not a circuit metric", tc.metric)
		}
		if v, err := m.EvalIn(h, stubCircuit{}); err != nil || v != tc.want {
			t.Errorf("%s = %v, %v; want %v", tc.metric, v, err, tc.want)
		}
		if v, err := m.Eval(h); !errors.Is(err, errNoCircuit) {
			t.Errorf("%s on H alone = %v, %v; want errNoCircuit", tc.metric, v, err)
		}
	}
}
