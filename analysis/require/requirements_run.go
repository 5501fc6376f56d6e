package require

import (
	"context"
	"errors"
	"fmt"
	"math"
	"slices"
	"sync"
	"sync/atomic"

	"nodal/analysis/loop"
	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/analysis/variation"
	"nodal/mna"
	"nodal/netlist"
)

// VerifyOptions controls Verify.
type VerifyOptions struct {
	// Runs is the number of Monte Carlo runs; 0 skips Monte Carlo (the
	// yields are then NaN).
	Runs int
	// Seed makes the Monte Carlo draws reproducible: run i uses the same
	// stream as run i of MonteCarlo with this seed, so verify and the
	// tolerance analysis see the same builds.
	Seed uint64
	// MaxExhaustive is the most toleranced items for which every vertex of
	// the tolerance box (2^n corners) is evaluated; above it each
	// requirement gets the two corners its metric's sensitivity signs point
	// to, as in WorstCase. ≤ 0 means DefaultMaxExhaustiveItems.
	MaxExhaustive int
	Workers       int            // goroutines; ≤ 0 means runtime.NumCPU()
	Progress      func(done int) // called after each Monte Carlo run, as in MonteCarloOptions
}

// VerifyResult is a Verification with the count of varied circuits that
// could not be analysed (they count as failing every requirement).
type VerifyResult struct {
	*Verification
	Failed       int   // corners and runs whose circuit could not be analysed
	FirstFailure error // the error of the first of them (corners first, then runs by index)
}

// Verify evaluates ev, whose metrics are those of c's requirements in
// order, at nominal values, at the worst-case corners of the toleranced
// items (each at 1 ± Tol.Rel; for a normal distribution Tol.Rel is 3σ) and
// over opt.Runs Monte Carlo draws (drawn as by MonteCarlo: uniform over
// 1 ± Tol.Rel or normal with σ = Tol.Rel/3, one draw per Variation so a
// toleranced let is shared by all its uses), and judges each requirement
// (Judge). ev may return NaN for a metric that does not exist in a
// circuit; that value fails. A nominal evaluation error is an error; a
// varied circuit whose evaluation fails counts as failing.
func Verify(ctx context.Context, c *netlist.Circuit, ev variation.Evaluator, opt VerifyOptions) (*VerifyResult, error) {
	n := len(c.Requirements)
	if n == 0 {
		return nil, fmt.Errorf("verify: the circuit has no require statements")
	}
	if opt.Runs < 0 {
		return nil, fmt.Errorf("verify: runs must be ≥ 0, got %d", opt.Runs)
	}
	if opt.Runs > 0 {
		if err := variation.CheckRuns("verify", opt.Runs); err != nil {
			return nil, err
		}
	}
	if m := len(ev.Metrics()); m != n {
		return nil, fmt.Errorf("verify: the evaluator has %d metrics for %d requirements", m, n)
	}
	nominal, err := variation.EvalNominal("verify", c, ev)
	if err != nil {
		return nil, err
	}
	res := &VerifyResult{}
	corners, err := cornerFactors(ctx, c, ev, opt)
	if err != nil {
		return nil, err
	}
	cornerRows, err := evalRows(ctx, c, ev, len(corners), opt.Workers, nil, func(_, i int, dst []float64) { copy(dst, corners[i]) }, res)
	if err != nil {
		return nil, err
	}
	v, err := Judge(c.Requirements, nominal, cornerRows, nil)
	if err != nil {
		return nil, err
	}
	if opt.Runs > 0 {
		if err := judgeRuns(ctx, c, ev, opt, v, res); err != nil {
			return nil, err
		}
	}
	res.Verification = v
	return res, nil
}

