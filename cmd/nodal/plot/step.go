package plot

import (
	"fmt"
	"math"
	"nodal/cmd/nodal/notation"
	"strconv"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// StepMarks are the figures of merit of a step response to mark on its
// plot, in the response's own units (output units and seconds). Optional
// marks are pointers; nil leaves the mark out.
//
//   - Initial and Final are the output before the step and its final
//     value; a dashed line shows Final.
//   - RiseStartS and RiseEndS are the times (s) the output crosses 10 % and
//     90 % of the way from Initial to Final; marked at those levels.
//   - SettlingS is the time (s) after which the output stays within
//     SettlingBand (a fraction of |Final − Initial|, e.g. 0.02) of Final;
//     a vertical line, and the band when SettlingBand > 0.
//   - PeakTimeS and PeakValue mark the extreme (overshoot) point.
type StepMarks struct {
	Initial, Final       float64
	RiseStartS, RiseEndS *float64
	SettlingS            *float64
	SettlingBand         float64
	PeakTimeS, PeakValue *float64
}

// StepOptions are the presentation choices of Step.
type StepOptions struct {
	// Title is printed above the plot; empty for none.
	Title string
	// YLabel names the output with its unit; empty for "output (V)".
	YLabel string
	// Width and Height; zero for 17 cm × 9 cm.
	Width, Height vg.Length
}

// PanelStep is the panel name of the step response in Series keys.
const PanelStep = "step"

// Step draws the step response y(t) (t in s, increasing, finite; y in
// output units) with the marks. The time axis is labelled in s, ms, µs or
// ns as the duration suits; the data stay in seconds.
//
// Series keys: "step/response" (t, y); "step/final" (the final-value line
// over the time span); "step/rise" (the 10 % and 90 % points, those given);
// "step/settling" (one point: SettlingS and the output interpolated
// there); "step/peak"; "step/band/lo" and "step/band/hi" (the settling
// band edges).
func Step(t, y []float64, m StepMarks, opt StepOptions) (*Figure, error) {
	const what = "step response"
	if err := checkTimes(what, t, y); err != nil {
		return nil, err
	}
	if !finite(m.Initial) || !finite(m.Final) || !finite(m.SettlingBand) || m.SettlingBand < 0 {
		return nil, fmt.Errorf("plot: %s: initial %g, final %g and settling band %g must be finite (band ≥ 0)", what, m.Initial, m.Final, m.SettlingBand)
	}
	t0, t1 := t[0], t[len(t)-1]
	fig, pn := timePanel(opt, t0, t1)
	p := pn.p

	pts := make([][2]float64, len(t))
	for i := range t {
		pts[i] = [2]float64{t[i], y[i]}
	}
	if err := addTrace(pn, "response", pts, styleFor(0), false); err != nil {
		return nil, err
	}
	ref := draw.LineStyle{Color: markColor, Width: vg.Points(0.8), Dashes: []vg.Length{vg.Points(5), vg.Points(3)}}
	if err := addPlain(pn, "final", [][2]float64{{t0, m.Final}, {t1, m.Final}}, ref); err != nil {
		return nil, err
	}
	if err := addNotes(pn, plotter.XYs{{X: t0, Y: m.Final}}, []string{"final " + strconv.FormatFloat(m.Final, 'g', 5, 64)}); err != nil {
		return nil, err
	}
	delta := m.Final - m.Initial
	if m.SettlingBand > 0 {
		band := draw.LineStyle{Color: gridMajor, Width: vg.Points(0.8), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}
		for _, side := range []struct {
			key  string
			sign float64
		}{{"band/lo", -1}, {"band/hi", 1}} {
			v := m.Final + side.sign*m.SettlingBand*math.Abs(delta)
			if err := addPlain(pn, side.key, [][2]float64{{t0, v}, {t1, v}}, band); err != nil {
				return nil, err
			}
		}
	}
	var rise [][2]float64
	var riseNotes []string
	for _, r := range []struct {
		at   *float64
		frac float64
	}{{m.RiseStartS, 0.1}, {m.RiseEndS, 0.9}} {
		if r.at != nil {
			rise = append(rise, [2]float64{*r.at, m.Initial + r.frac*delta})
			riseNotes = append(riseNotes, fmt.Sprintf("%.0f %% at %s", 100*r.frac, notation.Digits(*r.at, 4, "s")))
		}
	}
	if len(rise) > 0 {
		if err := addMarks(pn, "rise", rise, riseNotes, draw.RingGlyph{}); err != nil {
			return nil, err
		}
	}
	if m.SettlingS != nil {
		ts := *m.SettlingS
		ys := interpLinX(t, y, ts)
		if !finite(ys) {
			return nil, fmt.Errorf("plot: %s: settling time %g s lies outside the simulated %g…%g s", what, ts, t0, t1)
		}
		p.Add(refLine{vertical: true, at: ts, style: markLineStyle()})
		if err := addMarks(pn, "settling", [][2]float64{{ts, ys}}, []string{"settled at " + notation.Digits(ts, 4, "s")}, draw.SquareGlyph{}); err != nil {
			return nil, err
		}
	}
	if m.PeakTimeS != nil && m.PeakValue != nil {
		note := "peak " + strconv.FormatFloat(*m.PeakValue, 'g', 5, 64) + " at " + notation.Digits(*m.PeakTimeS, 4, "s")
		if err := addMarks(pn, "peak", [][2]float64{{*m.PeakTimeS, *m.PeakValue}}, []string{note}, draw.PyramidGlyph{}); err != nil {
			return nil, err
		}
	}
	p.X.Min, p.X.Max = t0, t1
	fitY(pn, 0.08)
	return fig, nil
}

// checkTimes validates a time response: at least two points, finite,
// times strictly increasing.
func checkTimes(what string, t, y []float64) error {
	if len(t) < 2 {
		return fmt.Errorf("plot: %s: need at least 2 time points, have %d", what, len(t))
	}
	if err := checkLen(what, "output", len(t), len(y)); err != nil {
		return err
	}
	for i := range t {
		if !finite(t[i]) || !finite(y[i]) {
			return fmt.Errorf("plot: %s: point %d (t=%g s, y=%g) is not finite", what, i, t[i], y[i])
		}
		if i > 0 && t[i] <= t[i-1] {
			return fmt.Errorf("plot: %s: times must increase, but point %d (%g s) follows %g s", what, i, t[i], t[i-1])
		}
	}
	return nil
}

// timePanel is the figure of a time response over [t0, t1] s: the time
// axis in s, ms, µs or ns as the span suits (data stay in seconds).
func timePanel(opt StepOptions, t0, t1 float64) (*Figure, *panel) {
	w, h := orDefault(opt.Width, 17*vg.Centimeter), orDefault(opt.Height, 9*vg.Centimeter)
	ylabel := opt.YLabel
	if ylabel == "" {
		ylabel = "output (V)"
	}
	e := notation.AxisExp3(math.Max(math.Abs(t0), math.Abs(t1)))
	e = min(e, 0) // no ks
	scale := math.Pow(1000, float64(e))
	fig := newFigure(w, h)
	p := newPanel(opt.Title, "time ("+notation.Prefix(e)+"s)", ylabel)
	p.X.Tick.Marker = linearTicks{Scale: scale}
	p.Add(grid{})
	return fig, fig.add(PanelStep, p)
}

// TimeTrace is one time response to overlay: output values Y (output
// units) at increasing times TS (s), under a legend label.
type TimeTrace struct {
	Label string
	TS, Y []float64
}

// Steps overlays several time responses (one per value of a varied
// part), each in its own colour and dash with a legend entry, over the
// union of their time spans. No figures of merit are marked: the marks of
// one response are drawn by Step.
//
// Series keys: "step/LABEL" (t, y). Labels must be unique and non-empty.
func Steps(traces []TimeTrace, opt StepOptions) (*Figure, error) {
	if len(traces) == 0 {
		return nil, fmt.Errorf("plot: a time plot needs at least one trace")
	}
	t0, t1 := math.Inf(1), math.Inf(-1)
	seen := map[string]bool{}
	for _, tr := range traces {
		if tr.Label == "" || seen[tr.Label] {
			return nil, fmt.Errorf("plot: time trace labels must be unique and non-empty (%q)", tr.Label)
		}
		seen[tr.Label] = true
		if err := checkTimes(fmt.Sprintf("trace %q", tr.Label), tr.TS, tr.Y); err != nil {
			return nil, err
		}
		t0, t1 = math.Min(t0, tr.TS[0]), math.Max(t1, tr.TS[len(tr.TS)-1])
	}
	fig, pn := timePanel(opt, t0, t1)
	for i, tr := range traces {
		pts := make([][2]float64, len(tr.TS))
		for k := range tr.TS {
			pts[k] = [2]float64{tr.TS[k], tr.Y[k]}
		}
		if err := addTrace(pn, tr.Label, pts, styleFor(i), true); err != nil {
			return nil, err
		}
	}
	pn.p.X.Min, pn.p.X.Max = t0, t1
	fitY(pn, 0.08)
	fig.Layout()
	return fig, nil
}

// addPlain draws pts as a plain line in style sty (series name).
func addPlain(pn *panel, name string, pts [][2]float64, sty draw.LineStyle) error {
	ln, err := plotter.NewLine(pn.addLineSeries(name, pts))
	if err != nil {
		return fmt.Errorf("plot: %s %q: %w", pn.name, name, err)
	}
	ln.LineStyle = sty
	pn.p.Add(ln)
	return nil
}
