package variation

import (
	"context"
	"errors"
	"fmt"

	"nodal/analysis/stability"
	"nodal/netlist"
)

// MonteCarloOptions configure MonteCarlo and Envelope.
type MonteCarloOptions struct {
	Runs    int    // number of runs, 1 … MaxRuns
	Seed    uint64 // the same seed gives the same draws, whatever Workers is
	Workers int    // goroutines; ≤ 0 means runtime.NumCPU()
	// Progress, if set, is called after each finished run with the number
	// finished so far; calls are serialised and the count increases.
	Progress func(done int)
}

// MonteCarloResult is the outcome of MonteCarlo.
//
// Run i draws its factors from a stream fixed by (Seed, i) alone (see
// drawFactors), and results are stored by run index, so the numbers are
// bit-identical for any worker count. Finished counts the runs that ran
// (successful or failed), at most MaxRuns; Failed those whose evaluation failed, with
// FirstFailure the error of the lowest-numbered one. Cancelled is true when
// the context stopped the analysis before all Runs finished: Finished is
// then the number of leading runs 0 … Finished−1 the statistics cover
// (later runs that happened to finish are left out), so the same seed with
// Runs = Finished gives the same figures.
type MonteCarloResult struct {
	Runs         int
	Seed         uint64
	Finished     int
	Failed       int
	Unstable     int // of the Failed runs, those whose build was not stable (stability.ErrUnstable)
	FirstFailure error
	Cancelled    bool
	Items        []netlist.Variation // the toleranced items drawn, in order
	Metrics      []MetricStats       // one per ev.Metrics(), in order
}

// MonteCarlo evaluates ev on opt.Runs random variants of c (Circuit.Vary
// with factors from drawFactors: uniform over nominal·(1 ± tol) or normal
// with σ = tol/3, untruncated; one draw per Variation) and summarises each
// metric. The nominal values come from ev.Eval(c); a nominal failure is an
// error. Failed runs are counted, not fatal, unless every finished run
// failed. Cancelling ctx returns the finished runs with Cancelled set (an
// error only when no run finished).
func MonteCarlo(ctx context.Context, c *netlist.Circuit, ev Evaluator, opt MonteCarloOptions) (*MonteCarloResult, error) {
	if err := checkRuns("monte carlo", opt.Runs); err != nil {
		return nil, err
	}
	names := ev.Metrics()
	nominal, err := evalNominal("monte carlo", c, ev)
	if err != nil {
		return nil, err
	}
	m := len(names)
	workers := resolveWorkers(opt.Workers, opt.Runs)
	ws := NewWorkspaces(c, workers)
	acc := make([]*metricAccumulator, m)
	for j := range acc {
		acc[j] = newMetricAccumulator(opt.Runs)
	}
	res := &MonteCarloResult{Runs: opt.Runs, Seed: opt.Seed, Items: c.Variations}
	type outcome struct {
		vals []float64
		err  error
	}
	res.Finished = streamJobs(ctx, opt.Runs, workers, opt.Progress, func(w, i int) outcome {
		ws.Draw(w, opt.Seed, i)
		v, err := ws.Eval(w, ev, m)
		return outcome{v, err}
	}, func(i int, o outcome) {
		if o.err != nil {
			if res.Failed == 0 {
				res.FirstFailure = fmt.Errorf("run %d: %w", i, o.err)
			}
			res.Failed++
			if errors.Is(o.err, stability.ErrUnstable) {
				res.Unstable++
			}
			return
		}
		for j, v := range o.vals {
			acc[j].add(v)
		}
	})
	res.Cancelled = res.Finished < opt.Runs
	if res.Finished == 0 {
		return nil, fmt.Errorf("monte carlo: stopped before any run finished: %w", context.Cause(ctx))
	}
	if res.Failed == res.Finished {
		return nil, fmt.Errorf("monte carlo: all %d runs failed; first: %w", res.Finished, res.FirstFailure)
	}
	for j, name := range names {
		res.Metrics = append(res.Metrics, acc[j].stats(name, nominal[j]))
	}
	return res, nil
}

// checkRuns refuses a run count outside [1, MaxRuns] for the analysis what.
func checkRuns(what string, runs int) error {
	if runs <= 0 {
		return fmt.Errorf("%s: %d runs; want at least 1", what, runs)
	}
	if runs > MaxRuns {
		return fmt.Errorf("%s: %d runs is more than the maximum of %d; ask for fewer (100,000 runs already give the ±3σ points to a few %% of σ)", what, runs, MaxRuns)
	}
	return nil
}

// evalNominal evaluates ev on the nominal circuit for the analysis what.
func evalNominal(what string, c *netlist.Circuit, ev Evaluator) ([]float64, error) {
	v, err := ev.Eval(c)
	if err != nil {
		return nil, fmt.Errorf("%s: nominal circuit: %w", what, err)
	}
	if len(v) != len(ev.Metrics()) {
		return nil, fmt.Errorf("%s: evaluator gave %d values for %d metrics", what, len(v), len(ev.Metrics()))
	}
	return v, nil
}
