package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"nodal/cmd/nodal/notation"
	"strconv"

	"nodal/analysis/reduce"
	"nodal/analysis/response"
	"nodal/analysis/timeresp"
	"nodal/analysis/transient"
	"nodal/cmd/nodal/plot"
	"nodal/netlist/syntax"
)

// timeCmd prints the exact step or impulse response.
type timeCmd struct {
	circuitArgs
	varyArgs
	probeArgs
	Input  string `help:"The input signal: a unit step or a unit impulse." enum:"step,impulse" default:"step"`
	Until  string `help:"End of the time span, e.g. 5ms (default: from the slowest pole, about 7 time constants or 10 periods)." placeholder:"T"`
	Points int    `help:"Number of samples from t = 0 to the end." default:"200"`
	Format string `help:"Output format: table, csv or json (default: from the -o extension, else table)." placeholder:"table|csv|json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot   string `help:"Also plot the response to this file (.svg or .png)." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *timeCmd) Help() string {
	return `Gives the exact response to a unit step (--input step, the default) or a
unit impulse (--input impulse) from the partial-fraction expansion of
H(s)/s or H(s).

For a step: the closed form, sampled points, and the final value, 10–90 %
rise time, overshoot, peak time and 2 % settling time, found on the closed
form (not read off the samples). Unstable circuits are named as such with
their poles, and get no settling figures.

For an impulse: where H(s) is proper but not strictly proper the response
holds a Dirac term δ(t), which is named with its weight, not sampled.

Above 300 unknowns the response comes from the verified reduced model
that transfer gives, and the output says so. Samples that rest on one
computation alone (a reduced model's, or the matrix exponential's when
there are no partial fractions) are checked against an integration of
the full circuit (TR-BDF2 with Richardson extrapolation) and refused,
with the figures, when they differ by more than 1e-4 of the response's
scale.

Examples:

    nodal time testdata/examples/logger_antialias.nodal --out out
    nodal time testdata/examples/logger_antialias.nodal --out out --until 2ms --points 400 --format csv -o step.csv
    nodal time testdata/examples/logger_antialias.nodal --out out --plot step.svg
    nodal time testdata/examples/logger_antialias.nodal --out out --input impulse
    nodal time testdata/examples/logger_antialias.nodal --out out --input impulse --format json`
}

// Run computes the time response.
func (c *timeCmd) Run(e *env) error { return c.run(e, c.Input) }

// run computes and prints a time response of the given kind.
func (c *timeCmd) run(e *env, kind string) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "csv", "json"); err != nil {
		return err
	}
	if len(c.Vary) > 0 {
		return runVariedCmd(e, &c.circuitArgs, &c.Output, &c.Vary, c.Plot, c.Format, func(e *env) error { return c.run(e, kind) }, timeOverlay)
	}
	if err := checkOutputs([]string{c.File}, c.Output, c.Plot); err != nil {
		return err
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	sys, err := c.system(l)
	if err != nil {
		return err
	}
	opt := timeresp.TimeOptions{Points: c.Points}
	if c.Until != "" {
		if opt.UntilS, err = syntax.ParseFlag("--until", c.Until, "s"); err != nil {
			return err
		}
		if !(opt.UntilS > 0) {
			return fmt.Errorf("--until must be > 0")
		}
	}
	if c.Points < 2 || c.Points > maxPoints {
		return fmt.Errorf("--points must be between 2 and %d", maxPoints)
	}
	r, model, chk, refused, err := timeResponseOf(e, l, sys, kind, opt)
	if err != nil {
		return err
	}
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	if c.Plot != "" && e.plotData != nil {
		e.plotData(variantPlot[plot.TimeTrace]{timeTitle(l, r), timeTrace(r)})
	} else if c.Plot != "" {
		if err := writeTimePlot(e, c.Plot, []string{c.File, c.Output}, l, r); err != nil {
			return err
		}
	}
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		switch c.Format {
		case "json":
			doc := timeDoc(r)
			doc.Stability = stab.Class.String()
			if model != nil {
				doc.ReducedModel = newReducedJSON(model)
			}
			if refused != nil {
				doc.ReducedRefused = refused.Error()
			}
			doc.TimeCheck = newTimeCheckJSON(chk)
			return writeJSON(w, doc)
		case "csv":
			cw := csv.NewWriter(w)
			if err := cw.Write([]string{"t_s", "y"}); err != nil {
				return err
			}
			for _, p := range r.Points {
				if err := cw.Write([]string{strconv.FormatFloat(p.TS, 'g', 10, 64), strconv.FormatFloat(p.Y, 'g', 10, 64)}); err != nil {
					return err
				}
			}
			cw.Flush()
			return cw.Error()
		}
		warnStability(e.stderr, stab)
		return timeTable(w, r, sys.Input.Source, response.OutputLabel(sys.Output), model, chk, refused)
	})
}