// judgeRuns evaluates the opt.Runs Monte Carlo builds as they finish, in
// run order, counting for each requirement the builds that pass it and the
// builds that pass all (memory independent of the run count), and sets
// the yields of v as Judge would from the rows. A build that cannot be
// analysed fails every requirement and is counted in res.
func judgeRuns(ctx context.Context, c *netlist.Circuit, ev variation.Evaluator, opt VerifyOptions, v *Verification, res *VerifyResult) error {
	reqs := c.Requirements
	m := len(ev.Metrics())
	workers := variation.ResolveWorkers(opt.Workers, opt.Runs)
	ws := variation.NewWorkspaces(c, workers)
	type outcome struct {
		vals []float64
		err  error
	}
	passed := make([]int, len(reqs))
	all := 0
	done := variation.StreamJobs(ctx, opt.Runs, workers, opt.Progress, func(w, i int) outcome {
		ws.Draw(w, opt.Seed, i)
		vals, err := ws.Eval(w, ev, m)
		return outcome{vals, err}
	}, func(_ int, o outcome) {
		if o.err != nil {
			if res.Failed == 0 {
				res.FirstFailure = o.err
			}
			res.Failed++
			return
		}
		ok := true
		for j, req := range reqs {
			p := req.Pass(o.vals[j])
			if p {
				passed[j]++
			}
			ok = ok && p
		}
		if ok {
			all++
		}
	})
	if done < opt.Runs {
		return fmt.Errorf("verify: %w", context.Cause(ctx))
	}
	v.Runs = opt.Runs
	for j := range v.Verdicts {
		v.Verdicts[j].Yield = NewProportion(passed[j], opt.Runs)
	}
	v.Yield = NewProportion(all, opt.Runs)
	return nil
}

// evalRows evaluates ev on count varied circuits, the factors of job i
// filled by factors, on workers goroutines. A failed evaluation gives a
// NaN row and is counted in res.
func evalRows(ctx context.Context, c *netlist.Circuit, ev variation.Evaluator, count, workers int, progress func(int), factors func(w, i int, dst []float64), res *VerifyResult) ([][]float64, error) {
	if count == 0 {
		return nil, nil
	}
	m := len(ev.Metrics())
	rows := make([][]float64, count)
	errs := make([]error, count)
	ws := variation.NewWorkspaces(c, variation.ResolveWorkers(workers, count))
	_, cancelled := variation.ForEachJob(ctx, count, workers, progress, func(w, i int) {
		factors(w, i, ws.Factors(w))
		rows[i], errs[i] = ws.Eval(w, ev, m)
	})
	if cancelled {
		return nil, fmt.Errorf("verify: %w", context.Cause(ctx))
	}
	for i, err := range errs {
		if err == nil {
			continue
		}
		if res.Failed == 0 {
			res.FirstFailure = err
		}
		res.Failed++
		rows[i] = make([]float64, m)
		for j := range rows[i] {
			rows[i][j] = math.NaN()
		}
	}
	return rows, nil
}

// cornerFactors returns the factor vectors of the worst-case corners, as
// WorstCase chooses them: every vertex for up to MaxExhaustive items,
// otherwise two per metric from the signs of the sensitivities (an item
// with zero or undefined sensitivity is put low).
func cornerFactors(ctx context.Context, c *netlist.Circuit, ev variation.Evaluator, opt VerifyOptions) ([][]float64, error) {
	k := len(c.Variations)
	if k == 0 {
		return nil, nil
	}
	limit := opt.MaxExhaustive
	if limit <= 0 {
		limit = variation.DefaultMaxExhaustiveItems
	}
	var high [][]bool
	if k <= limit {
		for mask := 0; mask < 1<<k; mask++ {
			h := make([]bool, k)
			for i := range h {
				h[i] = mask&(1<<i) != 0
			}
			high = append(high, h)
		}
	} else {
		d, err := variation.Derivatives(ctx, c, ev, variation.SensitivityOptions{Workers: opt.Workers})
		if err != nil {
			return nil, fmt.Errorf("verify: worst-case corners: %w", err)
		}
		for j := range ev.Metrics() {
			up, down := make([]bool, k), make([]bool, k)
			for i := range k {
				up[i], down[i] = d[i][j] > 0, d[i][j] < 0
			}
			high = append(high, up, down)
		}
	}
	out := make([][]float64, len(high))
	for n, h := range high {
		out[n] = make([]float64, k)
		for i, v := range c.Variations {
			out[n][i] = 1 - v.Tol.Rel
			if h[i] {
				out[n][i] = 1 + v.Tol.Rel
			}
		}
	}
	return out, nil
}

