package variation

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"slices"

	"nodal/netlist"
)

// DefaultSensitivityStep is the relative step h of the central differences
// of Sensitivity: truncation error O(h²) ≈ 1e-8 relative, round-off
// ≈ ε_metric/h, well under 1e-6 for metrics accurate to 1e-12.
const DefaultSensitivityStep = 1e-4

// SensitivityOptions configure Sensitivity.
type SensitivityOptions struct {
	RelStep float64 // relative step h; ≤ 0 means DefaultSensitivityStep
	Workers int     // goroutines; ≤ 0 means runtime.NumCPU()
}

// ItemSensitivity is the sensitivity of one metric to one toleranced item.
type ItemSensitivity struct {
	Item    string // part name or parameter name, as in netlist.Variation
	IsParam bool   // a toleranced `let` (all its uses move together)
	Value   float64
}

// MetricSensitivity lists the sensitivities of one metric to every
// toleranced item, largest magnitude first (ties keep source order).
//
// Unit says what Value is:
//   - "%/%": normalised sensitivity S = (∂M/M)/(∂x/x), for metrics in Hz
//     and for q: a 1 % rise of the item moves the metric by S %.
//   - "dB/%" or "deg/%": for dB and degree metrics, ∂M/∂(100·x/x₀), the
//     change in dB (degrees) per 1 % rise of the item.
type MetricSensitivity struct {
	Metric  string
	Unit    string
	Nominal float64
	Items   []ItemSensitivity
	// Undefined says why the metric has no normalised sensitivity (a ratio
	// metric that is 0 at nominal); Items is then empty.
	Undefined string
}

// SensitivityResult holds one MetricSensitivity per metric, in the order of
// ev.Metrics().
type SensitivityResult struct {
	Metrics []MetricSensitivity
}

// Sensitivity computes the sensitivity of every metric of ev to every
// toleranced item of c by central finite differences on Circuit.Vary: for
// item i, M± = M(x_i·(1 ± h)) with every other item nominal, and
// ∂M/∂(x/x₀) ≈ (M+ − M−)/(2h). It is normalised by M(nominal) for ratio
// metrics (undefined, with the reason in Undefined, when that is 0) and divided by 100 for dB and degree
// metrics (see MetricSensitivity). Any failed evaluation is an error.
func Sensitivity(ctx context.Context, c *netlist.Circuit, ev Evaluator, opt SensitivityOptions) (*SensitivityResult, error) {
	names := ev.Metrics()
	nominal, err := evalNominal("sensitivity", c, ev)
	if err != nil {
		return nil, err
	}
	d, err := derivatives(ctx, c, ev, opt)
	if err != nil {
		return nil, err
	}
	res := &SensitivityResult{}
	for j, name := range names {
		ms := MetricSensitivity{Metric: name, Unit: "%/%", Nominal: nominal[j]}
		if metricPerPercent(name) {
			ms.Unit = metricUnit(name) + "/%"
		} else if nominal[j] == 0 {
			ms.Undefined = fmt.Sprintf("%s is 0 at nominal: no normalised sensitivity", name)
			res.Metrics = append(res.Metrics, ms)
			continue
		}
		for i, v := range c.Variations {
			s := d[i][j]
			if metricPerPercent(name) {
				s /= 100
			} else {
				s /= nominal[j]
			}
			ms.Items = append(ms.Items, ItemSensitivity{Item: v.Name, IsParam: v.IsParam, Value: s})
		}
		slices.SortStableFunc(ms.Items, func(a, b ItemSensitivity) int {
			return cmp.Compare(math.Abs(b.Value), math.Abs(a.Value))
		})
		res.Metrics = append(res.Metrics, ms)
	}
	return res, nil
}

// derivatives returns d[i][j] = ∂M_j/∂(x_i/x_i0) by central differences.
func derivatives(ctx context.Context, c *netlist.Circuit, ev Evaluator, opt SensitivityOptions) ([][]float64, error) {
	h := opt.RelStep
	if !(h > 0) {
		h = DefaultSensitivityStep
	}
	k, m := len(c.Variations), len(ev.Metrics())
	vals := make([][]float64, 2*k)
	errs := make([]error, 2*k)
	ws := NewWorkspaces(c, resolveWorkers(opt.Workers, 2*k))
	_, cancelled := forEachJob(ctx, 2*k, opt.Workers, nil, func(w, job int) {
		f := ws.Factors(w)
		for i := range f {
			f[i] = 1
		}
		i, sign := job/2, 1.0
		if job%2 == 1 {
			sign = -1
		}
		f[i] = 1 + sign*h
		vals[job], errs[job] = ws.Eval(w, ev, m)
	})
	if cancelled {
		return nil, fmt.Errorf("sensitivity: %w", context.Cause(ctx))
	}
	d := make([][]float64, k)
	for i := range d {
		for _, job := range []int{2 * i, 2*i + 1} {
			if errs[job] != nil {
				return nil, fmt.Errorf("sensitivity: %s varied by %+g %%: %w", c.Variations[i].Name, 100*h*float64(1-2*(job%2)), errs[job])
			}
		}
		d[i] = make([]float64, m)
		for j := range m {
			d[i][j] = (vals[2*i][j] - vals[2*i+1][j]) / (2 * h)
		}
	}
	return d, nil
}
