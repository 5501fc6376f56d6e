package variation

import (
	"context"
	"errors"
	"fmt"

	"nodal/netlist"
)

// The building blocks of a tolerance run, shared with package require
// (which runs the nominal circuit, the worst-case corners and a yield
// Monte Carlo over the same draws).

// DrawFactors fills dst (len(vars)) with the multiplicative factors of
// run run, exactly as MonteCarlo draws them: run i of a verification and
// run i of a Monte Carlo with the same seed see the same circuit.
func DrawFactors(vars []netlist.Variation, seed uint64, run int, dst []float64) {
	drawFactors(vars, seed, run, dst)
}

// ResolveWorkers returns the worker count for n jobs: workers ≤ 0 means
// runtime.NumCPU(); never more than n, never less than 1.
func ResolveWorkers(workers, n int) int { return resolveWorkers(workers, n) }

// ForEachJob calls job(worker, i) for every i in [0, n) on
// ResolveWorkers(workers, n) goroutines and progress(done) after each
// finished job; it stops starting jobs when ctx is cancelled and returns
// the number finished and whether it stopped early.
func ForEachJob(ctx context.Context, n, workers int, progress func(done int), job func(worker, i int)) (finished int, cancelled bool) {
	return forEachJob(ctx, n, workers, progress, job)
}

// EvalNominal evaluates ev on the nominal circuit for the analysis what
// (named in the error), checking it gives one value per metric.
func EvalNominal(what string, c *netlist.Circuit, ev Evaluator) ([]float64, error) {
	return evalNominal(what, c, ev)
}

// Workspaces are the working copies of a tolerance run, one per worker:
// the factors of the worker's current draw (Factors) and a copy of the
// circuit varied in place by them (netlist.Circuit.VaryInto), so that no
// run copies the circuit. Worker w uses only its own entry; different
// workers may run concurrently.
type Workspaces struct {
	c       *netlist.Circuit
	factors [][]float64
	circ    []*netlist.Circuit
	draws   []*drawer
}

// NewWorkspaces returns the workspaces of workers (≥ 1) workers on c.
func NewWorkspaces(c *netlist.Circuit, workers int) *Workspaces {
	ws := &Workspaces{c: c, factors: make([][]float64, workers), circ: make([]*netlist.Circuit, workers), draws: make([]*drawer, workers)}
	for w := range ws.factors {
		ws.factors[w] = make([]float64, len(c.Variations))
		ws.circ[w] = c.Clone()
		ws.draws[w] = newDrawer()
	}
	return ws
}

// Factors returns worker w's factors (len(c.Variations)), to be filled
// before Vary or Eval (or by Draw).
func (ws *Workspaces) Factors(w int) []float64 { return ws.factors[w] }

// Draw fills worker w's factors with those of Monte Carlo run run, as
// DrawFactors does.
func (ws *Workspaces) Draw(w int, seed uint64, run int) {
	ws.draws[w].draw(ws.c.Variations, seed, run, ws.factors[w])
}

// Vary returns worker w's copy of c varied by its factors (all > 0),
// valid until the worker's next Vary or Eval.
func (ws *Workspaces) Vary(w int) (*netlist.Circuit, error) {
	for _, f := range ws.factors[w] {
		if !(f > 0) {
			return nil, errors.New("a drawn factor is ≤ 0")
		}
	}
	if err := ws.c.VaryInto(ws.circ[w], ws.factors[w]); err != nil {
		return nil, err
	}
	return ws.circ[w], nil
}

// Eval evaluates ev on c varied by worker w's factors, checking that it
// gives m values.
func (ws *Workspaces) Eval(w int, ev Evaluator, m int) ([]float64, error) {
	vc, err := ws.Vary(w)
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

// Derivatives returns d[i][j] = ∂M_j/∂(x_i/x_i0), the change of metric j
// per unit relative change of variation i, by central differences.
func Derivatives(ctx context.Context, c *netlist.Circuit, ev Evaluator, opt SensitivityOptions) ([][]float64, error) {
	return derivatives(ctx, c, ev, opt)
}

// StreamJobs runs job on workers goroutines and hands the results to
// consume in index order, memory bounded whatever n is; after a
// cancellation consume has seen exactly jobs 0 … consumed−1 (see
// streamJobs).
func StreamJobs[T any](ctx context.Context, n, workers int, progress func(done int), job func(worker, i int) T, consume func(i int, v T)) (consumed int) {
	return streamJobs(ctx, n, workers, progress, job, consume)
}

// CheckRuns refuses a run count outside [1, MaxRuns] for the analysis
// what (named in the error).
func CheckRuns(what string, runs int) error { return checkRuns(what, runs) }
