package main

import (
	"fmt"
	"io"
	"math"
	"nodal/cmd/nodal/notation"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"

	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/analysis/variation"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
	"nodal/netlist"
)

// toleranceCmd runs the tolerance analyses: Monte Carlo always, worst case,
// sensitivities and the response envelope on request.
type toleranceCmd struct {
	circuitArgs
	probeArgs
	Metric      []string `required:"" sep:"none" help:"Metric to analyse (repeatable): ${metrics}." placeholder:"M"`
	Runs        int      `help:"Monte Carlo runs." default:"1000"`
	Seed        uint64   `help:"Random seed; the same seed gives the same numbers for any --workers." default:"1"`
	Workers     int      `help:"Goroutines (default: all cores)." default:"0"`
	WorstCase   bool     `help:"Also evaluate the tolerance corners and report each metric's extremes."`
	Sensitivity bool     `help:"Also report each metric's sensitivity to every toleranced item."`
	Envelope    bool     `help:"Also report the min–max band of |H| and phase over a sweep across the runs."`
	tempArgs
	freqArgs
	Format string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output string `short:"o" help:"Write the table/JSON to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot   string `help:"Draw the histograms (and with --envelope the Bode band) to this file (.svg or .png)." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *toleranceCmd) Help() string {
	return `Draws every toleranced part and parameter at random (uniform over
nominal·(1 ± tol), or normal with σ = tol/3 when the file says, as in
"±5% normal"; a toleranced let is one draw shared by all its uses) and
reports, per metric, the nominal value, mean, standard deviation, min,
max and the 0.135 % and 99.865 % points (the ±3σ equivalents).

--worst-case tries all 2^k tolerance corners for up to 12 toleranced
items (otherwise the two corners the sensitivity signs point to) and
names the corner giving each extreme. --sensitivity gives
(∂M/M)/(∂x/x) in %/% for Hz and q metrics, dB/% or deg/% for dB and
phase metrics, largest first. --envelope sweeps |H| and phase for every
run (--from, --to, --per-decade; default: the poles and zeros that shape
the response within 100 dB of its largest gain, ± a decade). Ctrl-C stops and reports the runs finished.

A build that is not stable (a natural frequency in the right half-plane
or on the jω axis) has no response metrics: it is counted, reported as
the fraction of unstable runs (and of unstable worst-case corners), and
left out of the statistics. The loop metrics read the loop gain around
one gain element as nodal loop does: phase_margin@U1 (°), gain_margin@U1
(dB), crossover@U1 (Hz).

Examples:

    nodal tolerance testdata/examples/logger_antialias.nodal --out out --metric f3db --metric q
    nodal tolerance testdata/examples/photodiode_frontend.nodal --out out --metric phase_margin@U1
    nodal tolerance testdata/examples/logger_antialias.nodal --out out --metric gain@1kHz --runs 10000 --seed 7 --format json
    nodal tolerance testdata/examples/logger_antialias.nodal --out out --metric f0 --worst-case --sensitivity
    nodal tolerance testdata/examples/logger_antialias.nodal --out out --metric f3db --envelope --plot band.svg`
}

// progressMinRuns is the run count from which a progress bar is shown on
// a terminal.
const progressMinRuns = 2000

// toleranceJSON is the JSON document of the command.
type toleranceJSON struct {
	Runs          int               `json:"runs"` // runs finished
	RunsRequested int               `json:"runs_requested,omitempty"`
	Cancelled     bool              `json:"cancelled,omitempty"`
	Failed        int               `json:"failed,omitempty"`
	Seed          uint64            `json:"seed"`
	Metrics       []metricStatsJSON `json:"metrics"`
	WorstCase     []worstCaseJSON   `json:"worst_case"`
	Sensitivity   []sensitivityJSON `json:"sensitivity"`
	Envelope      *envelopeJSON     `json:"envelope,omitempty"`
	// UnstableRuns counts the finished runs whose build was not stable
	// (counted in Failed, left out of the statistics); UnstableFraction
	// is UnstableRuns/Runs; UnstableCorners the worst-case corners that
	// were not stable.
	UnstableRuns     int     `json:"unstable_runs"`
	UnstableFraction float64 `json:"unstable_fraction"`
	UnstableCorners  *int    `json:"unstable_corners,omitempty"`
	stabilityJSON
}

