package response_test

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"reflect"
	"testing"

	"nodal/analysis/response"
	"nodal/mna"
	"nodal/mna/testcircuit"
	"nodal/netlist"
)

const gnd = netlist.Ground

func buildV(t testing.TB, c *netlist.Circuit, node string) *mna.System {
	t.Helper()
	sys, err := mna.Build(c, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: node})
	if err != nil {
		t.Fatal(err)
	}
	return sys
}

func near(got, want, tol float64) bool { return math.Abs(got-want) <= tol }

// RC low-pass through Sweep (common practice): −3.0103 dB, −45° at fc;
// 1/√101 and −84.29° one decade above; group delay RC/(1 + (ωRC)²)
// (closed form: −d/dω of the phase −atan ωRC; common practice).
func TestSweepRCLowPass(t *testing.T) {
	const r, cv = 1e3, 100e-9
	fc := 1 / (2 * math.Pi * r * cv)
	sys := buildV(t, testcircuit.New(testcircuit.V("Vs", "in", gnd, 1),
		testcircuit.R("R1", "in", "out", r), testcircuit.C("C1", "out", gnd, cv)), "out")
	resp, err := response.Sweep(context.Background(), sys, []float64{fc / 10, fc, 10 * fc}, 2)
	if err != nil {
		t.Fatal(err)
	}
	if resp.Input != "Vs" || resp.Output != "out" {
		t.Errorf("labels %q → %q", resp.Input, resp.Output)
	}
	if !near(resp.MagDB[1], -3.0103, 5e-5) || !near(resp.PhaseDeg[1], -45, 1e-9) {
		t.Errorf("at fc: %g dB %g°", resp.MagDB[1], resp.PhaseDeg[1])
	}
	if !near(resp.Mag[2], 1/math.Sqrt(101), 1e-12) || !near(resp.PhaseDeg[2], -84.29, 0.005) {
		t.Errorf("at 10 fc: |H| %g %g°", resp.Mag[2], resp.PhaseDeg[2])
	}
	for i, f := range resp.FreqHz {
		w := 2 * math.Pi * f
		want := r * cv / (1 + w*r*cv*w*r*cv)
		if !near(resp.GroupDelayS[i], want, 1e-12*want) {
			t.Errorf("f=%g: τ = %g, want %g", f, resp.GroupDelayS[i], want)
		}
	}
}

// A 5th-order Butterworth low-pass has poles p_k = ωc·e^{jπ(2k+n−1)/(2n)}
// (common practice), so its unwrapped phase is −Σ atan2(ω − Im p_k, −Re p_k),
// continuous and falling to −450°.
func TestSweepUnwrapsPhase(t *testing.T) {
	sys := buildV(t, testcircuit.Ladder(5, 1e3, 50), "out")
	resp, err := response.Sweep(context.Background(), sys, response.LogGrid(1, 1e6, 50), 0)
	if err != nil {
		t.Fatal(err)
	}
	for i := 1; i < len(resp.PhaseDeg); i++ {
		if resp.PhaseDeg[i] > resp.PhaseDeg[i-1] {
			t.Fatalf("phase rises at %g Hz: %g → %g", resp.FreqHz[i], resp.PhaseDeg[i-1], resp.PhaseDeg[i])
		}
	}
	for i, f := range resp.FreqHz {
		want := 0.0
		for k := 1; k <= 5; k++ {
			th := math.Pi * float64(2*k+5-1) / 10
			want -= math.Atan2(f/1e3-math.Sin(th), -math.Cos(th)) * 180 / math.Pi
		}
		if !near(resp.PhaseDeg[i], want, 1e-7) {
			t.Errorf("phase at %g Hz = %.9g°, want %.9g°", f, resp.PhaseDeg[i], want)
		}
	}
	if got := response.WrapDeg(-450); got != -90 {
		t.Errorf("WrapDeg(−450) = %g", got)
	}
	if got := response.WrapDeg(-180); got != 180 {
		t.Errorf("WrapDeg(−180) = %g, want 180", got)
	}
}

