package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"sort"

	"nodal/analysis/response"
	"nodal/cmd/nodal/notation"
	"nodal/cmd/nodal/plot"
)

// impedanceCmd prints the impedance at a source's port or at a node.
type impedanceCmd struct {
	circuitArgs
	varyArgs
	Port string `help:"The impedance the circuit presents at this source's terminals, the source removed (every other source zeroed)." placeholder:"SOURCE"`
	Node string `help:"The impedance between this node and gnd (or --ref), every independent source zeroed." placeholder:"NODE"`
	Ref  string `help:"With --node: the other node of the impedance (default gnd)." placeholder:"NODE"`
	freqArgs
	Format string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot   string `help:"Also draw |Z| (Ω, log axis) and its phase to this file (.svg or .png)." placeholder:"FILE" type:"path"`
	symbolicArgs
}

// Help is the extended help with a worked example.
func (c *impedanceCmd) Help() string {
	return `Computes the exact impedance Z(s) = V(s)/I(s) in Ω: at the port of a
source (--port SOURCE: the source is replaced by a test current, every other
independent source zeroed), or between a node and gnd or --ref (--node NODE:
a test current injected, every independent source zeroed). It prints Z(s)
as nodal transfer prints H(s) (expanded, factored, poles, zeros, the value
at DC in Ω), then |Z| and its phase over frequency (the range of the poles
and zeros, or --from/--to/--per-decade/--at), the smallest and largest |Z|
and where they occur (over the table and the resonances), and the resonances: series where the phase rises
through 0° (a minimum of |Z| nearby), parallel where it falls (a maximum).

Examples:

    nodal impedance testdata/examples/logger_antialias.nodal --port Vin   # what the source drives
    nodal impedance testdata/examples/logger_antialias.nodal --node out   # output impedance
    nodal impedance testdata/examples/logger_antialias.nodal --node a --ref b --from 10Hz --to 1MHz
    nodal impedance testdata/examples/logger_antialias.nodal --node out --at 50Hz,1k --format json
    nodal impedance testdata/examples/logger_antialias.nodal --node out --plot z.svg
    nodal impedance testdata/examples/logger_antialias.nodal --port Vin --symbolic`
}

// request is the impedance asked for.
func (c *impedanceCmd) request() (tfRequest, error) {
	if c.Port == "" && c.Node == "" {
		return tfRequest{}, errors.New("give --port SOURCE or --node NODE")
	}
	return tfRequest{Port: c.Port, Node: c.Node, ZRef: c.Ref}, nil
}

// impedancePoint is one row of the frequency table.
type impedancePoint struct {
	FreqHz   float64  `json:"freq_hz"`
	MagOhm   *float64 `json:"mag_ohm"`
	PhaseDeg *float64 `json:"phase_deg"`
}

// impedanceExtreme is the smallest or largest |Z| and where it occurs.
type impedanceExtreme struct {
	FreqHz float64 `json:"freq_hz"`
	MagOhm float64 `json:"mag_ohm"`
}

// impedanceJSON is the document of nodal impedance: the keys of the
// transfer document, the frequency table and the extremes of |Z| over the
// table and the resonances found in it (null when no point has a finite
// |Z|).
type impedanceJSON struct {
	tfJSON
	Points []impedancePoint  `json:"points"`
	Min    *impedanceExtreme `json:"min"`
	Max    *impedanceExtreme `json:"max"`
}

