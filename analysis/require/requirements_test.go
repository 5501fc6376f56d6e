package require

import (
	"context"
	"errors"
	"math"
	"nodal/analysis/transfer"
	"nodal/analysis/variation"
	"strings"
	"sync/atomic"
	"testing"

	"nodal/mna"
	"nodal/netlist"
)

// TestWilsonPublished checks the 95 % Wilson score interval against the
// worked examples of R. G. Newcombe, "Two-sided confidence intervals for
// the single proportion: comparison of seven methods", Statistics in
// Medicine 17:857–872 (1998), table I, method 3 (values from memory, four
// decimals).
func TestWilsonPublished(t *testing.T) {
	tests := []struct {
		k, n   int
		lo, hi float64
	}{
		{81, 263, 0.2553, 0.3662},
		{15, 148, 0.0624, 0.1605},
		{0, 20, 0.0000, 0.1611},
		{1, 29, 0.0061, 0.1718},
	}
	for _, tc := range tests {
		p := NewProportion(tc.k, tc.n)
		if math.Abs(p.Lo-tc.lo) > 5e-5 || math.Abs(p.Hi-tc.hi) > 5e-5 {
			t.Errorf("%d/%d: [%.4f, %.4f], want [%.4f, %.4f]", tc.k, tc.n, p.Lo, p.Hi, tc.lo, tc.hi)
		}
		if !(p.Lo <= p.Fraction && p.Fraction <= p.Hi) {
			t.Errorf("%d/%d: %v outside [%v, %v]", tc.k, tc.n, p.Fraction, p.Lo, p.Hi)
		}
	}
}

// TestWilsonClosedForm checks that the interval ends are the roots of
// (p̂ − p)² = z²·p(1−p)/n (Wilson 1927), the definition of the score
// interval, and that the end at k = 0 or k = n is exactly 0 or 1.
func TestWilsonClosedForm(t *testing.T) {
	for _, c := range [][2]int{{0, 10}, {3, 10}, {10, 10}, {1, 1000}, {500, 1000}, {999, 1000}, {7, 13}} {
		k, n := c[0], c[1]
		lo, hi := Wilson(k, n, z95)
		ph := float64(k) / float64(n)
		for _, p := range []float64{lo, hi} {
			if p == 0 && k == 0 || p == 1 && k == n {
				continue
			}
			lhs := (ph - p) * (ph - p)
			rhs := z95 * z95 * p * (1 - p) / float64(n)
			if math.Abs(lhs-rhs) > 1e-12 {
				t.Errorf("%d/%d: end %v: (p̂−p)² = %v, z²p(1−p)/n = %v", k, n, p, lhs, rhs)
			}
		}
		if k == 0 && lo != 0 || k == n && hi != 1 {
			t.Errorf("%d/%d: [%v, %v]", k, n, lo, hi)
		}
	}
	if p := NewProportion(0, 0); !math.IsNaN(p.Fraction) || !math.IsNaN(p.Lo) {
		t.Errorf("0 runs: %+v", p)
	}
}

