package main

import (
	"math"

	"nodal/analysis/noise"
	"nodal/analysis/response"
	"nodal/cmd/nodal/report"
	"nodal/mna"
	"nodal/netlist"
)

// addNoiseSection adds the noise at the report's output when the file has
// a noise requirement: over the band of its first noise_rms requirement
// (else over the Bode range lo..hi), every resistor at tempK kelvin, the
// temperature the requirement verdicts use.
func addNoiseSection(e *env, l *loaded, r *tfResult, d *report.Data, lo, hi, tempK float64) error {
	c := l.circuit
	has, bandLo, bandHi := false, lo, hi
	for _, q := range c.Requirements {
		m, p, err := netlist.ParseMetric(q.Metric)
		if err != nil || !m.Noise {
			continue
		}
		if !has && m.Param == netlist.MetricParamBand {
			bandLo, bandHi = p.LoHz, p.HiHz
		}
		has = true
	}
	if !has {
		return nil
	}
	cfg := noise.Config{Out: r.sys.Output, TempK: tempK}
	if r.sys.Input.Kind == mna.Drive {
		cfg.Input, cfg.HasInput = r.sys.Input.Source, true
	}
	a, err := noise.New(c, cfg)
	if err != nil {
		return err
	}
	run := &noiseRun{a: a}
	if run.sp, err = a.Spectrum(e.ctx, response.LogGrid(math.Min(lo, bandLo), math.Max(hi, bandHi), 20)); err != nil {
		return err
	}
	if run.band, err = a.Integrate(e.ctx, bandLo, bandHi); err != nil {
		return err
	}
	fig, err := noiseFigure(l, run, 4)
	if err != nil {
		return err
	}
	b := run.band
	n := &report.Noise{Output: a.Output, Input: a.Input, TempK: a.TempK, FromHz: b.FromHz, ToHz: b.ToHz,
		OutRMS: b.OutRMS, OutUnit: a.OutUnit, InUnit: a.InUnit, ENBWHz: b.ENBWHz,
		Method: "adaptive Simpson quadrature in ln f", Plot: report.Plot{Figure: fig, Caption: "noise densities at " + a.Output}}
	if a.HasInput() && !math.IsNaN(b.InRMS) {
		v := b.InRMS
		n.InRMS = &v
	}
	for _, x := range b.Contributions {
		n.Contributions = append(n.Contributions, report.NoiseContribution{Source: x.Source, RMS: x.RMSOut, Fraction: x.Fraction})
	}
	d.Noise = n
	return nil
}