// RequirementMetrics evaluates the metrics of a list of requirements, each
// on the transfer function of its own probe (one input, one output; the
// named responses of a file): the standard MetricsFunc of `verify` and
// `snap`. Requirements sharing a probe share one extraction.
//
// It is an Evaluator, and unlike MetricEvaluator it does not fail a
// circuit in which a metric does not exist: that value is NaN (and fails
// its requirement), and an infinite value (dc of a high-pass, −Inf dB) is
// kept, since `dc below -40dB` holds for it.
type RequirementMetrics struct {
	names   []string
	metrics []transfer.Metric
	pos     []netlist.Pos // of each requirement, for errors
	probes  []mna.Probe   // distinct probes, in order of first use
	of      []int         // per requirement: its index in probes
	// TempK is the temperature of every resistor (K) for the noise
	// metrics noise@F and noise_rms@F1..F2; 0 is noise.DefaultTempK.
	TempK float64
	// nominal is a copy of the nominal circuit (read-only): it places the
	// direct-solve scans of a probe whose extraction is refused.
	nominal *netlist.Circuit
	swept   []*sweptProbe // per probe, prepared at its first refusal
}

// sweptProbe is the direct-solve path of one probe (variation.SweptSubjects),
// prepared once, at the first circuit whose extraction is refused.
type sweptProbe struct {
	once sync.Once
	s    *variation.SweptSubjects
	err  error
	// ready is set once s is prepared: later circuits of this probe go to
	// direct solves without trying the extraction again, as the tolerance
	// runs of a refused nominal circuit do.
	ready   atomic.Bool
	refusal error // the extraction's refusal that prepared s
}

// NewRequirementMetrics parses the metric of every requirement, all taken
// on the transfer from in to out of circuits like nominal. An unknown
// metric is an error naming the requirement and the valid metrics.
//
// A circuit whose transfer function the extraction refuses (too large,
// ill-conditioned) is judged by direct solves of H, as the tolerance runs
// judge it (variation.SweptSubjects, its scans placed by nominal): gain@F,
// dc, f3db, peak and fpeak; stable and the loop metrics on the whole
// circuit as always. Any other metric on such a circuit is an error naming
// the requirement, the metric and why, never a value.
func NewRequirementMetrics(nominal *netlist.Circuit, reqs []netlist.Requirement, in mna.Input, out mna.Output) (*RequirementMetrics, error) {
	probes := make([]mna.Probe, len(reqs))
	for i := range probes {
		probes[i] = mna.Probe{Ex: in, Ob: out}
	}
	return NewProbeMetrics(nominal, reqs, probes)
}

// NewProbeMetrics is NewRequirementMetrics with one probe per requirement
// (probes[i] for reqs[i]).
func NewProbeMetrics(nominal *netlist.Circuit, reqs []netlist.Requirement, probes []mna.Probe) (*RequirementMetrics, error) {
	if len(probes) != len(reqs) {
		return nil, fmt.Errorf("requirement metrics: %d probes for %d requirements", len(probes), len(reqs))
	}
	if nominal == nil {
		return nil, fmt.Errorf("requirement metrics: no nominal circuit")
	}
	r := &RequirementMetrics{nominal: nominal.Clone()}
	for i, q := range reqs {
		m, err := transfer.ParseMetric(q.Metric)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", q.Pos, err)
		}
		r.metrics = append(r.metrics, m)
		r.names = append(r.names, q.Metric)
		r.pos = append(r.pos, q.Pos)
		k := slices.Index(r.probes, probes[i])
		if k < 0 {
			k = len(r.probes)
			r.probes = append(r.probes, probes[i])
		}
		r.of = append(r.of, k)
	}
	for range r.probes {
		r.swept = append(r.swept, &sweptProbe{})
	}
	return r, nil
}

// Metrics returns the requirement metrics as written, in order.
func (r *RequirementMetrics) Metrics() []string { return r.names }