func TestJudge(t *testing.T) {
	reqs := []netlist.Requirement{
		{Metric: "f3db", Op: netlist.Within, Lo: 1900, Hi: 2100},
		{Metric: "gain@20kHz", Op: netlist.Below, Hi: -35},
	}
	nan := math.NaN()
	tests := []struct {
		name       string
		nominal    []float64
		corners    [][]float64
		runs       [][]float64
		nomPass    []bool
		worstPass  []bool
		worstRange [][2]float64
		yield      []int
		all        int
	}{
		{
			name:       "all pass",
			nominal:    []float64{2000, -40},
			corners:    [][]float64{{1950, -38}, {2050, -42}},
			runs:       [][]float64{{2000, -40}, {1990, -39}},
			nomPass:    []bool{true, true},
			worstPass:  []bool{true, true},
			worstRange: [][2]float64{{1950, 2050}, {-42, -38}},
			yield:      []int{2, 2}, all: 2,
		},
		{
			name:       "worst case only",
			nominal:    []float64{2000, -40},
			corners:    [][]float64{{1850, -38}, {2050, -34}},
			runs:       [][]float64{{1850, -40}, {2000, -34}, {2000, -36}},
			nomPass:    []bool{true, true},
			worstPass:  []bool{false, false},
			worstRange: [][2]float64{{1850, 2050}, {-40, -34}},
			yield:      []int{2, 2}, all: 1,
		},
		{
			name:       "nominal fails, NaN fails",
			nominal:    []float64{2200, nan},
			corners:    [][]float64{{nan, -50}},
			runs:       [][]float64{{nan, nan}},
			nomPass:    []bool{false, false},
			worstPass:  []bool{false, false},
			worstRange: [][2]float64{{2200, 2200}, {-50, -50}},
			yield:      []int{0, 0}, all: 0,
		},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			v, err := Judge(reqs, tc.nominal, tc.corners, tc.runs)
			if err != nil {
				t.Fatal(err)
			}
			for j, d := range v.Verdicts {
				if d.NominalPass != tc.nomPass[j] || d.WorstPass != tc.worstPass[j] {
					t.Errorf("req %d: nominal %v worst %v, want %v %v", j, d.NominalPass, d.WorstPass, tc.nomPass[j], tc.worstPass[j])
				}
				if d.WorstMin != tc.worstRange[j][0] || d.WorstMax != tc.worstRange[j][1] {
					t.Errorf("req %d: worst %v..%v, want %v", j, d.WorstMin, d.WorstMax, tc.worstRange[j])
				}
				if d.Yield.Passed != tc.yield[j] || d.Yield.Runs != len(tc.runs) {
					t.Errorf("req %d: yield %d/%d, want %d", j, d.Yield.Passed, d.Yield.Runs, tc.yield[j])
				}
			}
			if v.Yield.Passed != tc.all {
				t.Errorf("all: %d, want %d", v.Yield.Passed, tc.all)
			}
			wantNom, wantWorst := true, true
			for j := range reqs {
				wantNom = wantNom && tc.nomPass[j]
				wantWorst = wantWorst && tc.worstPass[j]
			}
			if v.PassNominal() != wantNom || v.PassWorst() != wantWorst {
				t.Errorf("PassNominal %v PassWorst %v", v.PassNominal(), v.PassWorst())
			}
		})
	}
	if _, err := Judge(reqs, []float64{1}, nil, nil); err == nil {
		t.Error("short nominal row accepted")
	}
	if _, err := Judge(reqs, []float64{1, 2}, nil, [][]float64{{1}}); err == nil {
		t.Error("short run row accepted")
	}
}

// rcSource is an RC low-pass of our own sensor-bridge scenario; R and C are
// uniform ±5 % and independent.
const rcSource = `title "bridge sense RC"
Vb: voltage source (in, gnd) 1
R1: resistor (in, out) 10k ±5%
C1: capacitor (out, gnd) 10nF ±5%
`

// rcCorner evaluates f3db = 1/(2πRC) of the RC low-pass in Hz, for every
// requirement of the circuit (all name f3db in these tests): the textbook
// corner of a first-order RC low-pass.
func rcCorner(c *netlist.Circuit) ([]float64, error) {
	r, _ := c.Part("R1")
	cp, _ := c.Part("C1")
	f := 1 / (2 * math.Pi * r.Value * cp.Value)
	out := make([]float64, len(c.Requirements))
	for i := range out {
		out[i] = f
	}
	return out, nil
}

// funcEval is an Evaluator from a function, with one metric per
// requirement of the circuit it is made for.
type funcEval struct {
	names []string
	fn    func(c *netlist.Circuit) ([]float64, error)
}

func (f funcEval) Metrics() []string                          { return f.names }
func (f funcEval) Eval(c *netlist.Circuit) ([]float64, error) { return f.fn(c) }

func evalFor(c *netlist.Circuit, fn func(c *netlist.Circuit) ([]float64, error)) funcEval {
	var names []string
	for _, r := range c.Requirements {
		names = append(names, r.Metric)
	}
	return funcEval{names, fn}
}

