package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"

	"nodal/analysis/response"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
)

// sweepCmd prints the frequency response.
type sweepCmd struct {
	circuitArgs
	In  string   `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out []string `required:"" help:"Output node, or i(PART) for a part's current; repeat for several traces." placeholder:"NODE"`
	Ref string   `help:"Reference node of a differential output (default gnd)." placeholder:"NODE"`
	freqArgs
	Format  string `help:"Output format: table, csv or json (default: from the -o extension, else table)." placeholder:"table|csv|json"`
	Output  string `short:"o" help:"Write the table/CSV/JSON to this file instead of standard output." placeholder:"FILE" type:"path"`
	Plot    string `help:"Also draw a Bode plot to this file (.svg or .png)." placeholder:"FILE" type:"path"`
	Workers int    `help:"Goroutines for the sweep (default: all cores)." default:"0"`
}

// Help is the extended help with a worked example.
func (c *sweepCmd) Help() string {
	return `Computes H(j2πf) = output/input exactly at each frequency by solving the
MNA system, with |H|, |H| in dB, phase in degrees (unwrapped along the
sweep) and group delay in seconds. The output is a node voltage against
gnd (or --ref), or the current through a part written i(PART).

Examples:

    nodal sweep testdata/examples/logger_antialias.nodal --out out --from 10Hz --to 100kHz --per-decade 20
    nodal sweep testdata/examples/logger_antialias.nodal --out out --at 1k,2k,5k --format json
    nodal sweep testdata/examples/bridge_inamp.nodal --out p --ref n --plot bode.svg
    nodal sweep testdata/examples/logger_antialias.nodal --out 'i(R1)' --format csv -o r1.csv`
}

// sweepPoint is one JSON point.
type sweepPoint struct {
	FreqHz      float64  `json:"freq_hz"`
	Mag         float64  `json:"mag"` // +Inf on a jω-axis pole: null in JSON (MarshalJSON)
	MagDB       *float64 `json:"mag_db"`
	PhaseDeg    float64  `json:"phase_deg"` // NaN on a jω-axis pole: null in JSON
	GroupDelayS *float64 `json:"group_delay_s"`
	Note        string   `json:"note,omitempty"` // why the numbers are null (a point on a jω-axis pole)
}

// MarshalJSON writes Mag and PhaseDeg as null when they are not finite.
func (p sweepPoint) MarshalJSON() ([]byte, error) {
	return json.Marshal(struct {
		FreqHz      float64  `json:"freq_hz"`
		Mag         *float64 `json:"mag"`
		MagDB       *float64 `json:"mag_db"`
		PhaseDeg    *float64 `json:"phase_deg"`
		GroupDelayS *float64 `json:"group_delay_s"`
		Note        string   `json:"note,omitempty"`
	}{p.FreqHz, finiteOrNil(p.Mag), p.MagDB, finiteOrNil(p.PhaseDeg), p.GroupDelayS, p.Note})
}

// sweepJSON is the JSON document of one output.
type sweepJSON struct {
	Input  string       `json:"input"`
	Output string       `json:"output"`
	Points []sweepPoint `json:"points"`
	stabilityJSON
}

// Run sweeps every output.
func (c *sweepCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "csv", "json"); err != nil {
		return err
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	var systems []*mna.System
	for _, o := range c.Out {
		sys, err := mna.Build(l.circuit, mna.Input{Source: c.In}, outputFor(o, c.Ref))
		if err != nil {
			return err
		}
		systems = append(systems, sys)
	}
	// Each system's transfer function serves the default range, the
	// plot's marks and the exact zero group delay of a response that does
	// not depend on frequency; extract it once.
	tfs := make([]*transfer.TransferFunction, len(systems))
	for i, sys := range systems {
		tfs[i] = systemTF(sys)
	}
	freqs, err := c.frequencies(func() (float64, float64) { return rangeOf(l, tfs[0]) })
	if err != nil {
		return err
	}
	if err := checkWork("sweep", len(l.circuit.Parts), len(freqs), len(systems), "outputs"); err != nil {
		return err
	}
	var resps []*response.Response
	for _, sys := range systems {
		r, err := response.Sweep(e.ctx, sys, freqs, c.Workers)
		if err != nil {
			return err
		}
		resps = append(resps, r)
	}
	for i, r := range resps {
		if tfs[i] != nil && frequencyIndependent(tfs[i]) {
			for k := range r.GroupDelayS {
				if !r.AtPole[k] {
					r.GroupDelayS[k] = 0 // no pole or zero: exactly no delay
				}
			}
		}
	}
	if c.Plot != "" {
		if err := writeBodePlot(e, c.Plot, []string{c.File, c.Output}, l, tfs, resps); err != nil {
			return err
		}
	}
	stab, err := circuitStability(l)
	if err != nil {
		return err
	}
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		switch c.Format {
		case "json":
			docs := make([]sweepJSON, len(resps))
			for i, r := range resps {
				docs[i] = responseJSON(r)
				docs[i].stabilityJSON = newStabilityJSON(stab)
			}
			if len(docs) == 1 {
				return writeJSON(w, docs[0])
			}
			return writeJSON(w, docs)
		case "csv":
			warnStability(e.stderr, stab)
			return responseCSV(w, resps)
		}
		warnStability(e.stderr, stab)
		for i, r := range resps {
			if i > 0 {
				fmt.Fprintln(w)
			}
			_, unit := tfProbe{}.describe(l.circuit, mna.Input{Source: r.Input}, outputFor(c.Out[i], c.Ref))
			if err := responseTable(w, r, unit); err != nil {
				return err
			}
		}
		return nil
	})
}

// finiteOrNil returns &v, or nil when v is not finite (JSON has no Inf/NaN).
func finiteOrNil(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// responseJSON converts a response for JSON, phase wrapped to (−180, 180].
func responseJSON(r *response.Response) sweepJSON {
	d := sweepJSON{Input: r.Input, Output: r.Output, Points: make([]sweepPoint, len(r.FreqHz))}
	for i := range r.FreqHz {
		d.Points[i] = sweepPoint{FreqHz: r.FreqHz[i], Mag: r.Mag[i], MagDB: finiteOrNil(r.MagDB[i]),
			PhaseDeg: response.WrapDeg(r.PhaseDeg[i]), GroupDelayS: finiteOrNil(r.GroupDelayS[i])}
		if i < len(r.AtPole) && r.AtPole[i] {
			d.Points[i].Note = response.PoleNote
		}
	}
	return d
}

// responseCSV writes the responses with a header row; an output column is
// added when there are several.
func responseCSV(w io.Writer, resps []*response.Response) error {
	cw := csv.NewWriter(w)
	header := []string{"freq_hz", "mag", "mag_db", "phase_deg", "group_delay_s"}
	multi := len(resps) > 1
	if multi {
		header = append([]string{"output"}, header...)
	}
	if err := cw.Write(header); err != nil {
		return err
	}
	g := func(v float64) string { return strconv.FormatFloat(v, 'g', 10, 64) }
	for _, r := range resps {
		for i := range r.FreqHz {
			rec := []string{g(r.FreqHz[i]), g(r.Mag[i]), g(r.MagDB[i]), g(r.PhaseDeg[i]), g(r.GroupDelayS[i])}
			if multi {
				rec = append([]string{r.Output}, rec...)
			}
			if err := cw.Write(rec); err != nil {
				return err
			}
		}
	}
	cw.Flush()
	return cw.Error()
}

// responseTable prints one response as a terminal table; unit is H's
// unit, named with the dB reference when H is not dimensionless.
func responseTable(w io.Writer, r *response.Response, unit string) error {
	fmt.Fprintf(w, "H = %s / %s", r.Output, r.Input)
	if !dimensionless(unit) {
		fmt.Fprintf(w, "  [%s: mag in %s, mag_db in %s]", unit, unit, dbReference(unit))
	}
	fmt.Fprintln(w)
	t := newTable(w, "freq_hz", "mag", "mag_db", "phase_deg", "group_delay_s")
	for i := range r.FreqHz {
		if err := t.row(num(r.FreqHz[i]), num(r.Mag[i]), fixed(r.MagDB[i], 4), fixed(r.PhaseDeg[i], 3), num(r.GroupDelayS[i])); err != nil {
			return err
		}
	}
	return t.render()
}

// writeBodePlot draws the responses as a Bode plot.
func writeBodePlot(e *env, path string, protect []string, l *loaded, tfs []*transfer.TransferFunction, resps []*response.Response) error {
	format, err := plot.FormatFromPath(path)
	if err != nil {
		return err
	}
	fig, err := bodeFigure(l.circuit.Title, tfs, resps)
	if err != nil {
		return err
	}
	return writeTo(e, path, append(protect, l.name), func(w io.Writer) error { return fig.Encode(w, format) })
}

// bodeFigure is the Bode plot of the responses, one labelled trace each,
// with −3 dB points and peaks marked from tfs[i], the transfer function of
// response i (nil: no marks).
func bodeFigure(title string, tfs []*transfer.TransferFunction, resps []*response.Response) (*plot.Figure, error) {
	traces := make([]plot.BodeTrace, len(resps))
	for i, r := range resps {
		traces[i] = plot.BodeTrace{Label: r.Output, FreqHz: r.FreqHz, MagDB: r.MagDB, PhaseDeg: r.PhaseDeg}
		addBodeMarks(&traces[i], tfs[i], r)
	}
	return plot.Bode(traces, plot.BodeOptions{Title: title})
}
