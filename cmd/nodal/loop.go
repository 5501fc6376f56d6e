package main

import (
	"fmt"
	"io"
	"math"

	"nodal/analysis/loop"
	"nodal/analysis/stability"
	"nodal/cmd/nodal/notation"
	"nodal/cmd/nodal/plot"
	"nodal/netlist"
)

// loopCmd prints the loop gain around one gain element with its margins.
type loopCmd struct {
	circuitArgs
	varyArgs
	At        string `required:"" help:"The gain element whose loop is measured: an op-amp with a0= or gbw=, or a controlled source." placeholder:"PART"`
	From      string `help:"Start frequency of the table, e.g. 10Hz (default: the poles and zeros of T, two decades either side)." placeholder:"F"`
	To        string `help:"Stop frequency of the table, e.g. 100MHz." placeholder:"F"`
	PerDecade int    `help:"Table points per decade." default:"10"`
	Format    string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output    string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot      string `help:"Also draw the Bode plot of T with the crossovers and both margins marked (.svg or .png)." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *loopCmd) Help() string {
	return `Computes the loop gain T(s) of the feedback loop closed through one gain
element, as Bode's return ratio: the element's output is driven by an
independent test signal t instead of by its own control, every
independent source is zeroed, and T = −(the output the element would
produce from the control r that returns)/t = −k·r/t for an element of
gain k. For an op-amp k is its open-loop gain a(s) (so a non-inverting
amplifier of divider ratio β has T = a(s)·β); PART must have a0= or
gbw= (an ideal op-amp's loop gain is infinite). T(s) is printed as
nodal transfer prints H(s), then a table of |T| and arg T and the figures:

  gain crossover   |T(jf)| = 1 (every one, if several)
  phase margin     180° + arg T at a gain crossover (phase unwrapped
                   from low frequency)
  phase crossover  arg T = −180° (mod 360°)
  gain margin      −20·log10|T| at a phase crossover, dB

"no crossover" says |T| stays below (or above) 1 over the range. The
closed-loop circuit's own stability (its natural frequencies) is stated
too. The figures are searched over three decades beyond the poles and
zeros of T; --from/--to choose only the table.

Example (testdata/examples/photodiode_frontend.nodal, a transimpedance
front end: 1 MΩ ∥ 1 pF feedback, 47 pF photodiode, op-amp a0=1e5,
gbw=10 MHz):

    nodal loop testdata/examples/photodiode_frontend.nodal --at U1

    T(s) = 100e3·(1 + s/1e6) / [(1 + s/628.3)·(1 + s/20.83e3)]
    gain crossover 247.6 kHz, phase margin 58.06°; no phase crossover
    (two poles and a zero: the phase stays above −180°); closed loop
    stable. With --set Cf=0.1p the margin falls to 7.7°.

    nodal loop testdata/examples/photodiode_frontend.nodal --at U1 --format json
    nodal loop testdata/examples/photodiode_frontend.nodal --at U1 --plot loop.svg`
}

// loopResult is a loop gain with its figures (loop.LoopGain).
type loopResult = loop.LoopGain

// loopGain extracts T(s) = −r/t around part and reads its figures.
func loopGain(c *netlist.Circuit, part string) (*loopResult, error) {
	return loop.NewLoopGain(c, part)
}

// Run prints the loop gain report.
func (c *loopCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "json"); err != nil {
		return err
	}
	if len(c.Vary) > 0 {
		return runVariedCmd(e, &c.circuitArgs, &c.Output, &c.Vary, c.Plot, c.Format, c.Run, loopOverlay)
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	lr, err := loopGain(l.circuit, c.At)
	if err != nil {
		return err
	}
	st, err := circuitStability(l)
	if err != nil {
		return err
	}
	fa := freqArgs{From: c.From, To: c.To, PerDecade: c.PerDecade}
	freqs, err := fa.frequencies(func() (float64, float64) { return rangeOf(l, lr.T) })
	if err != nil {
		return err
	}
	mag, ph := loopCurves(lr, freqs)
	if c.Plot != "" && e.plotData != nil {
		e.plotData(variantPlot[plot.BodeTrace]{loopTitle(l, lr), plot.BodeTrace{FreqHz: freqs, MagDB: mag, PhaseDeg: ph}})
	} else if c.Plot != "" {
		if err := c.writePlot(e, l, lr, freqs, mag, ph); err != nil {
			return err
		}
	}
	if c.Format != "json" {
		warnStability(e.stderr, st)
	}
	unit := "V/V"
	if p, _ := l.circuit.Part(c.At); p.Kind == netlist.CCVS || p.Kind == netlist.CCCS {
		unit = "A/A"
	}
	res := &tfResult{tf: lr.T, sys: lr.Sys, unit: unit, yName: "r", uName: "t",
		what: fmt.Sprintf("T(s) = −(control returned to %s)/(test signal driving it): loop gain around %s", c.At, c.At)}
	rep := newTFReport(res)
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, loopDoc(lr, st, freqs, mag, ph))
		}
		if err := rep.table(w); err != nil {
			return err
		}
		fmt.Fprintln(w)
		t := newTable(w, "freq_hz", "mag_db", "phase_deg")
		for i, f := range freqs {
			if err := t.row(num(f), fixed(mag[i], 4), fixed(ph[i], 3)); err != nil {
				return err
			}
		}
		if err := t.render(); err != nil {
			return err
		}
		fmt.Fprintln(w)
		return loopFiguresTable(w, lr, st)
	})
}

// loopFiguresTable prints the crossovers, margins and closed-loop
// stability.
func loopFiguresTable(w io.Writer, lr *loopResult, st *stability.Result) error {
	t := newTable(w, "figure", "value")
	for _, row := range loopFigureRows(lr, st) {
		if err := t.row(row[0], row[1]); err != nil {
			return err
		}
	}
	return t.render()
}

// loopFigureRows are the name/value rows of the loop figures.
func loopFigureRows(lr *loopResult, st *stability.Result) [][2]string {
	f := lr.Figures
	var rows [][2]string
	if len(f.Gain) == 0 {
		side := "below"
		if f.Above {
			side = "above"
		}
		rows = append(rows, [2]string{"gain crossover", fmt.Sprintf("no crossover: |T| stays %s 1 from %s to %s", side,
			notation.Eng(f.FromHz, "Hz"), notation.Eng(f.ToHz, "Hz"))})
	}
	for _, g := range f.Gain {
		rows = append(rows, [2]string{"gain crossover", fmt.Sprintf("%s: phase %s°, phase margin %s°",
			notation.Eng(g.FreqHz, "Hz"), fixed(g.PhaseDeg, 2), fixed(g.PhaseMarginDeg, 2))})
	}
	if len(f.Phase) == 0 {
		rows = append(rows, [2]string{"phase crossover", "no crossover: arg T does not reach −180° (mod 360°)"})
	}
	for _, p := range f.Phase {
		rows = append(rows, [2]string{"phase crossover", fmt.Sprintf("%s: |T| %s dB, gain margin %s dB",
			notation.Eng(p.FreqHz, "Hz"), fixed(p.MagDB, 2), fixed(p.GainMarginDB, 2))})
	}
	closed := st.Class.String()
	if len(st.Offending) > 0 {
		closed += ": " + naturalList(st.Offending)
	}
	rows = append(rows, [2]string{"closed loop", closed})
	return rows
}

// loopPoint is one JSON point of T(j2πf).
type loopPoint struct {
	FreqHz   float64  `json:"freq_hz"`
	MagDB    *float64 `json:"mag_db"`
	PhaseDeg float64  `json:"phase_deg"`
}

// loopJSON is the JSON document of `nodal loop`: T(s) as tfJSON gives
// H(s) (num, den and gain null when they do not fit a float64), the
// points of T, every crossover with its margin, the smallest margins
// (null when there is no crossover) and the closed loop's stability.
type loopJSON struct {
	Part              string      `json:"part"`
	Num               []float64   `json:"num"`
	Den               []float64   `json:"den"`
	Poles             []rootJSON  `json:"poles"`
	Zeros             []rootJSON  `json:"zeros"`
	Gain              *float64    `json:"gain"`
	Factored          string      `json:"factored"`
	Points            []loopPoint `json:"points"`
	CrossoversHz      []float64   `json:"crossovers_hz"`
	PhaseMarginsDeg   []float64   `json:"phase_margins_deg"`
	PhaseCrossoversHz []float64   `json:"phase_crossovers_hz"`
	GainMarginsDB     []float64   `json:"gain_margins_db"`
	PhaseMarginDeg    *float64    `json:"phase_margin_deg"`
	GainMarginDB      *float64    `json:"gain_margin_db"`
	stabilityJSON
}

// loopDoc returns the JSON document of a loop gain.
func loopDoc(lr *loopResult, st *stability.Result, freqs, mag, ph []float64) loopJSON {
	f := lr.Figures
	doc := loopJSON{Part: lr.Part, Poles: distinctRootsJSON(lr.T.Poles), Zeros: distinctRootsJSON(lr.T.Zeros), Factored: factoredText(lr.T),
		Points: make([]loopPoint, len(freqs)), CrossoversHz: []float64{}, PhaseMarginsDeg: []float64{},
		PhaseCrossoversHz: []float64{}, GainMarginsDB: []float64{}, stabilityJSON: newStabilityJSON(st)}
	if lr.T.Fits() {
		doc.Num, doc.Den, doc.Gain = lr.T.Num, lr.T.Den, finiteOrNil(lr.T.Gain)
	}
	for i := range freqs {
		doc.Points[i] = loopPoint{FreqHz: freqs[i], MagDB: finiteOrNil(mag[i]), PhaseDeg: ph[i]}
	}
	for _, g := range f.Gain {
		doc.CrossoversHz, doc.PhaseMarginsDeg = append(doc.CrossoversHz, g.FreqHz), append(doc.PhaseMarginsDeg, g.PhaseMarginDeg)
	}
	for _, p := range f.Phase {
		doc.PhaseCrossoversHz, doc.GainMarginsDB = append(doc.PhaseCrossoversHz, p.FreqHz), append(doc.GainMarginsDB, p.GainMarginDB)
	}
	if pm, ok := f.PhaseMarginDeg(); ok {
		doc.PhaseMarginDeg = &pm
	}
	if gm, ok := f.GainMarginDB(); ok {
		doc.GainMarginDB = &gm
	}
	return doc
}

// loopCurves returns 20·log10|T| (dB) and arg T (degrees, unwrapped as
// the figures are) at the frequencies (Hz).
func loopCurves(lr *loopResult, freqs []float64) (mag, ph []float64) {
	mag, ph = make([]float64, len(freqs)), make([]float64, len(freqs))
	for i, f := range freqs {
		mag[i] = lr.T.GainDB(2 * math.Pi * f)
		ph[i] = lr.Figures.PhaseDeg(lr.T, 2*math.Pi*f)
	}
	return mag, ph
}

// writePlot draws the Bode plot of T with its margins.
func (c *loopCmd) writePlot(e *env, l *loaded, lr *loopResult, freqs, mag, ph []float64) error {
	format, err := plot.FormatFromPath(c.Plot)
	if err != nil {
		return err
	}
	fig, err := loopFigure(l, lr, freqs, mag, ph)
	if err != nil {
		return err
	}
	return writeTo(e, c.Plot, []string{c.File, c.Output, l.name}, func(w io.Writer) error { return fig.Encode(w, format) })
}

// loopFigure is the Bode plot of T with the crossovers inside the
// frequency range and both margins marked.
func loopFigure(l *loaded, lr *loopResult, freqs, mag, ph []float64) (*plot.Figure, error) {
	if len(freqs) < 2 {
		return nil, fmt.Errorf("the Bode plot of T needs at least two frequencies")
	}
	var m plot.LoopMarks
	lo, hi := freqs[0], freqs[len(freqs)-1]
	for _, g := range lr.Figures.Gain {
		if g.FreqHz >= lo && g.FreqHz <= hi {
			m.CrossoversHz = append(m.CrossoversHz, g.FreqHz)
			m.PhaseAtCrossoverDeg = append(m.PhaseAtCrossoverDeg, g.PhaseDeg)
			m.PhaseMarginDeg = append(m.PhaseMarginDeg, g.PhaseMarginDeg)
		}
	}
	for _, p := range lr.Figures.Phase {
		if p.FreqHz >= lo && p.FreqHz <= hi {
			m.PhaseCrossoversHz = append(m.PhaseCrossoversHz, p.FreqHz)
			m.MagAtPhaseCrossDB = append(m.MagAtPhaseCrossDB, p.MagDB)
			m.GainMarginDB = append(m.GainMarginDB, p.GainMarginDB)
		}
	}
	return plot.Loop(plot.BodeTrace{Label: "T", FreqHz: freqs, MagDB: mag, PhaseDeg: ph}, m, plot.BodeOptions{Title: loopTitle(l, lr)})
}

// loopTitle is the title of the Bode plot of a loop gain.
func loopTitle(l *loaded, lr *loopResult) string {
	title := "loop gain T around " + lr.Part
	if l.circuit.Title != "" {
		title = l.circuit.Title + ": " + title
	}
	return title
}

// loopOverlay draws the loop gains of the --vary values in one Bode
// figure, a trace per value; the margins are marked only on the plot of
// a single value, as the title says.
func loopOverlay(labels []string, runs []variantPlot[plot.BodeTrace]) (*plot.Figure, error) {
	traces := make([]plot.BodeTrace, len(runs))
	for i, r := range runs {
		traces[i] = r.data
		traces[i].Label = "T, " + labels[i]
	}
	return plot.Loops(traces, plot.BodeOptions{Title: overlayTitle(runs, "margins on single-value plots")})
}