func loadRC(t *testing.T, reqs string) *netlist.Circuit {
	t.Helper()
	c, err := netlist.Load("rc.nodal", []byte(rcSource+reqs), nil)
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// rcPassProbability is P(f3db ≤ L) for the RC low-pass with R = R0·X and
// C = C0·Y, X and Y independent and uniform on [a, b] = [1−t, 1+t].
//
// f3db = 1/(2π·R·C) ≤ L  ⟺  X·Y ≥ k  with  k = 1/(2π·L·R0·C0) = f0/L.
// The joint density of (X, Y) is 1/(b−a)² on the square [a, b]². The curve
// xy = k crosses the square's top edge y = b at x = k/b.
//
// For ab ≤ k ≤ b² the passing region is a ≤ k/b ≤ x ≤ b, k/x ≤ y ≤ b:
//
//	P = 1/(b−a)² ∫_{k/b}^{b} (b − k/x) dx = (b² − k − k·ln(b²/k)) / (b−a)².
//
// For a² ≤ k ≤ ab the failing region is a ≤ x ≤ k/a, a ≤ y ≤ k/x:
//
//	1 − P = 1/(b−a)² ∫_{a}^{k/a} (k/x − a) dx = (k·ln(k/a²) − k + a²) / (b−a)².
//
// (P is 1 for k ≤ a² and 0 for k ≥ b².) This is the distribution of the
// product of two independent uniform variables; the two branches meet at
// k = ab.
func rcPassProbability(k, t float64) float64 {
	a, b := 1-t, 1+t
	w2 := (b - a) * (b - a)
	switch {
	case k <= a*a:
		return 1
	case k >= b*b:
		return 0
	case k >= a*b:
		return (b*b - k - k*math.Log(b*b/k)) / w2
	default:
		return 1 - (k*math.Log(k/(a*a))-k+a*a)/w2
	}
}

// TestRCPassProbabilityIntegral checks the closed form above against a
// direct numerical integration of P(Y ≥ k/X) over X (midpoint rule; Press
// et al., Numerical Recipes, ch. 4), which does not use the derivation.
func TestRCPassProbabilityIntegral(t *testing.T) {
	const tol = 0.05
	a, b := 1-tol, 1+tol
	for _, k := range []float64{0.91, 0.95, 0.9947, a * b, 1.0, 1.0268, 1.08, 1.1} {
		const n = 200000
		sum := 0.0
		for i := range n {
			x := a + (b-a)*(float64(i)+0.5)/n
			py := (b - k/x) / (b - a) // P(Y ≥ k/x)
			sum += math.Max(0, math.Min(1, py))
		}
		num := sum / n
		if got := rcPassProbability(k, tol); math.Abs(got-num) > 1e-6 {
			t.Errorf("k = %v: closed form %v, integral %v", k, got, num)
		}
	}
}

// TestVerifyYieldRC checks the Monte Carlo yield of `f3db below L` against
// the closed-form pass probability, in both branches of the product
// distribution: with N runs the observed yield has standard deviation
// √(p(1−p)/N) (binomial proportion; common practice); the test allows 4.5
// of them (a false alarm about once in 150 000 seeds; the seed is fixed, so
// the test is deterministic).
func TestVerifyYieldRC(t *testing.T) {
	const runs = 20000
	f0 := 1 / (2 * math.Pi * 10e3 * 10e-9)
	for _, limit := range []struct{ text string }{{"1.6kHz"}, {"1.55kHz"}, {"1.5kHz"}} {
		c := loadRC(t, "require f3db below "+limit.text+"\n")
		res, err := Verify(context.Background(), c, evalFor(c, rcCorner), VerifyOptions{Runs: runs, Seed: 7})
		if err != nil {
			t.Fatal(err)
		}
		L := c.Requirements[0].Hi
		p := rcPassProbability(f0/L, 0.05)
		y := res.Verdicts[0].Yield
		sigma := math.Sqrt(p * (1 - p) / runs)
		if math.Abs(y.Fraction-p) > 4.5*sigma {
			t.Errorf("%s: yield %.4f, closed form %.4f (σ %.4f)", limit.text, y.Fraction, p, sigma)
		}
		if res.Yield != y {
			t.Errorf("one requirement: overall yield %+v differs from its own %+v", res.Yield, y)
		}
		if !(y.Lo < y.Fraction && y.Fraction < y.Hi) || y.Hi-y.Lo > 4*1.96*sigma {
			t.Errorf("%s: Wilson interval [%v, %v] around %v", limit.text, y.Lo, y.Hi, y.Fraction)
		}
	}
}

// TestWilsonCoverageRC runs 400 small Monte Carlo verifications with
// different seeds: the 95 % Wilson interval should cover the closed-form
// pass probability in about 95 % of them (binomial sd of the count is
// √(400·0.95·0.05) ≈ 4.4, so 360..395 is a wide band; Wilson intervals are
// known to stay near nominal coverage for moderate n, Newcombe 1998).
func TestWilsonCoverageRC(t *testing.T) {
	c := loadRC(t, "require f3db below 1.6kHz\n")
	p := rcPassProbability(1/(2*math.Pi*10e3*10e-9)/1600, 0.05)
	covered := 0
	for seed := range uint64(400) {
		res, err := Verify(context.Background(), c, evalFor(c, rcCorner), VerifyOptions{Runs: 200, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		if y := res.Yield; y.Lo <= p && p <= y.Hi {
			covered++
		}
	}
	if covered < 360 || covered > 395 {
		t.Errorf("95 %% Wilson interval covered p in %d of 400 runs", covered)
	}
}

// TestVerifyWorstCaseRC: with R and C at ±5 %, f3db spans
// f0/(1.05)² .. f0/(0.95)² (f3db = 1/(2πRC), the first-order RC low-pass,
// common practice, falls as either rises), for the exhaustive corners and
// for the sign-based corners alike.
func TestVerifyWorstCaseRC(t *testing.T) {
	f0 := 1 / (2 * math.Pi * 10e3 * 10e-9)
	c := loadRC(t, "require f3db within 1.5kHz..1.7kHz\nrequire f3db within 1.4kHz..1.8kHz\n")
	for _, maxEx := range []int{0, 1} {
		res, err := Verify(context.Background(), c, evalFor(c, rcCorner), VerifyOptions{MaxExhaustive: maxEx})
		if err != nil {
			t.Fatal(err)
		}
		d := res.Verdicts[0]
		if math.Abs(d.WorstMin-f0/(1.05*1.05)) > 1e-9*f0 || math.Abs(d.WorstMax-f0/(0.95*0.95)) > 1e-9*f0 {
			t.Errorf("maxExhaustive %d: worst %v..%v, want %v..%v", maxEx, d.WorstMin, d.WorstMax, f0/(1.05*1.05), f0/(0.95*0.95))
		}
		// The span 1443.6 .. 1763.5 Hz leaves 1.5k..1.7k (nominal 1591.5 Hz
		// passes) and stays inside 1.4k..1.8k.
		if !d.NominalPass || d.WorstPass || !res.Verdicts[1].NominalPass || !res.Verdicts[1].WorstPass {
			t.Errorf("maxExhaustive %d: verdicts %+v", maxEx, res.Verdicts)
		}
		if maxEx == 0 && res.Corners != 4 {
			t.Errorf("%d corners, want 4", res.Corners)
		}
		if !math.IsNaN(d.Yield.Fraction) {
			t.Errorf("no runs: yield %v", d.Yield.Fraction)
		}
	}
}

func TestVerifyErrors(t *testing.T) {
	c := loadRC(t, "")
	if _, err := Verify(context.Background(), c, evalFor(c, rcCorner), VerifyOptions{}); err == nil {
		t.Error("no requirements accepted")
	}
	c = loadRC(t, "require f3db below 2kHz\n")
	boom := errors.New("boom")
	if _, err := Verify(context.Background(), c, evalFor(c, func(*netlist.Circuit) ([]float64, error) { return nil, boom }), VerifyOptions{}); !errors.Is(err, boom) {
		t.Errorf("nominal error: %v", err)
	}
	// A varied circuit that cannot be analysed fails, and is counted.
	var calls atomic.Int64
	flaky := func(d *netlist.Circuit) ([]float64, error) {
		if calls.Add(1) > 1 {
			return nil, boom
		}
		return rcCorner(d)
	}
	res, err := Verify(context.Background(), c, evalFor(c, flaky), VerifyOptions{Runs: 10})
	if err != nil {
		t.Fatal(err)
	}
	if res.Failed != 14 || res.Verdicts[0].WorstPass || res.Yield.Passed != 0 || !errors.Is(res.FirstFailure, boom) {
		t.Errorf("failed %d, worst %v, yield %d, first %q", res.Failed, res.Verdicts[0].WorstPass, res.Yield.Passed, res.FirstFailure)
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Verify(ctx, c, evalFor(c, rcCorner), VerifyOptions{Runs: 10}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: %v", err)
	}
}

// TestRequirementMetricsRC evaluates requirement metrics of the RC low-pass
// through MNA and Extract: f3db = 1/(2πRC) and |H(j·2πf0)| = 1/√2, i.e.
// −10·log10(2) = −3.0103 dB (first-order low-pass, any circuits textbook);
// q does not exist for a single real pole.
func TestRequirementMetricsRC(t *testing.T) {
	c := loadRC(t, "require f3db below 1.6kHz\nrequire gain@1.5915494kHz within -3.1dB..-2.9dB\nrequire q above 0.5\n")
	rm, err := NewRequirementMetrics(c, c.Requirements, mna.Input{}, mna.Output{Kind: mna.NodeVoltage, Node: "out"})
	if err != nil {
		t.Fatal(err)
	}
	vals, err := rm.Eval(c)
	if err != nil {
		t.Fatal(err)
	}
	f0 := 1 / (2 * math.Pi * 10e3 * 10e-9)
	if math.Abs(vals[0]-f0) > 1e-9*f0 {
		t.Errorf("f3db %v, want %v", vals[0], f0)
	}
	if want := -10 * math.Log10(2); math.Abs(vals[1]-want) > 1e-6 {
		t.Errorf("gain at f0 %v dB, want %v", vals[1], want)
	}
	why, err := rm.Explain(c)
	if err != nil || !math.IsNaN(vals[2]) || !errors.Is(why[2], transfer.ErrNoPolePair) || why[0] != nil {
		t.Errorf("q: %v, why %v, err %v", vals[2], why, err)
	}
	// The full path agrees with the closed-form evaluator on the worst case.
	res, err := Verify(context.Background(), c, rm, VerifyOptions{Runs: 50, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	if d := res.Verdicts[0]; math.Abs(d.WorstMin-f0/(1.05*1.05)) > 1e-6*f0 || math.Abs(d.WorstMax-f0/(0.95*0.95)) > 1e-6*f0 {
		t.Errorf("worst %v..%v", d.WorstMin, d.WorstMax)
	}
	// Verify's corners are WorstCase's: the same extremes, exhaustive and
	// sign-based.
	for _, maxEx := range []int{0, 1} {
		wc, err := variation.WorstCase(context.Background(), c, rm, variation.WorstCaseOptions{MaxExhaustive: maxEx})
		if err != nil {
			t.Fatal(err)
		}
		vr, err := Verify(context.Background(), c, rm, VerifyOptions{MaxExhaustive: maxEx})
		if err != nil {
			t.Fatal(err)
		}
		if d := vr.Verdicts[0]; d.WorstMin != wc.Metrics[0].Min || d.WorstMax != wc.Metrics[0].Max || vr.Corners != wc.Corners {
			t.Errorf("maxExhaustive %d: verify %v..%v (%d corners), worst case %v..%v (%d)", maxEx, d.WorstMin, d.WorstMax, vr.Corners, wc.Metrics[0].Min, wc.Metrics[0].Max, wc.Corners)
		}
	}
	bad := []netlist.Requirement{{Metric: "bandwidth"}}
	if _, err := NewRequirementMetrics(c, bad, mna.Input{}, mna.Output{}); err == nil || !strings.Contains(err.Error(), "f3db") {
		t.Errorf("unknown metric: %v", err)
	}
}