// Eval returns one value per requirement for c, NaN where the metric does
// not exist for this circuit (Explain says why). It fails when an MNA
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
	circ := loop.NewCircuit(c)
	vals := make([]float64, len(r.metrics))
	why := make([]error, len(r.metrics))
	// An unstable build fails every requirement: its response does not
	// settle, so no metric of it exists.
	for i, m := range r.metrics {
		if !m.Spec.Bare {
			continue
		}
		stable, err := circ.Stable()
		if errors.Is(err, stability.ErrUnchecked) {
			// passive or not checked (a large circuit): the requirement
			// is not met, with the reason; the other metrics stand.
			vals[i], why[i] = 0, err
			continue
		}
		if err != nil {
			return nil, nil, err
		}
		if !stable {
			for j := range vals {
				vals[j], why[j] = math.NaN(), stability.ErrUnstable
			}
			vals[i], why[i] = 0, nil
			return vals, why, nil
		}
	}
	for k, p := range r.probes {
		var idx []int
		var ms []transfer.Metric
		for i, of := range r.of {
			if of == k {
				idx, ms = append(idx, i), append(ms, r.metrics[i])
			}
		}
		var sub netlist.MetricSubject
		var tf *transfer.TransferFunction
		var err error
		if r.swept[k].ready.Load() {
			err = r.swept[k].refusal
		} else {
			tf, err = transfer.ExtractFor(ms, c, p.Ex, p.Ob)
		}
		switch {
		case variation.Refused(err):
			s, release, serr := r.sweptSubject(k, c, idx, err)
			if serr != nil {
				return nil, nil, serr
			}
			defer release()
			sub = circuitSubject{s, circ}
		case err != nil:
			return nil, nil, err
		default:
			if sub, err = variation.MetricSubject(c, p.Ob, tf, circ, ms, r.TempK); err != nil {
				return nil, nil, err
			}
		}
		for _, i := range idx {
			if why[i] != nil {
				continue // stable, passive or not checked
			}
			v, err := r.metrics[i].EvalOn(sub)
			if errors.Is(err, loop.ErrLoopGain) {
				// no such gain element, an ideal op-amp: the requirement is wrong
				return nil, nil, fmt.Errorf("%s: %w", r.pos[i], err)
			}
			if err != nil {
				v, why[i] = math.NaN(), err
			}
			vals[i] = v
		}
	}
	return vals, why, nil
}

// sweptSubject returns the direct-solve subject of c for probe k, whose
// extraction was refused with refusal, and its release. The metrics idx
// of the probe must be served by direct solves (or be judged on the whole
// circuit); phase@F is not served: a direct solve knows only its principal
// value, not the branch a requirement's limits are written on.
func (r *RequirementMetrics) sweptSubject(k int, c *netlist.Circuit, idx []int, refusal error) (netlist.MetricSubject, func(), error) {
	var ms []transfer.Metric
	for _, i := range idx {
		m := r.metrics[i]
		if m.Spec.Circuit {
			continue
		}
		err := variation.SweptServes(m)
		if err == nil && m.Spec.Name == "phase" {
			err = fmt.Errorf("%s: a direct solve gives the phase only on its principal branch (−180°, 180°], so the branch of the limits cannot be vouched for", m.Name)
		}
		if err != nil {
			return nil, nil, fmt.Errorf("%s: require %s: %w; by direct solves: %w", r.pos[i], m.Name, refusal, err)
		}
		ms = append(ms, m)
	}
	sp := r.swept[k]
	sp.once.Do(func() {
		p := r.probes[k]
		sp.s, sp.err = variation.NewSweptSubjects(r.nominal, p.Ex, p.Ob, ms)
		if sp.err == nil {
			sp.refusal = refusal
			sp.ready.Store(true)
		}
	})
	if sp.err != nil {
		return nil, nil, fmt.Errorf("%s: require %s: %w; by direct solves: %w", r.pos[idx[0]], r.names[idx[0]], refusal, sp.err)
	}
	return sp.s.Subject(c)
}

// circuitSubject answers the metrics judged on the whole circuit (stable,
// the loop metrics) from circ and the others from a direct-solve subject.
type circuitSubject struct {
	netlist.MetricSubject
	circ *loop.Circuit
}

func (s circuitSubject) Stable() (bool, error)                    { return s.circ.Stable() }
func (s circuitSubject) PhaseMarginDeg(p string) (float64, error) { return s.circ.PhaseMarginDeg(p) }
func (s circuitSubject) GainMarginDB(p string) (float64, error)   { return s.circ.GainMarginDB(p) }
func (s circuitSubject) CrossoverHz(p string) (float64, error)    { return s.circ.CrossoverHz(p) }

// WithStable returns reqs with the implicit first requirement `stable`
// (verify judges every circuit on it), unless reqs names it already.
func WithStable(reqs []netlist.Requirement) []netlist.Requirement {
	for _, q := range reqs {
		if q.Metric == "stable" {
			return reqs
		}
	}
	return append([]netlist.Requirement{{Metric: "stable", Op: netlist.Holds, Text: "stable (implicit)"}}, reqs...)
}
