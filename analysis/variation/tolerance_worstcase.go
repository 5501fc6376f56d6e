package variation

import (
	"context"
	"errors"
	"fmt"
	"math"

	"nodal/analysis/stability"
	"nodal/netlist"
)

// DefaultMaxExhaustiveItems is the largest number of toleranced items for
// which WorstCase tries every one of the 2^k corners.
const DefaultMaxExhaustiveItems = 12

// WorstCaseOptions configure WorstCase.
type WorstCaseOptions struct {
	// MaxExhaustive is the largest item count for a full corner search;
	// ≤ 0 means DefaultMaxExhaustiveItems.
	MaxExhaustive int
	Workers       int     // goroutines; ≤ 0 means runtime.NumCPU()
	RelStep       float64 // finite-difference step of the sensitivity signs; ≤ 0 means DefaultSensitivityStep
}

// ToleranceCorner is one tolerance corner: every item at nominal·(1 + tol) (High)
// or nominal·(1 − tol) (Low). For a normally distributed item ±tol is ±3σ.
// Both lists keep source order. In a WorstCaseMetric the lists name only
// the items the metric depends on: an item whose flip to its other end
// leaves the metric unchanged (to 1e-9 of its value or spread), or whose
// sensitivity is zero, is left out, as its end does not matter.
type ToleranceCorner struct {
	High []string
	Low  []string
}

// WorstCaseMetric is the extreme range of one metric over the corners
// tried, with the corner that gives each end.
type WorstCaseMetric struct {
	Metric               string
	Unit                 string
	Nominal, Min, Max    float64
	MinCorner, MaxCorner ToleranceCorner
}

// WorstCaseResult is the outcome of WorstCase. Exhaustive says whether all
// 2^k corners were tried; otherwise Corners were chosen from the signs of
// the sensitivities, two per metric (every item pushed in the direction
// that raises the metric, and the one that lowers it; an item with zero
// sensitivity is put low). Failed counts corners whose evaluation failed.
//
// Min and Max are over the corners only: for a metric that is not
// monotonic in some item (a peak, a phase) the true extreme may lie inside
// the tolerance box.
type WorstCaseResult struct {
	Items      []netlist.Variation
	Exhaustive bool
	Corners    int
	Failed     int
	Unstable   int // of the Failed corners, those whose circuit was not stable (stability.ErrUnstable)
	Metrics    []WorstCaseMetric
}

// WorstCase evaluates ev at the tolerance corners of c and reports each
// metric's extremes. A corner that fails is counted; all failing is an
// error, as is cancellation.
func WorstCase(ctx context.Context, c *netlist.Circuit, ev Evaluator, opt WorstCaseOptions) (*WorstCaseResult, error) {
	names := ev.Metrics()
	nominal, err := evalNominal("worst case", c, ev)
	if err != nil {
		return nil, err
	}
	k, m := len(c.Variations), len(names)
	limit := opt.MaxExhaustive
	if limit <= 0 {
		limit = DefaultMaxExhaustiveItems
	}
	res := &WorstCaseResult{Items: c.Variations, Exhaustive: k <= limit}
	var corners [][]bool // corners[n][i]: item i high
	var d [][]float64    // d[i][j]: derivative of metric j in item i (sign search only)
	if res.Exhaustive {
		corners = make([][]bool, 1<<k)
		for n := range corners {
			corners[n] = make([]bool, k)
			for i := range k {
				corners[n][i] = n&(1<<i) != 0
			}
		}
	} else {
		d, err = derivatives(ctx, c, ev, SensitivityOptions{RelStep: opt.RelStep, Workers: opt.Workers})
		if err != nil {
			return nil, fmt.Errorf("worst case: %w", err)
		}
		for j := range m {
			up, down := make([]bool, k), make([]bool, k)
			for i := range k {
				up[i], down[i] = d[i][j] > 0, d[i][j] < 0
			}
			corners = append(corners, up, down)
		}
	}
	res.Corners = len(corners)
	vals := make([][]float64, len(corners))
	errs := make([]error, len(corners))
	ws := NewWorkspaces(c, resolveWorkers(opt.Workers, len(corners)))
	_, cancelled := forEachJob(ctx, len(corners), opt.Workers, nil, func(w, n int) {
		f := ws.Factors(w)
		for i, v := range c.Variations {
			f[i] = 1 - v.Tol.Rel
			if corners[n][i] {
				f[i] = 1 + v.Tol.Rel
			}
		}
		vals[n], errs[n] = ws.Eval(w, ev, m)
	})
	if cancelled {
		return nil, fmt.Errorf("worst case: %w", context.Cause(ctx))
	}
	lo, hi := make([]int, m), make([]int, m)
	for j := range m {
		lo[j], hi[j] = -1, -1
	}
	var firstErr error
	for n, v := range vals {
		if errs[n] != nil {
			if firstErr == nil {
				firstErr = errs[n]
			}
			res.Failed++
			if errors.Is(errs[n], stability.ErrUnstable) {
				res.Unstable++
			}
			continue
		}
		for j := range m {
			if lo[j] < 0 || v[j] < vals[lo[j]][j] {
				lo[j] = n
			}
			if hi[j] < 0 || v[j] > vals[hi[j]][j] {
				hi[j] = n
			}
		}
	}
	if res.Failed == len(corners) {
		return nil, fmt.Errorf("worst case: every corner failed; first: %w", firstErr)
	}
	// matters says whether metric j at corner n depends on item i: with
	// every corner tried, flipping item i moves the value; with the sign
	// search, its sensitivity is non-zero.
	matters := func(n, i, j int) bool {
		if !res.Exhaustive {
			return d[i][j] != 0
		}
		f := n ^ (1 << i)
		if errs[f] != nil {
			return true
		}
		tol := 1e-9 * math.Max(math.Abs(vals[n][j]), vals[hi[j]][j]-vals[lo[j]][j])
		return math.Abs(vals[f][j]-vals[n][j]) > tol
	}
	for j, name := range names {
		res.Metrics = append(res.Metrics, WorstCaseMetric{
			Metric: name, Unit: metricUnit(name), Nominal: nominal[j],
			Min: vals[lo[j]][j], Max: vals[hi[j]][j],
			MinCorner: cornerOf(c.Variations, corners[lo[j]], func(i int) bool { return matters(lo[j], i, j) }),
			MaxCorner: cornerOf(c.Variations, corners[hi[j]], func(i int) bool { return matters(hi[j], i, j) }),
		})
	}
	return res, nil
}

// cornerOf names the high and low items of a corner that the metric
// depends on (matters(i)).
func cornerOf(vars []netlist.Variation, high []bool, matters func(i int) bool) ToleranceCorner {
	var c ToleranceCorner
	for i, v := range vars {
		if !matters(i) {
			continue
		}
		if high[i] {
			c.High = append(c.High, v.Name)
		} else {
			c.Low = append(c.Low, v.Name)
		}
	}
	return c
}
