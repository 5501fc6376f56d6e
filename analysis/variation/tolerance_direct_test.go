package variation

import (
	"context"
	"errors"
	"math"
	"os"
	"testing"

	"nodal/analysis/stability"
	"nodal/analysis/transfer"
)

// directCases are circuits on which the direct path (restamp, eigenvalue
// stability, f3db from the factored form polished on H) must agree with
// the extraction path run by run: the logger filter, a peaking
// Sallen-Key (Q ≈ 5), a low-pass with a notch below its corner (a zero
// pair on the jω axis, so the lowest crossing is set by the zeros), the
// 6th-order cascade (17 unknowns: the compressed-column solver) and an
// equal-component Sallen-Key whose gain of 2.9 ± 5 % makes some draws
// unstable (Q = 1/(3 − K); common practice).
var directCases = []struct {
	name    string
	src     string
	metrics []string
	// unstable is true when some draws are not stable.
	unstable bool
}{
	{"logger", "", []string{"f3db", "gain@1kHz", "phase@3kHz", "dc"}, false},
	{"logger pair", "", []string{"f0", "q", "stable"}, false},
	{"logger peak", "", []string{"peak", "peaking", "fpeak"}, false},
	{"logger noise", "", []string{"noise@1kHz", "noise_rms@10Hz..20kHz"}, false},
	{"peaking", `
let R = 10k ±1%
let C = 10nF ±5%
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) R
R2: resistor (a, b) R ±1%
C1: capacitor (a, out) 10*C ±2%
C2: capacitor (b, gnd) C/10
U1: opamp (b, out, out) a0=100k gbw=10MHz
`, []string{"f3db", "gain@2kHz", "f0", "q", "peak", "fpeak", "peaking", "noise@5kHz"}, false},
	// The trap L1–C1 notches at 1 kHz, far below R1·C1's 15.9 kHz: the
	// lowest crossing is just below the notch (TestDirectNotchCrossing).
	{"notch below the corner", `
Vin: voltage source (in, gnd) 1
R1: resistor (in, out) 1k ±5%
L1: inductor (out, m) 2.533H ±5%
C1: capacitor (m, gnd) 10nF ±5%
C2: capacitor (out, gnd) 1nF ±5%
`, []string{"f3db", "peak"}, false},
	{"6th order", tol6thOrder, []string{"f3db", "f0", "q", "peak", "noise_rms@100Hz..10kHz"}, false},
	{"sometimes unstable", `
let K = 2.9 ±5%
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) 10k ±1%
C1: capacitor (a, out) 10nF ±1%
R2: resistor (a, b) 10k ±1%
C2: capacitor (b, gnd) 10nF ±1%
E1: voltage source (out, gnd) K*v(b, gnd)
`, []string{"f3db", "q", "stable"}, true},
}

// directCase returns the case of directCases named name.
func directCase(t *testing.T, name string) (src string, metrics []string) {
	for _, tc := range directCases {
		if tc.name == name {
			return directCircuit(t, tc.src), tc.metrics
		}
	}
	t.Fatalf("no case %q", name)
	return "", nil
}