// The result does not depend on the worker count, bit for bit, and on
// the sparse path (a 60-section RC ladder, 62 unknowns, whose points go
// two per EvalPair in blocks) every point is bit for bit what one
// Sweeper's Eval gives at it alone: the design claim of Sweep and
// mna.Sweeper.EvalPair. Point counts: odd, below and above the block.
func TestSweepWorkerIndependence(t *testing.T) {
	ladder := buildV(t, testcircuit.RCLadder(60, 1e3, 10e-9), "n60")
	for _, tc := range []struct {
		name  string
		sys   *mna.System
		freqs []float64
	}{
		{"tow-thomas", buildV(t, testcircuit.TowThomas(2, 1e3, 3, 1e5, 1e6), "lp2"), response.LogGrid(10, 1e5, 37)},
		{"ladder 37", ladder, response.LogGrid(1, 1e5, 37)},
		{"ladder 301", ladder, response.LogGrid(1, 1e5, 301)},
		{"ladder 5", ladder, response.LogGrid(1, 1e5, 5)},
	} {
		ref, err := response.Sweep(context.Background(), tc.sys, tc.freqs, 1)
		if err != nil {
			t.Fatal(err)
		}
		for _, w := range []int{2, 3, 7, 1000, 0} {
			got, err := response.Sweep(context.Background(), tc.sys, tc.freqs, w)
			if err != nil {
				t.Fatal(err)
			}
			if !reflect.DeepEqual(got, ref) {
				t.Errorf("%s, workers=%d: result differs from one worker", tc.name, w)
			}
		}
		one := mna.NewSweeper(tc.sys)
		for i, f := range tc.freqs {
			h, _, err := one.Eval(complex(0, 2*math.Pi*f))
			if err != nil || h != ref.H[i] {
				t.Errorf("%s at %g Hz: Sweep %v, Eval alone %v (%v)", tc.name, f, ref.H[i], h, err)
			}
		}
	}
}

func TestSweepErrors(t *testing.T) {
	sys := buildV(t, testcircuit.Ladder(3, 1e3, 50), "out")
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := response.Sweep(ctx, sys, response.LogGrid(1, 1e6, 100), 2); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled sweep: %v", err)
	}
	if _, err := response.Sweep(context.Background(), sys, []float64{1, -1}, 1); err == nil {
		t.Error("negative frequency accepted")
	}
	// A lossless tank fed by a current source is singular at resonance,
	// 1/(2π) Hz for L = C = 1 (common practice): that point is a pole on
	// the jω axis (+Inf, marked) and the sweep goes on; a sweep of that
	// point alone has nothing to show and fails.
	tank := testcircuit.New(testcircuit.I("I1", gnd, "x", 1),
		testcircuit.C("C1", "x", gnd, 1), testcircuit.L("L1", "x", gnd, 1))
	r, err := response.Sweep(context.Background(), buildV(t, tank, "x"), []float64{0.1, 1 / (2 * math.Pi), 1}, 2)
	if err != nil || !r.AtPole[1] || !math.IsInf(r.Mag[1], 1) || r.AtPole[0] || r.AtPole[2] {
		t.Errorf("tank at resonance: %v, want the middle point on a pole", err)
	}
	_, err = response.Sweep(context.Background(), buildV(t, tank, "x"), []float64{1 / (2 * math.Pi)}, 1)
	var se *mna.SingularError
	if !errors.As(err, &se) {
		t.Errorf("tank at resonance alone: %v, want a *mna.SingularError", err)
	}
}

func TestGrids(t *testing.T) {
	cases := []struct {
		name string
		got  []float64
		want []float64
	}{
		{"log 2/decade", response.LogGrid(10, 1000, 2), []float64{10, 10 * math.Sqrt(10), 100, 100 * math.Sqrt(10), 1000}},
		{"log one point", response.LogGrid(5, 5, 10), []float64{5}},
		{"log bad", response.LogGrid(0, 5, 10), nil},
		{"log reversed", response.LogGrid(10, 5, 10), nil},
		{"linear", response.LinearGrid(0, 1, 5), []float64{0, 0.25, 0.5, 0.75, 1}},
		{"linear one", response.LinearGrid(3, 9, 1), []float64{3}},
		{"linear none", response.LinearGrid(3, 9, 0), nil},
	}
	for _, tc := range cases {
		if len(tc.got) != len(tc.want) {
			t.Errorf("%s: %v, want %v", tc.name, tc.got, tc.want)
			continue
		}
		for i := range tc.got {
			if !near(tc.got[i], tc.want[i], 1e-12*tc.want[i]) {
				t.Errorf("%s: %v, want %v", tc.name, tc.got, tc.want)
				break
			}
		}
	}
}

// DefaultRange spans the RC corner 1/(2πRC) and the LC resonance
// 1/(2π√(LC)) by two decades either side (common practice corners).
func TestDefaultRange(t *testing.T) {
	c := testcircuit.New(testcircuit.V("Vs", "in", gnd, 1), testcircuit.R("R1", "in", "a", 1e3),
		testcircuit.C("C1", "a", gnd, 1e-6), testcircuit.L("L1", "a", "b", 1), testcircuit.R("R2", "b", gnd, 1e3))
	from, to := response.DefaultRange(c)
	fRC := 1 / (2 * math.Pi * 1e3 * 1e-6) // 159 Hz
	fLC := 1 / (2 * math.Pi * 1e-3)       // 159 Hz
	fRL := 1e3 / (2 * math.Pi)            // 159 Hz
	lo := math.Min(fRC, math.Min(fLC, fRL)) / 100
	hi := math.Max(fRC, math.Max(fLC, fRL)) * 100
	if !near(from, lo, 1e-9*lo) || !near(to, hi, 1e-9*hi) {
		t.Errorf("DefaultRange = %g … %g Hz, want %g … %g", from, to, lo, hi)
	}
	if from, to := response.DefaultRange(testcircuit.New(testcircuit.R("R1", "a", gnd, 1))); from != 10 || to != 100e3 {
		t.Errorf("resistive circuit: %g … %g", from, to)
	}
}

