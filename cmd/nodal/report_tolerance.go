package main

import (
	"fmt"
	"math"

	"nodal/analysis/require"
	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/analysis/variation"
	"nodal/cmd/nodal/plot"
	"nodal/cmd/nodal/report"
	"nodal/mna"
	"nodal/netlist"
)

// reportMetrics are the metrics the report's Monte Carlo section follows:
// those the file's requirements name, or f3db when there are none. A
// yes/no metric (stable) has no spread to show: it is left out (the runs
// that are not stable fail and are counted as such).
func reportMetrics(reqs []netlist.Requirement) []string {
	var names []string
	seen := map[string]bool{}
	for _, r := range reqs {
		if m, _, err := netlist.ParseMetric(r.Metric); err == nil && m.Bare {
			continue
		}
		if !seen[r.Metric] {
			seen[r.Metric] = true
			names = append(names, r.Metric)
		}
	}
	if len(names) == 0 {
		names = []string{"f3db"}
	}
	return names
}

// addToleranceSections adds the requirement verdicts when the file has
// requirements (with verdicts set: once per report, every response's), and
// the Monte Carlo band, statistics and histograms of the response r when
// it has toleranced items, over the metrics of reqs (the requirements
// taken on r).
func addToleranceSections(e *env, l *loaded, r *tfResult, d *report.Data, rr reportRun, reqs []netlist.Requirement, verdicts bool) error {
	runs, seed := rr.Runs, rr.Seed
	c := l.circuit
	in, out := mna.Input{Source: r.sys.Input.Source}, r.sys.Output
	if len(c.Variations) == 0 {
		runs = 0
	}
	if verdicts {
		if err := addVerdicts(e, c, in, out, d, rr); err != nil {
			return err
		}
	}
	if runs <= 0 {
		return nil
	}
	// Keep the metrics the nominal circuit can give a value for.
	var metrics []string
	for _, m := range reportMetrics(reqs) {
		if _, err := variation.NewMetricEvaluatorAt(c, in, out, []string{m}, rr.TempK); err != nil {
			d.Notes = append(d.Notes, fmt.Sprintf("Metric %s left out of the tolerance analysis: %v", m, err))
			continue
		}
		metrics = append(metrics, m)
	}
	opt := variation.MonteCarloOptions{Runs: runs, Seed: seed}
	mc := &report.MonteCarlo{Runs: runs, Seed: int64(seed)}
	if len(metrics) > 0 {
		ev, err := variation.NewMetricEvaluatorAt(c, in, out, metrics, rr.TempK)
		if err != nil {
			return err
		}
		res, err := variation.MonteCarlo(e.ctx, c, ev, opt)
		if err != nil {
			return err
		}
		mc.Runs = res.Finished
		if res.Failed > 0 {
			d.Notes = append(d.Notes, fmt.Sprintf("%d of %d Monte Carlo runs failed (first: %v).", res.Failed, res.Finished, res.FirstFailure))
		}
		var hists []*plot.Figure
		for _, m := range res.Metrics {
			mc.Stats = append(mc.Stats, report.Stat{Name: m.Name, Unit: m.Unit, Nominal: m.Nominal, Mean: m.Mean, StdDev: m.Std, Min: m.Min, Max: m.Max})
			h, err := metricHistogram(c, m.Name, m.Unit, m.Samples, m.Nominal)
			if err != nil {
				return err
			}
			hists = append(hists, h)
		}
		if len(hists) > 0 {
			fig, err := plot.Stack(hists...)
			if err != nil {
				return err
			}
			mc.Histograms = report.Plot{Figure: fig, Caption: fmt.Sprintf("metric histograms over %d runs (nominal and requirement limits marked)", res.Finished)}
		}
	}
	lo, hi := rangeOf(l, r.tf)
	freqs := response.LogGrid(lo, hi, 25)
	env, err := variation.Envelope(e.ctx, c, in, out, freqs, opt)
	if err != nil {
		return err
	}
	band := plot.BandTrace{Label: "nominal", FreqHz: env.FreqHz, NominalDB: env.NominalDB, MinDB: env.MinDB, MaxDB: env.MaxDB,
		NominalDeg: env.NominalPhaseDeg, MinDeg: env.MinPhaseDeg, MaxDeg: env.MaxPhaseDeg, Runs: env.Finished}
	fig, err := plot.Band(band, requirementLimits(reqs, env.FreqHz), plot.BodeOptions{})
	if err != nil {
		return err
	}
	mc.Band = report.Plot{Figure: fig, Caption: fmt.Sprintf("nominal response with the min–max band of %d Monte Carlo runs (seed %d); requirement limits drawn", env.Finished, seed)}
	d.MonteCarlo = mc
	return nil
}

// addVerdicts judges the file's requirements at nominal, over the worst-case
// corners and as Monte Carlo yield (the same draws as the tolerance
// section for the same seed).
func addVerdicts(e *env, c *netlist.Circuit, in mna.Input, out mna.Output, d *report.Data, rr reportRun) error {
	runs, seed := rr.Runs, rr.Seed
	if len(c.Requirements) == 0 {
		return nil
	}
	probes := make([]mna.Probe, len(c.Requirements))
	for i, q := range c.Requirements {
		probes[i] = mna.Probe{Ex: in, Ob: out}
		if q.Response != "" {
			p, _, err := probeFor(c, "", q.Response, "")
			if err != nil {
				return err
			}
			probes[i] = p
		}
	}
	rm, err := require.NewProbeMetrics(c, c.Requirements, probes)
	if err != nil {
		return err
	}
	rm.TempK = rr.TempK
	res, err := require.Verify(e.ctx, c, rm, require.VerifyOptions{Runs: runs, Seed: seed})
	if err != nil {
		return err
	}
	for _, v := range res.Verdicts {
		unit := ""
		if m, err := transfer.ParseMetric(v.Requirement.Metric); err == nil {
			unit = m.Unit()
		}
		rv := report.Verdict{Requirement: v.Requirement.Text, Value: v.Nominal, Unit: unit, Pass: v.NominalPass,
			Worst: res.Corners > 0 && !math.IsNaN(v.WorstMin), WorstMin: v.WorstMin, WorstMax: v.WorstMax, WorstPass: v.WorstPass}
		if runs > 0 {
			y := v.Yield.Fraction
			rv.Yield = &y
		}
		d.Verdicts = append(d.Verdicts, rv)
		if v.NominalPass && !v.WorstPass {
			d.Notes = append(d.Notes, fmt.Sprintf("%s passes at nominal but not in the worst case (%s .. %s).",
				v.Requirement.Text, metricText(v.WorstMin, unit), metricText(v.WorstMax, unit)))
		}
	}
	return nil
}
