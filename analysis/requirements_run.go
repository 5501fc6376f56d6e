package analysis

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"

	"nodal/mna"
	"nodal/netlist"
)

// MetricsFunc evaluates a circuit's requirement metrics: one value per
// requirement of the circuit, each in the requirement's unit, NaN for a
// value that does not exist (no -3 dB point, say). An error means the
// circuit could not be analysed at all.
type MetricsFunc func(c *netlist.Circuit) ([]float64, error)

// VerifyOptions controls Verify.
type VerifyOptions struct {
	// Runs is the number of Monte Carlo runs; 0 skips Monte Carlo (the
	// yields are then NaN).
	Runs int
	// Seed makes the Monte Carlo draws reproducible.
	Seed uint64
	// MaxExhaustive is the most toleranced items for which every vertex of
	// the tolerance box (2^n corners) is evaluated; above it the corners
	// follow the sign of each item's one-at-a-time effect on each metric
	// (two corners per requirement). Zero means 10.
	MaxExhaustive int
}

// VerifyResult is a Verification with the count of varied circuits that
// could not be analysed (they count as failing every requirement).
type VerifyResult struct {
	*Verification
	Failed       int    // corners and runs whose circuit could not be analysed
	FirstFailure string // the first such error, for the report
}

// Verify evaluates every requirement of c at nominal values, at the
// worst-case corners of the toleranced items (each at 1 ± Tol.Rel; for a
// normal distribution Tol.Rel is 3σ) and over opt.Runs Monte Carlo draws
// (uniform over 1 ± Tol.Rel, or normal with σ = Tol.Rel/3, one draw per
// Variation so a toleranced let is shared by all its uses).
func Verify(ctx context.Context, c *netlist.Circuit, eval MetricsFunc, opt VerifyOptions) (*VerifyResult, error) {
	if len(c.Requirements) == 0 {
		return nil, fmt.Errorf("verify: the circuit has no require statements")
	}
	if opt.Runs < 0 {
		return nil, fmt.Errorf("verify: runs must be ≥ 0, got %d", opt.Runs)
	}
	nominal, err := eval(c)
	if err != nil {
		return nil, fmt.Errorf("verify: at nominal values: %w", err)
	}
	if len(nominal) != len(c.Requirements) {
		return nil, fmt.Errorf("verify: %d metric values for %d requirements", len(nominal), len(c.Requirements))
	}
	res := &VerifyResult{}
	at := func(f []float64) ([]float64, error) {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		vals, err := evalVaried(c, eval, f)
		if err != nil {
			res.Failed++
			if res.FirstFailure == "" {
				res.FirstFailure = err.Error()
			}
			vals = nanRow(len(nominal))
		}
		return vals, nil
	}
	corners, err := worstCorners(c.Variations, nominal, opt.MaxExhaustive, at)
	if err != nil {
		return nil, err
	}
	rng := rand.New(rand.NewPCG(opt.Seed, opt.Seed^0x9e3779b97f4a7c15))
	runs := make([][]float64, 0, opt.Runs)
	for range opt.Runs {
		row, err := at(drawFactors(rng, c.Variations))
		if err != nil {
			return nil, err
		}
		runs = append(runs, row)
	}
	v, err := Judge(c.Requirements, nominal, corners, runs)
	if err != nil {
		return nil, err
	}
	res.Verification = v
	return res, nil
}

// evalVaried evaluates the circuit with multiplicative factors on its
// Variations.
func evalVaried(c *netlist.Circuit, eval MetricsFunc, factors []float64) ([]float64, error) {
	d, err := c.Vary(factors)
	if err != nil {
		return nil, err
	}
	vals, err := eval(d)
	if err != nil {
		return nil, err
	}
	if len(vals) != len(c.Requirements) {
		return nil, fmt.Errorf("%d metric values for %d requirements", len(vals), len(c.Requirements))
	}
	return vals, nil
}

func nanRow(n int) []float64 {
	r := make([]float64, n)
	for i := range r {
		r[i] = math.NaN()
	}
	return r
}

// drawFactors draws one factor per Variation.
func drawFactors(rng *rand.Rand, vars []netlist.Variation) []float64 {
	f := make([]float64, len(vars))
	for i, v := range vars {
		if v.Tol.Dist == netlist.Normal {
			f[i] = 1 + v.Tol.Rel/3*rng.NormFloat64()
		} else {
			f[i] = 1 + v.Tol.Rel*(2*rng.Float64()-1)
		}
	}
	return f
}