type metricStatsJSON struct {
	Name    string  `json:"name"`
	Unit    string  `json:"unit"`
	Nominal float64 `json:"nominal"`
	Mean    float64 `json:"mean"`
	Std     float64 `json:"std"`
	Min     float64 `json:"min"`
	Max     float64 `json:"max"`
	P00135  float64 `json:"p00135"`
	P99865  float64 `json:"p99865"`
}

type cornerJSON struct {
	High []string `json:"high"`
	Low  []string `json:"low"`
}

type worstCaseJSON struct {
	Name       string     `json:"name"`
	Unit       string     `json:"unit"`
	Nominal    float64    `json:"nominal"`
	Min        float64    `json:"min"`
	Max        float64    `json:"max"`
	MinCorner  cornerJSON `json:"min_corner"`
	MaxCorner  cornerJSON `json:"max_corner"`
	Exhaustive bool       `json:"exhaustive"`
	Corners    int        `json:"corners"`
}

type itemSensitivityJSON struct {
	Item  string  `json:"item"`
	Value float64 `json:"value"`
}

type sensitivityJSON struct {
	Name      string                `json:"name"`
	Unit      string                `json:"unit"`
	Items     []itemSensitivityJSON `json:"items"`
	Undefined string                `json:"undefined,omitempty"`
}

type envelopePointJSON struct {
	FreqHz          float64  `json:"freq_hz"`
	NominalDB       *float64 `json:"nominal_db"`
	MinDB           *float64 `json:"min_db"`
	MaxDB           *float64 `json:"max_db"`
	NominalPhaseDeg float64  `json:"nominal_phase_deg"`
	MinPhaseDeg     float64  `json:"min_phase_deg"`
	MaxPhaseDeg     float64  `json:"max_phase_deg"`
}

type envelopeJSON struct {
	Runs   int                 `json:"runs"`
	Points []envelopePointJSON `json:"points"`
}

// toleranceResult gathers what the analyses gave.
type toleranceResult struct {
	mc   *variation.MonteCarloResult
	wc   *variation.WorstCaseResult
	sens *variation.SensitivityResult
	env  *variation.EnvelopeResult
	stab *stability.Result // of the nominal circuit
	// noiseNote says at which temperature the noise metrics were taken
	// ("" without noise metrics).
	noiseNote string
}

// levelUnits writes the dB of every gain, peak or dc metric of a
// response in unit with its reference (dB re 1 V/A for a transimpedance).
func (res *toleranceResult) levelUnits(unit string) {
	relabel := func(name string, u *string) {
		if *u == netlist.UnitDecibel && responseLevel(metricBase(name)) {
			*u = dbReference(unit)
		}
	}
	if res.mc != nil {
		for i := range res.mc.Metrics {
			relabel(res.mc.Metrics[i].Name, &res.mc.Metrics[i].Unit)
		}
	}
	if res.wc != nil {
		for i := range res.wc.Metrics {
			relabel(res.wc.Metrics[i].Metric, &res.wc.Metrics[i].Unit)
		}
	}
	if res.sens != nil {
		for i := range res.sens.Metrics {
			relabel(res.sens.Metrics[i].Metric, &res.sens.Metrics[i].Unit)
		}
	}
}