func benchmarkSweep(b *testing.B, sys *mna.System, workers int) {
	freqs := response.LogGrid(10, 1e5, 250) // 1001 points
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := response.Sweep(context.Background(), sys, freqs, workers); err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(freqs)), "ns/point")
}

// 1001-point sweeps of the 5th-order ladder and of 4 Tow–Thomas stages
// (37 unknowns), on one worker and on every core.
func BenchmarkSweepLadder5One(b *testing.B) {
	benchmarkSweep(b, buildV(b, testcircuit.Ladder(5, 1e3, 50), "out"), 1)
}
func BenchmarkSweepLadder5All(b *testing.B) {
	benchmarkSweep(b, buildV(b, testcircuit.Ladder(5, 1e3, 50), "out"), 0)
}
func BenchmarkSweepTowThomas4One(b *testing.B) {
	benchmarkSweep(b, buildV(b, testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6), "lp4"), 1)
}
func BenchmarkSweepTowThomas4All(b *testing.B) {
	benchmarkSweep(b, buildV(b, testcircuit.TowThomas(4, 1e3, 2, 1e5, 1e6), "lp4"), 0)
}

// The impedance of a series R-L-C (R = 10 Ω, L = 1 mH, C = 1 µF) has its
// minimum R at f0 = 1/(2π√(LC)) ≈ 5.0329 kHz, where the phase rises
// through 0°; a parallel R-L-C of the same parts has its maximum R there,
// with the phase falling through 0° (common practice: the series and
// parallel resonant circuits).
func TestResonancesSeriesParallel(t *testing.T) {
	const r, l, c = 10.0, 1e-3, 1e-6
	f0 := 1 / (2 * math.Pi * math.Sqrt(l*c))
	series := func(w float64) complex128 {
		s := complex(0, w)
		return complex(r, 0) + s*complex(l, 0) + 1/(s*complex(c, 0))
	}
	parallel := func(w float64) complex128 {
		s := complex(0, w)
		return 1 / (complex(1/r, 0) + 1/(s*complex(l, 0)) + s*complex(c, 0))
	}
	for _, tc := range []struct {
		name   string
		z      func(float64) complex128
		series bool
	}{{"series", series, true}, {"parallel", parallel, false}} {
		t.Run(tc.name, func(t *testing.T) {
			freqs := response.LogGrid(100, 1e5, 20)
			resp := &response.Response{FreqHz: freqs}
			for _, f := range freqs {
				z := tc.z(2 * math.Pi * f)
				resp.Mag = append(resp.Mag, cmplx.Abs(z))
				resp.PhaseDeg = append(resp.PhaseDeg, cmplx.Phase(z)*180/math.Pi)
			}
			res := response.Resonances(resp, tc.z)
			if len(res) != 1 {
				t.Fatalf("got %d resonances, want 1: %+v", len(res), res)
			}
			if math.Abs(res[0].FreqHz-f0) > 1e-9*f0 || res[0].Series != tc.series || math.Abs(res[0].Mag-r) > 1e-6 {
				t.Errorf("resonance %+v; want f0 %.9g Hz, |Z| %g Ω, series %v", res[0], f0, r, tc.series)
			}
			lo, hi, ok := response.Extremes(resp)
			if !ok {
				t.Fatal("no extremes")
			}
			ext := lo
			if !tc.series {
				ext = hi
			}
			if math.Abs(ext.Mag-r) > 0.05*r {
				t.Errorf("extreme %+v; want |Z| near %g Ω at the resonance", ext, r)
			}
		})
	}
}

// A lossless parallel LC (L = 10 mH, C = 100 nF) has Z = sL/(1 + s²LC): a
// pole pair at ±j/√(LC), f0 ≈ 5.0329 kHz (parallel resonance), and a zero
// at s = 0, outside any log range (common practice).
func TestAxisResonances(t *testing.T) {
	w0 := 1 / math.Sqrt(10e-3*100e-9)
	res := response.AxisResonances([]complex128{complex(0, w0), complex(0, -w0)}, []complex128{0}, 10, 1e6)
	if len(res) != 1 || math.Abs(res[0].FreqHz-w0/(2*math.Pi)) > 1e-9*w0 || res[0].Series || !math.IsInf(res[0].Mag, 1) {
		t.Fatalf("got %+v; want one parallel resonance at %.6g Hz", res, w0/(2*math.Pi))
	}
	if res := response.AxisResonances([]complex128{complex(-w0/10, w0)}, nil, 10, 1e6); len(res) != 0 {
		t.Errorf("a damped pair is no axis resonance: %+v", res)
	}
}
