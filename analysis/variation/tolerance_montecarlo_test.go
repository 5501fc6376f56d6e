package variation

import (
	"context"
	"errors"
	"math"
	"testing"

	"gonum.org/v1/gonum/stat"

	"nodal/mna"
	"nodal/netlist"
)

// tolLoad elaborates circuit source text for the tolerance tests.
func tolLoad(t testing.TB, src string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.Load("test.nodal", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// tolEvaluator is the standard evaluator from the only source to node out.
func tolEvaluator(t testing.TB, c *netlist.Circuit, out string, metrics ...string) *MetricEvaluator {
	t.Helper()
	ev, err := NewMetricEvaluator(c, mna.Input{}, mna.Output{Node: out}, metrics)
	if err != nil {
		t.Fatal(err)
	}
	return ev
}

// tolRC is an RC low-pass, f3db = 1/(2π·10 kΩ·15.9155 nF) ≈ 1 kHz, with R
// and C uniform ±1 %.
const tolRC = `
Vin: voltage source (in, gnd) 1
R1: resistor (in, out) 10k ±1%
C1: capacitor (out, gnd) 15.9155nF ±1%
`

func tolMonteCarlo(t testing.TB, c *netlist.Circuit, ev Evaluator, opt MonteCarloOptions) *MonteCarloResult {
	t.Helper()
	res, err := MonteCarlo(context.Background(), c, ev, opt)
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestMonteCarloRCUniform(t *testing.T) {
	c := tolLoad(t, tolRC)
	const runs, tol = 10000, 0.01
	res := tolMonteCarlo(t, c, tolEvaluator(t, c, "out", "f3db"), MonteCarloOptions{Runs: runs, Seed: 7})
	m := res.Metrics[0]
	if res.Finished != runs || res.Failed != 0 || res.Cancelled || len(m.Samples) != runs {
		t.Fatalf("finished %d failed %d cancelled %v samples %d", res.Finished, res.Failed, res.Cancelled, len(m.Samples))
	}
	f0 := 1 / (2 * math.Pi * 10e3 * 15.9155e-9)
	if math.Abs(m.Nominal/f0-1) > 1e-9 {
		t.Errorf("nominal f3db %v; want 1/(2πRC) = %v", m.Nominal, f0)
	}
	// f3db/f0 = 1/((1+a)(1+b)), a and b independent uniform on ±t. Exactly
	// (integrate 1/(1+a) and 1/(1+a)² over the uniform density):
	// E[1/(1+a)] = ln((1+t)/(1−t))/(2t), E[1/(1+a)²] = 1/(1−t²), so
	// Var = E2² − E1⁴ (closed form: expectation of a function of a random
	// variable, E[g(a)] = ∫ g(a)·p(a) da; common practice). To first order
	// the relative σ is √2·t/√3 ≈ 0.816 % (propagation of independent
	// uniform errors; common practice); the exact value differs from it by
	// O(t²).
	e1 := math.Log((1+tol)/(1-tol)) / (2 * tol)
	e2 := 1 / (1 - tol*tol)
	exactRel := math.Sqrt(e2*e2-math.Pow(e1, 4)) / (e1 * e1)
	firstOrder := math.Sqrt2 * tol / math.Sqrt(3)
	if math.Abs(exactRel/firstOrder-1) > 1e-3 {
		t.Fatalf("closed forms disagree: %v vs %v", exactRel, firstOrder)
	}
	// Statistical bound: for N samples the standard error of the sample
	// standard deviation is σ·√((κ − 1)/(4N)) (delta method on the sample
	// variance; κ = 2.4 is the kurtosis of the triangular sum of two equal
	// uniforms), here 0.59 % of σ at N = 10 000. Allow 4 standard errors.
	bound := 4 * math.Sqrt((2.4-1)/(4*runs))
	gotRel := m.Std / m.Mean
	if math.Abs(gotRel/exactRel-1) > bound {
		t.Errorf("relative σ of f3db = %.5f %%; want %.5f %% within %.2f %% of it", 100*gotRel, 100*exactRel, 100*bound)
	}
	// The mean: E = f0·e1², standard error σ/√N; 4 of them.
	if math.Abs(m.Mean-f0*e1*e1) > 4*m.Std/math.Sqrt(runs) {
		t.Errorf("mean %v; want %v", m.Mean, f0*e1*e1)
	}
	// Uniform draws cannot leave the corners 1/(2πR(1±t)C(1±t)).
	lo, hi := f0/((1+tol)*(1+tol)), f0/((1-tol)*(1-tol))
	if m.Min < lo || m.Max > hi || !(m.Min <= m.P00135 && m.P00135 < m.Mean && m.Mean < m.P99865 && m.P99865 <= m.Max) {
		t.Errorf("min %v p00135 %v mean %v p99865 %v max %v; corners %v..%v", m.Min, m.P00135, m.Mean, m.P99865, m.Max, lo, hi)
	}
}

// tolNormalR has R normal with tol = 3 %, so σ(R)/R = 1 %, and C exact.
const tolNormalR = `
Vin: voltage source (in, gnd) 1
R1: resistor (in, out) 10k ±3% normal
C1: capacitor (out, gnd) 15.9155nF
`

func TestMonteCarloNormalSigma(t *testing.T) {
	c := tolLoad(t, tolNormalR)
	const runs = 10000
	res := tolMonteCarlo(t, c, tolEvaluator(t, c, "out", "f3db"), MonteCarloOptions{Runs: runs, Seed: 3})
	m := res.Metrics[0]
	// f = f0/(1 + δ), δ ~ N(0, σ²), σ = tol/3 = 1 %: relative σ(f) ≈ σ (first
	// order propagation of error; common practice; the O(σ²) correction is
	// 0.03 %). The standard error of a normal sample's σ is σ/√(2N)
	// (large-sample result, Papoulis, Probability, Random Variables and
	// Stochastic Processes; from memory), 0.71 % at N =
	// 10 000; allow 4 of them.
	rel := m.Std / m.Nominal
	if math.Abs(rel/0.01-1) > 4/math.Sqrt(2*runs) {
		t.Errorf("relative σ of f3db = %.4f %%; want 1 %% (σ = tol/3)", 100*rel)
	}
	// Not truncated: P(|δ| > 3σ) = 0.27 %, 27 expected of 10 000 (binomial
	// σ ≈ 5.2); f leaves f0/(1 ± tol) exactly when δ leaves ±tol.
	out := 0
	for _, v := range m.Samples {
		if v > m.Nominal/(1-0.03) || v < m.Nominal/(1+0.03) {
			out++
		}
	}
	if out < 7 || out > 47 {
		t.Errorf("%d of %d runs beyond ±3σ; want about 27 (untruncated normal)", out, runs)
	}
}

func TestMonteCarloWorkerIndependence(t *testing.T) {
	c := tolLoad(t, tolSallenKey)
	ev := tolEvaluator(t, c, "out", "f0", "q", "gain@1kHz")
	ref := tolMonteCarlo(t, c, ev, MonteCarloOptions{Runs: 300, Seed: 42, Workers: 1})
	for _, w := range []int{2, 5} {
		got := tolMonteCarlo(t, c, ev, MonteCarloOptions{Runs: 300, Seed: 42, Workers: w})
		for j := range ref.Metrics {
			a, b := ref.Metrics[j], got.Metrics[j]
			if a.Mean != b.Mean || a.Std != b.Std || a.P00135 != b.P00135 || a.P99865 != b.P99865 || len(a.Samples) != len(b.Samples) {
				t.Fatalf("workers %d: %s differs: %+v vs %+v", w, a.Name, a, b)
			}
			for i := range a.Samples {
				if a.Samples[i] != b.Samples[i] {
					t.Fatalf("workers %d: %s run %d: %v vs %v", w, a.Name, i, a.Samples[i], b.Samples[i])
				}
			}
		}
	}
	other := tolMonteCarlo(t, c, ev, MonteCarloOptions{Runs: 300, Seed: 43, Workers: 2})
	if other.Metrics[0].Samples[0] == ref.Metrics[0].Samples[0] {
		t.Error("another seed gave the same first run")
	}
}

// partValues is an Evaluator returning the values of named parts.
type partValues []string

func (p partValues) Metrics() []string { return p }

func (p partValues) Eval(c *netlist.Circuit) ([]float64, error) {
	out := make([]float64, len(p))
	for i, name := range p {
		q, ok := c.Part(name)
		if !ok {
			return nil, errors.New("no part " + name)
		}
		out[i] = q.Value
	}
	return out, nil
}

func TestMonteCarloSharedLet(t *testing.T) {
	c := tolLoad(t, `
let R = 10k ±5%
Vin: voltage source (in, gnd) 1
R1: resistor (in, a) R
R2: resistor (a, out) 2*R
R3: resistor (out, gnd) 10k ±5%
`)
	const runs = 2000
	res := tolMonteCarlo(t, c, partValues{"R1", "R2", "R3"}, MonteCarloOptions{Runs: runs, Seed: 9})
	if len(res.Items) != 2 {
		t.Fatalf("items %+v; want R and R3", res.Items)
	}
	r1, r2, r3 := res.Metrics[0].Samples, res.Metrics[1].Samples, res.Metrics[2].Samples
	// One shared draw: R2 = 2·R1 in every run, correlation 1.
	for i := range r1 {
		if math.Abs(r2[i]/r1[i]-2) > 1e-12 {
			t.Fatalf("run %d: R1 %v R2 %v do not move together", i, r1[i], r2[i])
		}
	}
	if r := stat.Correlation(r1, r2, nil); r < 1-1e-12 {
		t.Errorf("corr(R1, R2) = %v; want 1", r)
	}
	// Independent draws: |r| of N independent pairs has σ ≈ 1/√N; 4σ.
	if r := stat.Correlation(r1, r3, nil); math.Abs(r) > 4/math.Sqrt(runs) {
		t.Errorf("corr(R1, R3) = %v; want ≈ 0", r)
	}
}

func TestMonteCarloCancel(t *testing.T) {
	c := tolLoad(t, tolRC)
	ev := tolEvaluator(t, c, "out", "f3db")
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	last := 0
	res, err := MonteCarlo(ctx, c, ev, MonteCarloOptions{Runs: 100000, Seed: 1, Workers: 2, Progress: func(done int) {
		if done <= last {
			t.Errorf("progress %d after %d", done, last)
		}
		last = done
		if done == 100 {
			cancel()
		}
	}})
	if err != nil {
		t.Fatal(err)
	}
	if !res.Cancelled || res.Finished < 100 || res.Finished > 110 || len(res.Metrics[0].Samples) != res.Finished {
		t.Errorf("cancelled %v finished %d samples %d; want partial ≈ 100", res.Cancelled, res.Finished, len(res.Metrics[0].Samples))
	}
	if last != res.Finished {
		t.Errorf("last progress %d, finished %d", last, res.Finished)
	}
	// The interrupted run covers exactly the first Finished draws: the same
	// seed with that many runs gives bit-identical figures.
	again, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: res.Finished, Seed: 1, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	a, b := res.Metrics[0], again.Metrics[0]
	if a.Mean != b.Mean || a.Std != b.Std || a.Min != b.Min || a.Max != b.Max || a.P00135 != b.P00135 || a.P99865 != b.P99865 {
		t.Errorf("interrupted at %d runs: %+v; --runs %d: %+v", res.Finished, a, res.Finished, b)
	}
	ctx2, cancel2 := context.WithCancel(context.Background())
	cancel2()
	if _, err := MonteCarlo(ctx2, c, ev, MonteCarloOptions{Runs: 10}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled before start: %v", err)
	}
}

// failAbove fails every run whose R1 is above its nominal.
type failAbove struct{ nominal float64 }

func (failAbove) Metrics() []string { return []string{"r1"} }

func (f failAbove) Eval(c *netlist.Circuit) ([]float64, error) {
	p, _ := c.Part("R1")
	if p.Value > f.nominal {
		return nil, errors.New("singular draw")
	}
	return []float64{p.Value}, nil
}

func TestMonteCarloFailures(t *testing.T) {
	c := tolLoad(t, tolRC)
	const runs = 1000
	res := tolMonteCarlo(t, c, failAbove{10e3}, MonteCarloOptions{Runs: runs, Seed: 5})
	// Half the uniform draws are above nominal; binomial σ ≈ 16.
	if res.Failed < 400 || res.Failed > 600 || res.FirstFailure == nil || len(res.Metrics[0].Samples) != runs-res.Failed {
		t.Errorf("failed %d (first %v), samples %d", res.Failed, res.FirstFailure, len(res.Metrics[0].Samples))
	}
	if res.Metrics[0].Max > 10e3 {
		t.Errorf("a failed run leaked into the samples: max %v", res.Metrics[0].Max)
	}
	if _, err := MonteCarlo(context.Background(), c, failAbove{0}, MonteCarloOptions{Runs: 10}); err == nil {
		t.Error("all runs failing is not an error")
	}
	if _, err := MonteCarlo(context.Background(), c, failAbove{10e3}, MonteCarloOptions{Runs: 0}); err == nil {
		t.Error("0 runs accepted")
	}
}

func TestPercentileType7(t *testing.T) {
	// Hyndman & Fan type 7 on 1..5: h = 4p, Q = x[⌊h⌋] + frac(h)·Δ
	// (evaluated from the definition in Hyndman & Fan, Sample Quantiles in
	// Statistical Packages, The American Statistician 50(4), 1996).
	x := []float64{1, 2, 3, 4, 5}
	for _, tc := range []struct{ p, want float64 }{
		{0, 1}, {0.1, 1.4}, {0.25, 2}, {0.5, 3}, {0.9, 4.6}, {1, 5},
		{ProbLow3Sigma, 1.0054}, {ProbHigh3Sigma, 4.9946},
	} {
		if got := Percentile(x, tc.p); math.Abs(got-tc.want) > 1e-12 {
			t.Errorf("Percentile(1..5, %v) = %v; want %v", tc.p, got, tc.want)
		}
	}
	if !math.IsNaN(Percentile(nil, 0.5)) || Percentile([]float64{7}, 0.3) != 7 {
		t.Error("degenerate inputs")
	}
}

// tol6thOrder is a 6th-order Butterworth low-pass at 1 kHz: three
// unity-gain Sallen-Key sections (Q = 0.5176, 0.7071, 1.9319) on real
// op-amps, every R ±1 % and C ±5 %.
const tol6thOrder = `
let C0 = 10nF
let R = 15.9155k
Vin: voltage source (in, gnd) 1
R11: resistor (in, a1) R ±1%
R12: resistor (a1, b1) R ±1%
C11: capacitor (a1, o1) 2*0.5176*C0 ±5%
C12: capacitor (b1, gnd) C0/(2*0.5176) ±5%
U1: opamp (b1, o1, o1) a0=200k gbw=3MHz
R21: resistor (o1, a2) R ±1%
R22: resistor (a2, b2) R ±1%
C21: capacitor (a2, o2) 2*0.7071*C0 ±5%
C22: capacitor (b2, gnd) C0/(2*0.7071) ±5%
U2: opamp (b2, o2, o2) a0=200k gbw=3MHz
R31: resistor (o2, a3) R ±1%
R32: resistor (a3, b3) R ±1%
C31: capacitor (a3, out) 2*1.9319*C0 ±5%
C32: capacitor (b3, gnd) C0/(2*1.9319) ±5%
U3: opamp (b3, out, out) a0=200k gbw=3MHz
`

// BenchmarkMonteCarlo6thOrder10k times 10 000 Monte Carlo runs of the
// 6th-order filter with f3db from the extracted transfer function on all
// cores: one op is the whole analysis.
func BenchmarkMonteCarlo6thOrder10k(b *testing.B) {
	c := tolLoad(b, tol6thOrder)
	ev := tolEvaluator(b, c, "out", "f3db")
	for b.Loop() {
		res, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: 10000, Seed: 1})
		if err != nil || res.Failed != 0 {
			b.Fatal(err, res.Failed)
		}
	}
}

// BenchmarkMonteCarlo6thOrderSpot10k times 10 000 runs of the 6th-order
// filter with spot metrics only (gain@1kHz, phase@1kHz), which skip the
// pole extraction.
func BenchmarkMonteCarlo6thOrderSpot10k(b *testing.B) {
	c := tolLoad(b, tol6thOrder)
	ev := tolEvaluator(b, c, "out", "gain@1kHz", "phase@1kHz")
	for b.Loop() {
		res, err := MonteCarlo(context.Background(), c, ev, MonteCarloOptions{Runs: 10000, Seed: 1})
		if err != nil || res.Failed != 0 {
			b.Fatal(err, res.Failed)
		}
	}
}

// TestDrawerMatchesDrawFactors checks that a worker's reseeded generator
// (Workspaces.Draw) gives each run exactly the factors of drawFactors, a
// generator made anew for the run, in any order of runs, for uniform and
// normal items.
func TestDrawerMatchesDrawFactors(t *testing.T) {
	c := tolLoad(t, directCircuit(t, ""))
	ws := NewWorkspaces(c, 1)
	want := make([]float64, len(c.Variations))
	for _, run := range []int{0, 1, 2, 1000, 7, 7, 123456, 3} {
		ws.Draw(0, 42, run)
		drawFactors(c.Variations, 42, run, want)
		for i, f := range ws.Factors(0) {
			if f != want[i] {
				t.Fatalf("run %d, item %s: %v drawn, %v from drawFactors", run, c.Variations[i].Name, f, want[i])
			}
		}
	}
}