// Run performs the analyses and writes the report.
func (c *toleranceCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "json"); err != nil {
		return err
	}
	if c.Runs < 1 {
		return fmt.Errorf("--runs must be at least 1")
	}
	seen := map[string]bool{}
	for _, m := range c.Metric {
		if seen[m] {
			return fmt.Errorf("--metric %s is given twice", m)
		}
		seen[m] = true
	}
	if c.Plot != "" {
		if _, err := plot.FormatFromPath(c.Plot); err != nil {
			return err
		}
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	cir := l.circuit
	if len(cir.Variations) == 0 {
		return fmt.Errorf("%s: no toleranced part or parameter; give one a tolerance, e.g. 10k ±1%%", l.name)
	}
	pr, err := c.probe(l)
	if err != nil {
		return err
	}
	tempK, err := c.kelvin()
	if err != nil {
		return err
	}
	ev, err := variation.NewMetricEvaluatorAt(cir, pr.Ex, pr.Ob, c.Metric, tempK)
	if err != nil {
		return err
	}
	var freqs []float64
	if c.Envelope {
		sys, err := c.system(l)
		if err != nil {
			return err
		}
		if freqs, err = c.frequencies(func() (float64, float64) { return autoRange(l, sys) }); err != nil {
			return err
		}
		if err := checkWork("envelope", len(cir.Parts), len(freqs), c.Runs, "runs"); err != nil {
			return err
		}
	}
	opt := variation.MonteCarloOptions{Runs: c.Runs, Seed: c.Seed, Workers: c.Workers}
	res := toleranceResult{noiseNote: noiseMetricsNote(c.Metric, tempK)}
	if res.stab, err = circuitStability(l); err != nil {
		return err
	}
	stopBar := c.progress(e, &opt, "monte carlo")
	res.mc, err = variation.MonteCarlo(e.ctx, cir, ev, opt)
	stopBar()
	if err != nil {
		return err
	}
	if res.mc.Failed > 0 {
		fmt.Fprintf(e.stderr, "nodal: %d of %d runs failed and are left out; first: %v\n", res.mc.Failed, res.mc.Finished, res.mc.FirstFailure)
	}
	if res.mc.Cancelled {
		fmt.Fprintf(e.stderr, "nodal: interrupted: %d of %d runs finished; the figures cover those only\n", res.mc.Finished, res.mc.Runs)
	} else if err := c.extras(e, cir, ev, freqs, opt, &res); err != nil {
		return err
	}
	if sys, err := c.system(l); err == nil {
		_, unit := tfProbe{}.describe(cir, sys.Input, sys.Output)
		res.levelUnits(unit)
	}
	// An interrupted run still writes the runs it finished, on purpose.
	we := e.keepWriting()
	if c.Plot != "" {
		if err := c.writePlot(we, l, &res); err != nil {
			return err
		}
	}
	if err := writeTo(we, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, toleranceDoc(&res))
		}
		warnStability(e.stderr, res.stab)
		return toleranceTables(w, &res)
	}); err != nil {
		return err
	}
	if e.ctx.Err() != nil {
		// The figures are partial: a script must not take them for a full run.
		return errInterrupted
	}
	return nil
}