// worstCorners evaluates the worst-case corners and returns their metric
// rows. at evaluates one factor vector.
func worstCorners(vars []netlist.Variation, nominal []float64, maxExhaustive int, at func([]float64) ([]float64, error)) ([][]float64, error) {
	n := len(vars)
	if n == 0 {
		return nil, nil
	}
	if maxExhaustive <= 0 {
		maxExhaustive = 10
	}
	var out [][]float64
	if n <= maxExhaustive {
		for mask := 0; mask < 1<<n; mask++ {
			f := make([]float64, n)
			for i, v := range vars {
				f[i] = 1 - v.Tol.Rel
				if mask&(1<<i) != 0 {
					f[i] = 1 + v.Tol.Rel
				}
			}
			row, err := at(f)
			if err != nil {
				return nil, err
			}
			out = append(out, row)
		}
		return out, nil
	}
	// One-at-a-time effects: sign[i][j] is the direction in which raising
	// item i moves metric j.
	sign := make([][]float64, n)
	for i, v := range vars {
		f := ones(n)
		f[i] = 1 + v.Tol.Rel
		row, err := at(f)
		if err != nil {
			return nil, err
		}
		sign[i] = make([]float64, len(nominal))
		for j := range nominal {
			if row[j] < nominal[j] {
				sign[i][j] = -1
			} else {
				sign[i][j] = 1
			}
		}
	}
	seen := map[string]bool{}
	for j := range nominal {
		for _, dir := range []float64{1, -1} {
			f := make([]float64, n)
			key := make([]byte, n)
			for i, v := range vars {
				s := dir * sign[i][j]
				f[i] = 1 + s*v.Tol.Rel
				key[i] = '+'
				if s < 0 {
					key[i] = '-'
				}
			}
			if seen[string(key)] {
				continue
			}
			seen[string(key)] = true
			row, err := at(f)
			if err != nil {
				return nil, err
			}
			out = append(out, row)
		}
	}
	return out, nil
}

func ones(n int) []float64 {
	f := make([]float64, n)
	for i := range f {
		f[i] = 1
	}
	return f
}

// RequirementMetrics evaluates the metrics of a list of requirements on the
// transfer function from one input to one output: the standard
// MetricsFunc of `verify` and `snap`.
type RequirementMetrics struct {
	metrics []Metric
	in      mna.Input
	out     mna.Output
}

// NewRequirementMetrics parses the metric of every requirement. An
// unknown metric is an error naming the requirement and the valid metrics.
func NewRequirementMetrics(reqs []netlist.Requirement, in mna.Input, out mna.Output) (*RequirementMetrics, error) {
	r := &RequirementMetrics{in: in, out: out}
	for _, q := range reqs {
		m, err := ParseMetric(q.Metric)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", q.Pos, err)
		}
		r.metrics = append(r.metrics, m)
	}
	return r, nil
}

// Eval returns one value per requirement for c, NaN where the metric does
// not exist for this circuit (Explain says why). It fails when the MNA
// system cannot be built or its transfer function extracted.
func (r *RequirementMetrics) Eval(c *netlist.Circuit) ([]float64, error) {
	vals, _, err := r.evaluate(c)
	return vals, err
}

// Explain returns, per requirement, the reason its metric does not exist
// for c (nil where it does), or the error that stops the analysis.
func (r *RequirementMetrics) Explain(c *netlist.Circuit) ([]error, error) {
	_, why, err := r.evaluate(c)
	return why, err
}

func (r *RequirementMetrics) evaluate(c *netlist.Circuit) ([]float64, []error, error) {
	sys, err := mna.Build(c, r.in, r.out)
	if err != nil {
		return nil, nil, err
	}
	tf, err := Extract(sys)
	if err != nil {
		return nil, nil, err
	}
	vals := make([]float64, len(r.metrics))
	why := make([]error, len(r.metrics))
	for i, m := range r.metrics {
		v, err := m.Eval(tf)
		if err != nil {
			v, why[i] = math.NaN(), err
		}
		vals[i] = v
	}
	return vals, why, nil
}
