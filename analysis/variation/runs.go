package variation

import (
	"context"

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

// EvalVaried evaluates ev on c varied by factors (all > 0), checking it
// gives m values.
func EvalVaried(c *netlist.Circuit, ev Evaluator, factors []float64, m int) ([]float64, error) {
	return evalVaried(c, ev, factors, m)
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