func directCircuit(t *testing.T, src string) string {
	if src != "" {
		return src
	}
	b, err := os.ReadFile("../../testdata/examples/logger_antialias.nodal")
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

// TestDirectPathAgreesWithExtraction evaluates 300 draws of each case by
// the direct path and by the extraction path (Extract, Metric.Eval: the
// reference every other report uses) and requires the same verdict and
// the same values to 1e-10: relative for Hz, ratio and noise metrics,
// absolute for dB and degrees (the figures are reported to 6 digits). It
// also requires
// that the direct path served most stable draws, so the comparison is
// not empty.
func TestDirectPathAgreesWithExtraction(t *testing.T) {
	for _, tc := range directCases {
		t.Run(tc.name, func(t *testing.T) {
			c := tolLoad(t, directCircuit(t, tc.src))
			ev := tolEvaluator(t, c, "out", tc.metrics...)
			if ev.direct == nil {
				t.Fatal("no direct path")
			}
			buf := make([]float64, len(c.Variations))
			served, unstable := 0, 0
			worst := make([]float64, len(tc.metrics))
			const draws = 300
			for i := 0; i < draws; i++ {
				drawFactors(c.Variations, 3, i, buf)
				vc, err := c.Vary(buf)
				if err != nil {
					t.Fatal(err)
				}
				want, werr := ev.evalExtract(vc, true)
				got, gerr := ev.direct.eval(ev, vc)
				if errors.Is(gerr, errUncertain) {
					if werr == nil && !tc.unstable {
						t.Logf("draw %d: left to the extraction path", i)
					}
					if errors.Is(werr, stability.ErrUnstable) {
						unstable++
					}
					continue
				}
				if werr != nil || gerr != nil {
					t.Fatalf("draw %d: direct %v, extraction %v", i, gerr, werr)
				}
				served++
				for j, name := range tc.metrics {
					d := math.Abs(got[j] - want[j])
					if !metricPerPercent(name) && want[j] != 0 {
						d /= math.Abs(want[j])
					}
					worst[j] = math.Max(worst[j], d)
					if d > 1e-10 {
						t.Errorf("draw %d: %s = %.15g direct, %.15g extracted", i, name, got[j], want[j])
					}
				}
			}
			if served < draws/2 {
				t.Errorf("the direct path served %d of %d draws", served, draws)
			}
			if tc.unstable && unstable == 0 {
				t.Errorf("no unstable draw among %d: the case does not test the fallback", draws)
			}
			t.Logf("direct %d, unstable %d of %d; largest differences %v", served, unstable, draws, worst)
		})
	}
}

// TestDirectPathRefuses checks the cases the direct path leaves to the
// extraction path: a high-pass (the reference of f3db and peaking is not
// the DC gain), a metric of a loop gain, the place of a peak tied with the DC end.
func TestDirectPathRefuses(t *testing.T) {
	hp := tolLoad(t, `
Vin: voltage source (in, gnd) 1
C1: capacitor (in, out) 10nF ±5%
R1: resistor (out, gnd) 10k ±1%
`)
	if ev := tolEvaluator(t, hp, "out", "f3db"); ev.direct != nil {
		t.Error("high-pass f3db: direct path used")
	}
	if ev := tolEvaluator(t, hp, "out", "peaking"); ev.direct != nil {
		t.Error("high-pass peaking: direct path used")
	}
	c := tolLoad(t, directCircuit(t, ""))
	if ev := tolEvaluator(t, c, "out", "f3db", "phase_margin@U1"); ev.direct != nil {
		t.Error("phase_margin@U1: direct path used")
	}
	// The notch's gain is flat at DC to rounding: a "maximum" of the
	// product within directPeakTie of the DC end, so which one is the peak's
	// place is rounding's choice.
	src, _ := directCase(t, "notch below the corner")
	if ev := tolEvaluator(t, tolLoad(t, src), "out", "fpeak"); ev.direct != nil {
		t.Error("fpeak tied with the DC end: direct path used")
	}
}

// TestMonteCarloDirectMatchesExtraction runs the same seeded Monte Carlo
// with and without the direct path: the same runs finish, fail and are
// unstable, and every statistic agrees to 1e-12 relative, or 1e-12
// absolute for dB and degrees (the values differ in the last digits
// only: two roundings of one root search, two solves at s = 0).
func TestMonteCarloDirectMatchesExtraction(t *testing.T) {
	for _, name := range []string{"logger", "logger pair", "logger peak", "logger noise", "sometimes unstable"} {
		src, metrics := directCase(t, name)
		c := tolLoad(t, src)
		fast := tolEvaluator(t, c, "out", metrics...)
		slow := tolEvaluator(t, c, "out", metrics...)
		slow.direct = nil
		opt := MonteCarloOptions{Runs: 1000, Seed: 11, Workers: 2}
		a, err := MonteCarlo(context.Background(), c, fast, opt)
		if err != nil {
			t.Fatal(err)
		}
		b, err := MonteCarlo(context.Background(), c, slow, opt)
		if err != nil {
			t.Fatal(err)
		}
		if a.Finished != b.Finished || a.Failed != b.Failed || a.Unstable != b.Unstable {
			t.Fatalf("%s: finished/failed/unstable %d/%d/%d direct, %d/%d/%d extracted",
				name, a.Finished, a.Failed, a.Unstable, b.Finished, b.Failed, b.Unstable)
		}
		for j := range a.Metrics {
			x, y := a.Metrics[j], b.Metrics[j]
			for _, p := range [][2]float64{{x.Nominal, y.Nominal}, {x.Mean, y.Mean}, {x.Std, y.Std}, {x.Min, y.Min}, {x.Max, y.Max}} {
				tol := 1e-12 * math.Abs(p[1])
				if metricPerPercent(x.Name) {
					tol = 1e-12
				}
				if math.Abs(p[0]-p[1]) > tol {
					t.Errorf("%s %s: %v direct, %v extracted", name, x.Name, p[0], p[1])
				}
			}
		}
	}
}

// TestDirectNotchCrossing checks that the notch case tests what it says:
// its nominal −3 dB frequency lies just below the trap's 1/(2π√(L1·C1)) =
// 1 kHz, not at the R1·C1 corner.
func TestDirectNotchCrossing(t *testing.T) {
	src, _ := directCase(t, "notch below the corner")
	c := tolLoad(t, src)
	v, err := tolEvaluator(t, c, "out", "f3db").Eval(c)
	if err != nil {
		t.Fatal(err)
	}
	fn := 1 / (2 * math.Pi * math.Sqrt(2.533*10e-9))
	if !(v[0] < fn && v[0] > 0.8*fn) {
		t.Errorf("f3db %v Hz; want just below the notch at %v Hz", v[0], fn)
	}
}

// TestDirectPairRefusesTies checks the two refusals of the direct f0 and
// q on natural frequencies given by hand: two complex pairs equally close
// to the jω axis (the dominant one is rounding's choice) and a nearly
// double real pole (the extraction may merge it); well separated roots
// give transfer.DominantPair's pair.
func TestDirectPairRefusesTies(t *testing.T) {
	w := &directWorker{d: &directPath{directMetrics: directMetrics{pair: true}}}
	for _, tc := range []struct {
		name  string
		roots []complex128
		ok    bool
	}{
		{"separated", []complex128{complex(-100, 1000), complex(-100, -1000), complex(-300, 5000), complex(-300, -5000), -1e5}, true},
		{"equal damping", []complex128{complex(-100, 1000), complex(-100, -1000), complex(-100*(1+1e-12), 5000), complex(-100*(1+1e-12), -5000)}, false},
		{"nearly double", []complex128{-1000, -1000 * (1 + 1e-9), -5e4}, false},
	} {
		w.roots, w.pairDone = tc.roots, false
		p, err := w.dominantPair()
		if tc.ok != (err == nil) {
			t.Errorf("%s: error %v", tc.name, err)
			continue
		}
		if tc.ok {
			tf := transfer.TransferFunction{Poles: tc.roots}
			want, _ := tf.DominantPair()
			if p != want {
				t.Errorf("%s: %+v; want %+v", tc.name, p, want)
			}
		}
	}
}
