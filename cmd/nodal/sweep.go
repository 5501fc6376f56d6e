package main

import (
	"bufio"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"nodal/analysis/response"
	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/plot"
	"nodal/mna"
)

// sweepCmd prints the frequency response.
type sweepCmd struct {
	circuitArgs
	varyArgs
	In  string   `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out []string `help:"Output: a response of the file, a sum of them (woofer+tweeter), a node, or i(PART); repeat for several traces (default: every response of the file, then the node named out)." placeholder:"NAME"`
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
    nodal sweep testdata/examples/logger_antialias.nodal --out 'i(R1)' --format csv -o r1.csv

With named responses (response NAME = v(NODE) in the file), no --out
sweeps them all side by side, and --out A+B sums responses from the same
input; --vary repeats the sweep per value of a let or a part:

    nodal sweep testdata/examples/speaker_crossover.nodal --at 250,2.5k,10k
    nodal sweep testdata/examples/speaker_crossover.nodal --out woofer+tweeter --plot sum.svg
    nodal sweep testdata/examples/speaker_crossover.nodal --out woofer --vary R=8k,10k,12k
    nodal sweep testdata/examples/tone_stage.nodal --vary Ct=1n..10n/4 --plot variants.svg`
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
func (p sweepPoint) MarshalJSON() ([]byte, error) { return appendPointJSON(nil, p), nil }

// appendPointJSON appends the compact JSON of p, the bytes encoding/json
// gives the struct (keys in field order, null for a non-finite number,
// note left out when empty), without reflection.
func appendPointJSON(b []byte, p sweepPoint) []byte {
	b = append(b, `{"freq_hz":`...)
	b = appendJSONNumber(b, &p.FreqHz)
	b = append(b, `,"mag":`...)
	b = appendJSONNumber(b, finiteOrNil(p.Mag))
	b = append(b, `,"mag_db":`...)
	b = appendJSONNumber(b, p.MagDB)
	b = append(b, `,"phase_deg":`...)
	b = appendJSONNumber(b, finiteOrNil(p.PhaseDeg))
	b = append(b, `,"group_delay_s":`...)
	b = appendJSONNumber(b, p.GroupDelayS)
	if p.Note != "" {
		b = append(b, `,"note":`...)
		b = appendJSONString(b, p.Note)
	}
	return append(b, '}')
}

// appendJSONNumber appends *v as encoding/json writes a float64 (the
// shortest digits that read back exactly; exponent form below 1e-6 and
// from 1e21, as in ECMAScript), or null for nil. *v must be finite.
func appendJSONNumber(b []byte, v *float64) []byte {
	if v == nil {
		return append(b, "null"...)
	}
	f := *v
	format := byte('f')
	if a := math.Abs(f); a != 0 && (a < 1e-6 || a >= 1e21) {
		format = 'e'
	}
	b = strconv.AppendFloat(b, f, format, -1, 64)
	if format == 'e' {
		// e-07 → e-7, as encoding/json does.
		if n := len(b); n >= 4 && b[n-4] == 'e' && b[n-3] == '-' && b[n-2] == '0' {
			b[n-2] = b[n-1]
			b = b[:n-1]
		}
	}
	return b
}

// appendJSONString appends s as encoding/json quotes it.
func appendJSONString(b []byte, s string) []byte {
	q, _ := json.Marshal(s) // a string always marshals
	return append(b, q...)
}

// sweepJSON is the JSON document of one output.
type sweepJSON struct {
	Input   string        `json:"input"`
	Output  string        `json:"output"`
	Variant []variantJSON `json:"variant,omitempty"` // the --vary values of this trace
	Points  []sweepPoint  `json:"points"`
	stabilityJSON
}

// sweepTrace is one output of a sweep: the systems whose responses it
// sums (one, or the named responses of --out A+B) and its label.
type sweepTrace struct {
	label   string
	systems []*mna.System
	marksHz []float64 // the circuit's resonances (resonanceMarks), for the phase unwrapping
}

// traces resolves the --out values: each a response, a node, i(PART) or
// a sum of responses; none means every response of the file (then the
// node named out).
func (c *sweepCmd) traces(l *loaded) ([]sweepTrace, error) {
	outs := c.Out
	if len(outs) == 0 {
		outs = l.circuit.ResponseNames()
		if len(outs) == 0 {
			outs = []string{""}
		}
	}
	return resolveTraces(l, c.In, outs, c.Ref)
}

// resolveTraces resolves --out values against the circuit: each a
// response, a node, i(PART) or a sum of responses ("" is the default
// output, see probeFor).
func resolveTraces(l *loaded, in string, outs []string, ref string) ([]sweepTrace, error) {
	var traces []sweepTrace
	for _, o := range outs {
		names, err := sumParts(l.circuit, o)
		if err != nil {
			return nil, err
		}
		if names == nil {
			names = []string{o}
		}
		t := sweepTrace{label: strings.Join(names, "+")}
		for _, n := range names {
			p, name, err := probeFor(l.circuit, in, n, ref)
			if err != nil {
				return nil, err
			}
			sys, err := mna.Build(l.circuit, p.Ex, p.Ob)
			if err != nil {
				return nil, err
			}
			if len(t.systems) > 0 && sys.Input.Source != t.systems[0].Input.Source {
				return nil, fmt.Errorf("--out %s: %s is driven by %s and %s by %s; a sum adds responses from the same input", o, names[0], t.systems[0].Input.Source, n, sys.Input.Source)
			}
			if len(names) == 1 {
				// The response chosen (also by default, for --out ""), else
				// the node or current observed.
				t.label = name
				if name == "" {
					t.label = response.OutputLabel(sys.Output)
				}
			}
			t.systems = append(t.systems, sys)
		}
		traces = append(traces, t)
	}
	return traces, nil
}

// sweepTraces sweeps every trace over freqs, summing the terms of a sum.
func sweepTraces(e *env, traces []sweepTrace, freqs []float64, workers int) ([]*response.Response, error) {
	var resps []*response.Response
	for _, t := range traces {
		var terms []*response.Response
		for _, sys := range t.systems {
			r, err := response.SweepWith(e.ctx, sys, freqs, response.SweepOptions{Workers: workers, PhaseMarksHz: t.marksHz})
			if err != nil {
				return nil, err
			}
			terms = append(terms, r)
		}
		r, err := response.Sum(e.ctx, t.label, terms...)
		if err != nil {
			return nil, err
		}
		resps = append(resps, r)
	}
	return resps, nil
}

// sweepExtractUnknowns is the largest system whose transfer function a
// sweep given its range extracts anyway (for the exact group delay of a
// frequency-independent response): below it extraction is cheap.
const sweepExtractUnknowns = 200

// Run sweeps every output (for every --vary value).
func (c *sweepCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output, c.Plot}, "table", "csv", "json"); err != nil {
		return err
	}
	vs, err := c.variants()
	if err != nil {
		return err
	}
	ls, err := c.loadVariants(e, vs)
	if err != nil {
		return err
	}
	var traces []sweepTrace
	var of []int // per trace: its variant
	for i, l := range ls {
		ts, err := c.traces(l)
		if err != nil {
			return err
		}
		for _, t := range ts {
			if lab := vs[i].label(); lab != "" {
				t.label += " " + lab
			}
			traces = append(traces, t)
			of = append(of, i)
		}
	}
	l := ls[0]
	// Each trace's transfer function serves the default range, the plot's
	// marks and the exact zero group delay of a response that does not
	// depend on frequency; extract it once (a sum has none: no marks).
	// A large system given a range and no plot is swept without it (the
	// extraction is a dense eigenvalue problem); its group delay is then
	// the sweep's own. With --vary the default range covers every
	// variant's.
	tfs := make([]*transfer.TransferFunction, len(traces))
	extract := func(i int) {
		if tfs[i] == nil && len(traces[i].systems) == 1 {
			tfs[i] = systemTF(traces[i].systems[0])
		}
	}
	for i, t := range traces {
		if c.Plot != "" || len(t.systems) == 1 && t.systems[0].Size() <= sweepExtractUnknowns {
			extract(i)
		}
	}
	freqs, err := c.frequencies(func() (float64, float64) {
		extract(0)
		lo, hi := rangeOf(l, tfs[0])
		for i := 1; i < len(tfs) && len(vs) > 1; i++ {
			extract(i)
			if tfs[i] != nil {
				a, b := rangeOf(ls[of[i]], tfs[i])
				lo, hi = math.Min(lo, a), math.Max(hi, b)
			}
		}
		return lo, hi
	})
	if err != nil {
		return err
	}
	if err := checkWork("sweep", len(l.circuit.Parts), len(freqs), len(traces), "outputs"); err != nil {
		return err
	}
	stabs := make([]*stability.Result, len(ls))
	for i, l := range ls {
		if stabs[i], err = circuitStability(l); err != nil {
			return err
		}
	}
	for i := range traces {
		traces[i].marksHz = resonanceMarks(stabs[of[i]])
	}
	resps, err := sweepTraces(e, traces, freqs, c.Workers)
	if err != nil {
		return err
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
	warnUnderflow(e.stderr, resps)
	warnPhaseUnresolved(e.stderr, resps)
	warn := func() {
		for _, st := range stabs {
			warnStability(e.stderr, st)
		}
	}
	return writeTo(e, c.Output, []string{c.File, c.Plot}, func(w io.Writer) error {
		switch c.Format {
		case "json":
			docs := make([]sweepDoc, len(resps))
			for i, r := range resps {
				docs[i] = sweepDoc{r: r, variant: vs[of[i]].json(), stab: newStabilityJSON(stabs[of[i]])}
			}
			return writeSweepJSON(w, docs, len(docs) != 1 || len(c.Vary) != 0)
		case "csv":
			warn()
			return responseCSV(w, resps)
		}
		warn()
		if len(resps) > 1 {
			return responsesTable(w, resps)
		}
		_, unit := tfProbe{}.describe(ls[0].circuit, traces[0].systems[0].Input, traces[0].systems[0].Output)
		return responseTable(w, resps[0], unit)
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
		d.Points[i] = sweepPointOf(r, i)
	}
	return d
}

// sweepPointOf is point i of r for JSON, phase wrapped to (−180, 180].
func sweepPointOf(r *response.Response, i int) sweepPoint {
	p := sweepPoint{FreqHz: r.FreqHz[i], Mag: r.Mag[i], MagDB: finiteOrNil(r.MagDB[i]),
		PhaseDeg: response.WrapDeg(r.PhaseDeg[i]), GroupDelayS: finiteOrNil(r.GroupDelayS[i])}
	if i < len(r.AtPole) && r.AtPole[i] {
		p.Note = response.PoleNote
	}
	if underflowAt(r, i) {
		p.Mag, p.Note = math.NaN(), response.UnderflowNote
	}
	return p
}

// sweepDoc is one output of the sweep command for JSON: the document
// sweepJSON describes, its points still in the response.
type sweepDoc struct {
	r       *response.Response
	variant []variantJSON
	stab    stabilityJSON
}

// writeSweepJSON writes the documents (a list unless one is given with
// list false) in one streaming pass: each point goes from the response
// to compact JSON to the indenting writer, with no document built and no
// reflection per point. The bytes are those writeJSON gives the
// sweepJSON values (TestSweepJSONStreamMatchesEncoder).
func writeSweepJSON(w io.Writer, docs []sweepDoc, list bool) error {
	bw := bufio.NewWriterSize(w, 64<<10)
	iw := &indentWriter{w: bw}
	var b []byte
	flush := func() {
		iw.Write(b)
		b = b[:0]
	}
	if list {
		b = append(b, '[')
	}
	for d, doc := range docs {
		if d > 0 {
			b = append(b, ',')
		}
		b = append(b, `{"input":`...)
		b = appendJSONString(b, doc.r.Input)
		b = append(b, `,"output":`...)
		b = appendJSONString(b, doc.r.Output)
		if len(doc.variant) > 0 {
			v, err := json.Marshal(doc.variant)
			if err != nil {
				return err
			}
			b = append(append(b, `,"variant":`...), v...)
		}
		b = append(b, `,"points":[`...)
		for i := range doc.r.FreqHz {
			if i > 0 {
				b = append(b, ',')
			}
			b = appendPointJSON(b, sweepPointOf(doc.r, i))
			if len(b) > 32<<10 {
				flush()
			}
		}
		st, err := json.Marshal(doc.stab)
		if err != nil {
			return err
		}
		// The embedded stabilityJSON's members follow the points.
		b = append(append(b, "],"...), st[1:]...)
	}
	if list {
		b = append(b, ']')
	}
	b = append(b, '\n')
	flush()
	return bw.Flush()
}

// underflowAt reports whether point i of r is below float64's range.
func underflowAt(r *response.Response, i int) bool { return i < len(r.Underflow) && r.Underflow[i] }

// underflowCell is the mag cell of a point below float64's range.
const underflowCell = "below 2.2e-308 (underflow)"

// warnUnderflow writes one warning per response with points below
// float64's range, naming the frequency range they cover.
func warnUnderflow(w io.Writer, resps []*response.Response) {
	for _, r := range resps {
		n, lo, hi := 0, math.Inf(1), math.Inf(-1)
		for i, f := range r.FreqHz {
			if underflowAt(r, i) {
				n, lo, hi = n+1, math.Min(lo, f), math.Max(hi, f)
			}
		}
		if n == 0 {
			continue
		}
		span := num(lo) + " Hz"
		if hi > lo {
			span = "from " + num(lo) + " to " + num(hi) + " Hz"
		} else {
			span = "at " + span
		}
		fmt.Fprintf(w, "nodal: warning: %s: |H| is below 2.2e-308, float64's range, %s (%d of %d points): those points are shown as underflow, not as numbers\n", r.Output, span, n, len(r.FreqHz))
	}
}

// phaseUnresolvedAt reports whether point i of r has no unwrapped phase.
func phaseUnresolvedAt(r *response.Response, i int) bool {
	return i < len(r.PhaseUnresolved) && r.PhaseUnresolved[i]
}

// phaseCell is the phase_deg cell of point i of r: the unwrapped phase,
// or the principal value marked "mod 360" where the turn is not known.
func phaseCell(r *response.Response, i int) string {
	if phaseUnresolvedAt(r, i) {
		return fixed(r.PhaseDeg[i], 3) + " mod 360"
	}
	return fixed(r.PhaseDeg[i], 3)
}

// warnPhaseUnresolved writes one warning per response whose phase could
// not be followed between its points, naming where that starts.
func warnPhaseUnresolved(w io.Writer, resps []*response.Response) {
	for _, r := range resps {
		n, first := 0, -1
		for i := range r.FreqHz {
			if phaseUnresolvedAt(r, i) {
				if first < 0 {
					first = i
				}
				n++
			}
		}
		if n == 0 {
			continue
		}
		fmt.Fprintf(w, "nodal: warning: %s: the phase could not be followed from the point before %s Hz to it within the refinement budget (%d of %d points): phase_deg there is the principal value, in (−180°, 180°], shown as \"mod 360\" in the table (JSON's phase_deg is always the principal value)\n", r.Output, num(r.FreqHz[first]), n, len(r.FreqHz))
	}
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
			if underflowAt(r, i) {
				rec = []string{g(r.FreqHz[i]), "", "", "", ""} // below float64's range: no number
			}
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
		row := []string{num(r.FreqHz[i]), num(r.Mag[i]), fixed(r.MagDB[i], 4), phaseCell(r, i), num(r.GroupDelayS[i])}
		if underflowAt(r, i) {
			row = []string{row[0], underflowCell, "-", "-", "-"}
		}
		if err := t.row(row...); err != nil {
			return err
		}
	}
	return t.render()
}

// responsesTable prints several responses over the same frequencies side
// by side: one group of mag_db and phase_deg columns each.
func responsesTable(w io.Writer, resps []*response.Response) error {
	var labels []string
	header := []string{"freq_hz"}
	for _, r := range resps {
		labels = append(labels, r.Output)
		header = append(header, r.Output+" mag_db", r.Output+" phase_deg")
	}
	fmt.Fprintf(w, "H = (%s) / %s\n", strings.Join(labels, ", "), resps[0].Input)
	t := newTable(w, header...)
	for i := range resps[0].FreqHz {
		row := []string{num(resps[0].FreqHz[i])}
		for _, r := range resps {
			if underflowAt(r, i) {
				row = append(row, underflowCell, "-")
				continue
			}
			row = append(row, fixed(r.MagDB[i], 4), phaseCell(r, i))
		}
		if err := t.row(row...); err != nil {
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