// extras runs the analyses asked for besides Monte Carlo. An interrupt
// skips the rest with a note, keeping what is done.
func (c *toleranceCmd) extras(e *env, cir *netlist.Circuit, ev variation.Evaluator, freqs []float64, opt variation.MonteCarloOptions, res *toleranceResult) error {
	interrupted := func(what string) bool {
		if e.ctx.Err() != nil {
			fmt.Fprintf(e.stderr, "nodal: interrupted: %s skipped\n", what)
			return true
		}
		return false
	}
	var err error
	if c.WorstCase && !interrupted("worst case") {
		if res.wc, err = variation.WorstCase(e.ctx, cir, ev, variation.WorstCaseOptions{Workers: c.Workers}); err != nil && e.ctx.Err() == nil {
			return err
		}
		if res.wc != nil && res.wc.Failed > 0 {
			fmt.Fprintf(e.stderr, "nodal: %d of %d corners failed and are left out\n", res.wc.Failed, res.wc.Corners)
		}
	}
	if c.Sensitivity && !interrupted("sensitivity") {
		if res.sens, err = variation.Sensitivity(e.ctx, cir, ev, variation.SensitivityOptions{Workers: c.Workers}); err != nil && e.ctx.Err() == nil {
			return err
		}
	}
	if c.Envelope && !interrupted("envelope") {
		opt.Progress = nil
		stop := c.progress(e, &opt, "envelope")
		var pr mna.Probe
		if pr, _, err = probeFor(cir, c.In, c.Out, c.Ref); err != nil {
			return err
		}
		res.env, err = variation.Envelope(e.ctx, cir, pr.Ex, pr.Ob, freqs, opt)
		stop()
		if err != nil && e.ctx.Err() == nil {
			return err
		}
		if res.env != nil && res.env.Cancelled {
			fmt.Fprintf(e.stderr, "nodal: interrupted: the envelope covers %d of %d runs\n", res.env.Finished, res.env.Runs)
		}
	}
	return nil
}

// progress installs a progress bar on stderr into opt when stderr is a
// terminal and the run is long; the returned function removes it.
func (c *toleranceCmd) progress(e *env, opt *variation.MonteCarloOptions, what string) func() {
	if !e.stderrIsTerminal || opt.Runs < progressMinRuns {
		return func() {}
	}
	bar := progressbar.NewOptions(opt.Runs,
		progressbar.OptionSetWriter(e.stderr),
		progressbar.OptionSetDescription(what),
		progressbar.OptionShowCount(),
		progressbar.OptionThrottle(100*time.Millisecond),
		progressbar.OptionClearOnFinish(),
	)
	opt.Progress = func(done int) { _ = bar.Set(done) }
	return func() { _ = bar.Clear(); opt.Progress = nil }
}

// toleranceDoc converts the results for JSON. Non-finite numbers cannot
// occur: the evaluator fails a run with a non-finite value and at least
// one run succeeded.
func toleranceDoc(r *toleranceResult) toleranceJSON {
	mc := r.mc
	d := toleranceJSON{Runs: mc.Finished, Seed: mc.Seed, Failed: mc.Failed, Cancelled: mc.Cancelled,
		Metrics: []metricStatsJSON{}, WorstCase: []worstCaseJSON{}, Sensitivity: []sensitivityJSON{}}
	if mc.Cancelled {
		d.RunsRequested = mc.Runs
	}
	d.UnstableRuns = mc.Unstable
	if mc.Finished > 0 {
		d.UnstableFraction = float64(mc.Unstable) / float64(mc.Finished)
	}
	if r.wc != nil {
		d.UnstableCorners = &r.wc.Unstable
	}
	d.stabilityJSON = newStabilityJSON(r.stab)
	for _, m := range mc.Metrics {
		d.Metrics = append(d.Metrics, metricStatsJSON{Name: m.Name, Unit: m.Unit, Nominal: m.Nominal, Mean: m.Mean,
			Std: m.Std, Min: m.Min, Max: m.Max, P00135: m.P00135, P99865: m.P99865})
	}
	if r.wc != nil {
		for _, m := range r.wc.Metrics {
			d.WorstCase = append(d.WorstCase, worstCaseJSON{Name: m.Metric, Unit: m.Unit, Nominal: m.Nominal, Min: m.Min, Max: m.Max,
				MinCorner: cornerDoc(m.MinCorner), MaxCorner: cornerDoc(m.MaxCorner), Exhaustive: r.wc.Exhaustive, Corners: r.wc.Corners})
		}
	}
	if r.sens != nil {
		for _, m := range r.sens.Metrics {
			s := sensitivityJSON{Name: m.Metric, Unit: m.Unit, Items: []itemSensitivityJSON{}, Undefined: m.Undefined}
			for _, it := range m.Items {
				s.Items = append(s.Items, itemSensitivityJSON{Item: it.Item, Value: it.Value})
			}
			d.Sensitivity = append(d.Sensitivity, s)
		}
	}
	if r.env != nil {
		ej := &envelopeJSON{Runs: r.env.Finished}
		for k, f := range r.env.FreqHz {
			ej.Points = append(ej.Points, envelopePointJSON{FreqHz: f, NominalDB: finiteOrNil(r.env.NominalDB[k]),
				MinDB: finiteOrNil(r.env.MinDB[k]), MaxDB: finiteOrNil(r.env.MaxDB[k]),
				NominalPhaseDeg: r.env.NominalPhaseDeg[k], MinPhaseDeg: r.env.MinPhaseDeg[k], MaxPhaseDeg: r.env.MaxPhaseDeg[k]})
		}
		d.Envelope = ej
	}
	return d
}

