package variation

import (
	"context"
	"errors"
	"fmt"

	"nodal/netlist"
)

// MonteCarloOptions configure MonteCarlo and Envelope.
type MonteCarloOptions struct {
	Runs    int    // number of runs, > 0
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
// (successful or failed); Failed those whose evaluation failed, with
// FirstFailure the error of the lowest-numbered one. Cancelled is true when
// the context stopped the analysis before all Runs finished: the
// statistics then cover the finished runs only.
type MonteCarloResult struct {
	Runs         int
	Seed         uint64
	Finished     int
	Failed       int
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
	if opt.Runs <= 0 {
		return nil, fmt.Errorf("monte carlo: %d runs; want at least 1", opt.Runs)
	}
	names := ev.Metrics()
	nominal, err := evalNominal("monte carlo", c, ev)
	if err != nil {
		return nil, err
	}
	m := len(names)
	vals := make([]float64, opt.Runs*m)
	status := make([]runStatus, opt.Runs)
	errs := make([]error, opt.Runs)
	nv := len(c.Variations)
	workers := resolveWorkers(opt.Workers, opt.Runs)
	buf := make([][]float64, workers)
	for w := range buf {
		buf[w] = make([]float64, nv)
	}
	finished, cancelled := forEachJob(ctx, opt.Runs, workers, opt.Progress, func(w, i int) {
		drawFactors(c.Variations, opt.Seed, i, buf[w])
		v, err := evalVaried(c, ev, buf[w], m)
		if err != nil {
			status[i], errs[i] = runFailed, err
			return
		}
		copy(vals[i*m:], v)
		status[i] = runOK
	})
	res := &MonteCarloResult{Runs: opt.Runs, Seed: opt.Seed, Finished: finished, Cancelled: cancelled, Items: c.Variations}
	samples := make([][]float64, m)
	for i, st := range status {
		switch st {
		case runFailed:
			if res.Failed == 0 {
				res.FirstFailure = fmt.Errorf("run %d: %w", i, errs[i])
			}
			res.Failed++
		case runOK:
			for j := range m {
				samples[j] = append(samples[j], vals[i*m+j])
			}
		}
	}
	if finished == 0 {
		return nil, fmt.Errorf("monte carlo: stopped before any run finished: %w", context.Cause(ctx))
	}
	if res.Failed == finished {
		return nil, fmt.Errorf("monte carlo: all %d runs failed; first: %w", finished, res.FirstFailure)
	}
	for j, name := range names {
		res.Metrics = append(res.Metrics, summarise(name, nominal[j], samples[j]))
	}
	return res, nil
}

// runStatus records what became of one run.
type runStatus uint8

const (
	runPending runStatus = iota
	runOK
	runFailed
)

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

// evalVaried evaluates ev on c varied by factors, checking the count.
func evalVaried(c *netlist.Circuit, ev Evaluator, factors []float64, m int) ([]float64, error) {
	for _, f := range factors {
		if !(f > 0) {
			return nil, errors.New("a drawn factor is ≤ 0")
		}
	}
	vc, err := c.Vary(factors)
	if err != nil {
		return nil, err
	}
	v, err := ev.Eval(vc)
	if err != nil {
		return nil, err
	}
	if len(v) != m {
		return nil, fmt.Errorf("evaluator gave %d values for %d metrics", len(v), m)
	}
	return v, nil
}