// Run prints the impedance report.
func (c *impedanceCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "json"); err != nil {
		return err
	}
	if len(c.Vary) > 0 {
		return runVariedCmd(e, &c.circuitArgs, &c.Output, &c.Vary, c.Plot, c.Format, c.Run, impedanceOverlay)
	}
	if err := c.symbolicArgs.check(); err != nil {
		return err
	}
	q, err := c.request()
	if err != nil {
		return err
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	if c.Symbolic {
		if c.Plot != "" {
			return errors.New("--plot draws the numeric impedance: run it without --symbolic")
		}
		return c.symbolicArgs.write(e, l, q, c.File, c.Output, c.Format)
	}
	r, err := extractTF(l, q)
	if err != nil {
		return err
	}
	freqs, err := c.frequencies(func() (float64, float64) { return rangeOf(l, r.tf) })
	if err != nil {
		return err
	}
	// The circuit's stability, as every other command states it: a
	// warning beside the table, the keys in JSON; its resonances serve
	// the phase unwrapping.
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	resp, err := response.SweepWith(e.ctx, r.sys, freqs, response.SweepOptions{PhaseMarksHz: resonanceMarks(stab)})
	if err != nil {
		return err
	}
	lo, hi, ok := response.Extremes(resp)
	res := response.Resonances(resp, func(w float64) complex128 { return r.tf.Eval(complex(0, w)) })
	res = append(res, response.AxisResonances(r.tf.Poles, r.tf.Zeros, resp.FreqHz[0], resp.FreqHz[len(resp.FreqHz)-1])...)
	sort.SliceStable(res, func(i, j int) bool { return res[i].FreqHz < res[j].FreqHz })
	// A resonance is an exact point between two rows: it counts for the
	// extremes too, so a coarse table does not hide a deep minimum.
	for _, x := range res {
		if !ok || math.IsInf(x.Mag, 0) {
			continue
		}
		if x.Mag < lo.Mag {
			lo = response.Extreme{FreqHz: x.FreqHz, Mag: x.Mag}
		}
		if x.Mag > hi.Mag {
			hi = response.Extreme{FreqHz: x.FreqHz, Mag: x.Mag}
		}
	}
	if ok { // the extremes between the rows, not only at them
		eval := func(w float64) complex128 { return r.tf.Eval(complex(0, w)) }
		lo = response.RefineExtreme(resp, lo, true, eval)
		hi = response.RefineExtreme(resp, hi, false, eval)
	}
	title := r.what
	if l.circuit.Title != "" {
		title = l.circuit.Title + ": " + title
	}
	if c.Plot != "" && e.plotData != nil {
		e.plotData(variantPlot[plot.ImpedanceTrace]{title, plot.ImpedanceTrace{FreqHz: resp.FreqHz, MagOhm: resp.Mag, PhaseDeg: resp.PhaseDeg}})
	} else if c.Plot != "" {
		format, err := plot.FormatFromPath(c.Plot)
		if err != nil {
			return err
		}
		fig, err := plot.Impedance(resp.FreqHz, resp.Mag, resp.PhaseDeg, plot.BodeOptions{Title: title})
		if err != nil {
			return err
		}
		if err := writeTo(e, c.Plot, []string{c.File, c.Output}, func(w io.Writer) error { return fig.Encode(w, format) }); err != nil {
			return err
		}
	}

	rep := newTFReport(r)
	warnPhaseUnresolved(e.stderr, []*response.Response{resp})
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		if c.Format == "json" {
			doc := impedanceJSON{tfJSON: tfDoc(rep), Points: []impedancePoint{}}
			doc.stabilityJSON = newStabilityJSON(stab)
			for i, f := range resp.FreqHz {
				doc.Points = append(doc.Points, impedancePoint{FreqHz: f, MagOhm: finiteOrNil(resp.Mag[i]), PhaseDeg: finiteOrNil(resp.PhaseDeg[i])})
			}
			if ok {
				doc.Min = &impedanceExtreme{FreqHz: lo.FreqHz, MagOhm: lo.Mag}
				doc.Max = &impedanceExtreme{FreqHz: hi.FreqHz, MagOhm: hi.Mag}
			}
			return writeJSON(w, doc)
		}
		warnStability(e.stderr, stab)
		if err := rep.closedForm(w); err != nil {
			return err
		}
		fmt.Fprintln(w)
		t := newTable(w, "figure", "value")
		rows := [][2]string{{"value at DC", dcImpedanceText(rep)}}
		if ok {
			rows = append(rows,
				[2]string{"minimum |Z|", fmt.Sprintf("%s at %s", notation.Eng(lo.Mag, "Ω"), notation.Eng(lo.FreqHz, "Hz"))},
				[2]string{"maximum |Z|", fmt.Sprintf("%s at %s", notation.Eng(hi.Mag, "Ω"), notation.Eng(hi.FreqHz, "Hz"))})
		} else {
			rows = append(rows, [2]string{"minimum |Z|", "none: no finite |Z| in the range"})
		}
		if len(res) == 0 {
			rows = append(rows, [2]string{"resonances", "none in the range (the phase does not cross 0°)"})
		}
		for _, x := range res {
			kind := "parallel resonance"
			if x.Series {
				kind = "series resonance"
			}
			mag := "|Z| " + notation.Eng(x.Mag, "Ω")
			switch {
			case math.IsInf(x.Mag, 1):
				mag = "|Z| unbounded (a pole on the jω axis)"
			case x.Mag == 0 && x.Series:
				mag = "|Z| = 0 (a zero on the jω axis)"
			}
			rows = append(rows, [2]string{kind, notation.Eng(x.FreqHz, "Hz") + ", " + mag})
		}
		for _, row := range rows {
			if err := t.row(row[0], row[1]); err != nil {
				return err
			}
		}
		if err := t.render(); err != nil {
			return err
		}
		fmt.Fprintln(w)
		ft := newTable(w, "freq_hz", "mag_ohm", "phase_deg")
		for i, f := range resp.FreqHz {
			if err := ft.row(num(f), num(resp.Mag[i]), phaseCell(resp, i)); err != nil {
				return err
			}
		}
		return ft.render()
	})
}

// dcImpedanceText is Z at DC: a value in Ω, 0 (a short at DC) or
// unbounded (an open at DC).
func dcImpedanceText(rep *tfReport) string {
	switch {
	case rep.dc.Power == 0 && !math.IsInf(rep.dc.Gain, 0) && !math.IsNaN(rep.dc.Gain):
		return notation.Eng(rep.dc.Gain, "Ω")
	case rep.dc.Power > 0:
		return "0 Ω (a short at DC)"
	}
	return "unbounded (open at DC)"
}

// impedanceOverlay draws the impedances of the --vary values in one
// figure, a trace per value.
func impedanceOverlay(labels []string, runs []variantPlot[plot.ImpedanceTrace]) (*plot.Figure, error) {
	traces := make([]plot.ImpedanceTrace, len(runs))
	for i, r := range runs {
		traces[i] = r.data
		traces[i].Label = labels[i]
	}
	return plot.Impedances(traces, plot.BodeOptions{Title: overlayTitle(runs, "one trace per value")})
}