func cornerDoc(c variation.ToleranceCorner) cornerJSON {
	return cornerJSON{High: append([]string{}, c.High...), Low: append([]string{}, c.Low...)}
}

// metricLabel is a metric with its unit, "f3db (Hz)", for tables.
func metricLabel(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " (" + unit + ")"
}

// metricHistogram draws the Monte Carlo histogram of one metric with its
// label in words, its nominal value and the limits of c's requirements on
// it, in its unit.
func metricHistogram(c *netlist.Circuit, name, unit string, samples []float64, nominal float64) (*plot.Figure, error) {
	var limits []float64
	for _, r := range c.Requirements {
		if r.Metric != name {
			continue
		}
		switch r.Op {
		case netlist.Within:
			limits = append(limits, r.Lo, r.Hi)
		case netlist.Below:
			limits = append(limits, r.Hi)
		case netlist.Above:
			limits = append(limits, r.Lo)
		}
	}
	return plot.MetricHistogram(plot.HistogramSpec{Label: metricAxisLabel(name, unit), Values: samples, Nominal: nominal, Unit: unit, Limits: limits})
}

// metricAxisLabel is a metric in words with its unit, for axis labels:
// "−3 dB frequency (Hz)", "gain at 20 kHz (dB)", "quality factor Q".
func metricAxisLabel(name, unit string) string {
	words := name
	if spec, p, err := netlist.ParseMetric(name); err == nil && spec.Label != "" {
		words = spec.Label
		if spec.Param == netlist.MetricParamFreq {
			words = strings.Replace(words, "F", notation.Eng(p.FreqHz, "Hz"), 1)
		}
	}
	switch unit {
	case "":
		return words
	case netlist.UnitDegree:
		unit = "°"
	}
	return words + " (" + unit + ")"
}