// timeTable prints the closed form, the figures and the samples.
func timeTable(w io.Writer, r *timeresp.TimeResponse, in, out string, model *reduce.Model, chk *transient.Result, refused error) error {
	fmt.Fprintf(w, "%s response of %s to a unit %s of %s\n", r.Kind, out, r.Kind, in)
	if refused != nil {
		fmt.Fprintf(w, "The reduced model's response was not used (%v);\nthese samples are from the full extraction of the transfer function.\n", refused)
	}
	timeReducedStatement(w, model, chk)
	fmt.Fprintln(w)
	if model != nil && len(r.Modes) > 0 {
		fmt.Fprintln(w, "closed form of the reduced model (its poles near and past the top of the verified range are the model's own):")
	}
	fmt.Fprintln(w, closedFormText(r))
	if r.Unstable {
		fmt.Fprintln(w, "\nthe circuit is UNSTABLE: poles in the right half-plane or repeated on the jω axis:")
		for _, p := range r.UnstablePoles {
			fmt.Fprintf(w, "  s = %s rad/s\n", complexText(p))
		}
	}
	fmt.Fprintln(w)
	m := r.Metrics
	t := newTable(w, "figure", "value")
	rows := [][2]string{
		{"final value", optEng(m.Final, "")},
		{"rise time 10-90 %", optEng(m.RiseTimeS, "s")},
		{"overshoot", optPct(m.OvershootPct)},
		{"peak time", optEng(m.PeakTimeS, "s")},
		{"settling time 2 %", optEng(m.SettlingTimeS, "s")},
	}
	for _, row := range rows {
		if err := t.row(row[0], row[1]); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	if m.Note != "" {
		fmt.Fprintf(w, "note: %s\n", m.Note)
	}
	fmt.Fprintln(w)
	st := newTable(w, "t_s", "y")
	for _, p := range r.Points {
		if err := st.row(num(p.TS), num(p.Y)); err != nil {
			return err
		}
	}
	return st.render()
}

// optEng formats an optional value in engineering notation.
func optEng(v *float64, unit string) string {
	if v == nil {
		return "-"
	}
	if unit == "" {
		return num(*v)
	}
	return notation.Eng(*v, unit)
}

// optPct formats an optional percentage.
func optPct(v *float64) string {
	if v == nil {
		return "-"
	}
	return fixed(*v, 2) + " %"
}

// complexText formats a complex number as a ± bj.
func complexText(z complex128) string {
	re, im := real(z), imag(z)
	if im == 0 {
		return num(re)
	}
	sign := "+"
	if im < 0 {
		sign, im = "-", -im
	}
	return fmt.Sprintf("%s %s %sj", num(re), sign, num(im))
}

// writeTimePlot draws a time response with its marks.
func writeTimePlot(e *env, path string, protect []string, l *loaded, r *timeresp.TimeResponse) error {
	format, err := plot.FormatFromPath(path)
	if err != nil {
		return err
	}
	tr := timeTrace(r)
	ts, ys := tr.TS, tr.Y
	marks := plot.StepMarks{}
	if r.Kind == "step" {
		if r.Metrics.Final != nil {
			marks.Final = *r.Metrics.Final
			marks.RiseStartS, marks.RiseEndS = r.Metrics.Rise10S, r.Metrics.Rise90S
			marks.SettlingS = r.Metrics.SettlingTimeS
			marks.SettlingBand = 0.02
			if r.Metrics.OvershootPct != nil && *r.Metrics.OvershootPct > 0 {
				marks.PeakTimeS, marks.PeakValue = r.Metrics.PeakTimeS, r.Metrics.Peak
			}
		} else if len(ys) > 0 {
			marks.Final = ys[len(ys)-1]
		}
	} else if len(ys) > 0 {
		marks.Final = ys[len(ys)-1]
	}
	fig, err := plot.Step(ts, ys, marks, plot.StepOptions{Title: timeTitle(l, r)})
	if err != nil {
		return err
	}
	return writeTo(e, path, append(protect, l.name), func(w io.Writer) error { return fig.Encode(w, format) })
}

// timeTitle is the title of a time response's plot.
func timeTitle(l *loaded, r *timeresp.TimeResponse) string {
	title := fmt.Sprintf("%s response", r.Kind)
	if l.circuit.Title != "" {
		title = l.circuit.Title + ": " + title
	}
	return title
}

// timeTrace is the curve of a time response: t (s) and y.
func timeTrace(r *timeresp.TimeResponse) plot.TimeTrace {
	tr := plot.TimeTrace{TS: make([]float64, len(r.Points)), Y: make([]float64, len(r.Points))}
	for i, p := range r.Points {
		tr.TS[i], tr.Y[i] = p.TS, p.Y
	}
	return tr
}

// timeOverlay draws the time responses of the --vary values in one
// figure, a trace per value (the marks of each are on its own plot).
func timeOverlay(labels []string, runs []variantPlot[plot.TimeTrace]) (*plot.Figure, error) {
	traces := make([]plot.TimeTrace, len(runs))
	for i, r := range runs {
		traces[i] = r.data
		traces[i].Label = labels[i]
	}
	return plot.Steps(traces, plot.StepOptions{Title: overlayTitle(runs, "one trace per value")})
}