// toleranceTables prints the results as terminal tables.
func toleranceTables(w io.Writer, r *toleranceResult) error {
	mc := r.mc
	fmt.Fprintf(w, "Monte Carlo: %d runs, seed %d", mc.Finished, mc.Seed)
	if mc.Cancelled {
		fmt.Fprintf(w, " (interrupted; %d requested)", mc.Runs)
	}
	if mc.Failed > 0 {
		fmt.Fprintf(w, ", %d failed", mc.Failed)
	}
	fmt.Fprintf(w, "; unstable builds: %d of %d (%.2f %%)\n", mc.Unstable, mc.Finished, 100*float64(mc.Unstable)/float64(max(mc.Finished, 1)))
	if r.noiseNote != "" {
		fmt.Fprintln(w, r.noiseNote)
	}
	t := newTable(w, "metric", "nominal", "mean", "std", "min", "max", "p00135", "p99865")
	for _, m := range mc.Metrics {
		if err := t.row(metricLabel(m.Name, m.Unit), num(m.Nominal), num(m.Mean), num(m.Std), num(m.Min), num(m.Max), num(m.P00135), num(m.P99865)); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	for _, m := range mc.Metrics {
		fmt.Fprintf(w, "\n%s\n", metricLabel(m.Name, m.Unit))
		textHistogram(w, m.Samples, m.Nominal, 12, 40)
	}
	if r.wc != nil {
		method := "all %d corners"
		if !r.wc.Exhaustive {
			method = "%d corners from the sensitivity signs"
		}
		fmt.Fprintf(w, "\nWorst case ("+method+"; a normal item's corner is ±tol = ±3σ)\n", r.wc.Corners)
		if r.wc.Unstable > 0 {
			fmt.Fprintf(w, "%d of the corners are unstable and left out: the worst case is an unstable circuit\n", r.wc.Unstable)
		}
		t := newTable(w, "metric", "nominal", "min", "max")
		for _, m := range r.wc.Metrics {
			if err := t.row(metricLabel(m.Metric, m.Unit), num(m.Nominal), num(m.Min), num(m.Max)); err != nil {
				return err
			}
		}
		if err := t.render(); err != nil {
			return err
		}
		for _, m := range r.wc.Metrics {
			fmt.Fprintf(w, "%s min at %s\n", m.Metric, cornerText(m.MinCorner))
			fmt.Fprintf(w, "%s max at %s\n", m.Metric, cornerText(m.MaxCorner))
		}
	}
	if r.sens != nil {
		for _, m := range r.sens.Metrics {
			fmt.Fprintf(w, "\nSensitivity of %s (%s)\n", m.Metric, m.Unit)
			if m.Undefined != "" {
				fmt.Fprintf(w, "  n/a: %s\n", m.Undefined)
				continue
			}
			t := newTable(w, "item", m.Unit)
			for _, it := range m.Items {
				if err := t.row(it.Item, fixed(it.Value, 4)); err != nil {
					return err
				}
			}
			if err := t.render(); err != nil {
				return err
			}
		}
	}
	if r.env != nil {
		fmt.Fprintf(w, "\nEnvelope over %d runs\n", r.env.Finished)
		t := newTable(w, "freq_hz", "nominal_db", "min_db", "max_db", "nominal_deg", "min_deg", "max_deg")
		for k, f := range r.env.FreqHz {
			if err := t.row(num(f), fixed(r.env.NominalDB[k], 4), fixed(r.env.MinDB[k], 4), fixed(r.env.MaxDB[k], 4),
				fixed(r.env.NominalPhaseDeg[k], 3), fixed(r.env.MinPhaseDeg[k], 3), fixed(r.env.MaxPhaseDeg[k], 3)); err != nil {
				return err
			}
		}
		if err := t.render(); err != nil {
			return err
		}
	}
	return nil
}

// cornerText writes a corner as "R1+ C1+ R2− C2−" (+ high, − low); past
// maxNamesInMessage items it says "every item high" or lists the first
// ones and how many more, so a 1000-part corner stays one short line.
func cornerText(c variation.ToleranceCorner) string {
	var parts []string
	for _, n := range c.High {
		parts = append(parts, n+"+")
	}
	for _, n := range c.Low {
		parts = append(parts, n+"−")
	}
	switch {
	case len(parts) == 0:
		return "any corner (no toleranced item moves it)"
	case len(parts) <= maxNamesInMessage:
		return strings.Join(parts, " ")
	case len(c.Low) == 0:
		return fmt.Sprintf("every toleranced item high (+), all %d of them", len(parts))
	case len(c.High) == 0:
		return fmt.Sprintf("every toleranced item low (−), all %d of them", len(parts))
	}
	return fmt.Sprintf("%s … and %d more (--format json lists every item)", strings.Join(parts[:maxNamesInMessage], " "), len(parts)-maxNamesInMessage)
}

// textHistogram draws bins equal-width bins of values from min to max as
// rows of '#' at most width long, marking the bin holding nominal.
func textHistogram(w io.Writer, values []float64, nominal float64, bins, width int) {
	if len(values) == 0 {
		fmt.Fprintln(w, "  (no runs)")
		return
	}
	lo, hi := values[0], values[0]
	for _, v := range values {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if hi == lo {
		bins = 1
	}
	counts := make([]int, bins)
	bin := func(v float64) int {
		if hi == lo {
			return 0
		}
		return min(bins-1, max(0, int(float64(bins)*(v-lo)/(hi-lo))))
	}
	most := 0
	for _, v := range values {
		k := bin(v)
		counts[k]++
		most = max(most, counts[k])
	}
	nb := -1
	if nominal >= lo && nominal <= hi {
		nb = bin(nominal)
	}
	step := (hi - lo) / float64(bins)
	for k, n := range counts {
		mark := " "
		if k == nb {
			mark = "*"
		}
		bar := strings.Repeat("#", (n*width+most-1)/most)
		fmt.Fprintf(w, "  %12s .. %-12s %s %-*s %d\n", num(lo+float64(k)*step), num(lo+float64(k+1)*step), mark, width, bar, n)
	}
	fmt.Fprintln(w, "  (* bin of the nominal value)")
}

// writePlot draws the histograms, with --envelope the Bode band on top.
func (c *toleranceCmd) writePlot(e *env, l *loaded, r *toleranceResult) error {
	format, err := plot.FormatFromPath(c.Plot)
	if err != nil {
		return err
	}
	var figs []*plot.Figure
	if r.env != nil {
		b := plot.BandTrace{Label: "nominal", FreqHz: r.env.FreqHz, NominalDB: r.env.NominalDB, MinDB: r.env.MinDB, MaxDB: r.env.MaxDB,
			NominalDeg: r.env.NominalPhaseDeg, MinDeg: r.env.MinPhaseDeg, MaxDeg: r.env.MaxPhaseDeg, Runs: r.env.Finished}
		fig, err := plot.Band(b, requirementLimits(l.circuit.Requirements, r.env.FreqHz), plot.BodeOptions{Title: l.circuit.Title})
		if err != nil {
			return err
		}
		figs = append(figs, fig)
	}
	for _, m := range r.mc.Metrics {
		fig, err := metricHistogram(l.circuit, m.Name, m.Unit, m.Samples, m.Nominal)
		if err != nil {
			return err
		}
		figs = append(figs, fig)
	}
	fig, err := plot.Stack(figs...)
	if err != nil {
		return err
	}
	return writeTo(e, c.Plot, []string{c.File, c.Output, l.name}, func(w io.Writer) error { return fig.Encode(w, format) })
}

// requirementLimits turns the file's gain@F, phase@F and f3db
// requirements into limits for the band plot; requirements at
// frequencies outside the sweep are left out.
func requirementLimits(reqs []netlist.Requirement, freqs []float64) []plot.Limit {
	lo, hi := freqs[0], freqs[len(freqs)-1]
	inside := func(f float64) bool { return f >= lo && f <= hi }
	var out []plot.Limit
	for _, r := range reqs {
		m, err := transfer.ParseMetric(r.Metric)
		if err != nil {
			continue
		}
		l := plot.Limit{Label: r.Text}
		switch m.Spec.Name {
		case "gain", "phase":
			if !inside(m.FreqHz) {
				continue
			}
			if m.Spec.Name == "phase" {
				l.Quantity = plot.Phase
			}
			l.FromHz, l.ToHz = m.FreqHz, m.FreqHz
			lo, hi := r.Lo, r.Hi
			if r.Op != netlist.Below {
				l.Lo = &lo
			}
			if r.Op != netlist.Above {
				l.Hi = &hi
			}
		case "f3db":
			l.FromHz, l.ToHz = r.Lo, r.Hi
			switch r.Op {
			case netlist.Below:
				l.FromHz = r.Hi
			case netlist.Above:
				l.ToHz = r.Lo
			}
			if !inside(l.FromHz) || !inside(l.ToHz) {
				continue
			}
		default:
			continue
		}
		out = append(out, l)
	}
	return out
}
