package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"maps"
	"math"
	"net"
	"net/url"
	"nodal/analysis/stability"
	"slices"
	"sort"
	"strings"
	"sync"

	"nodal/cmd/nodal/notation"

	"nodal/analysis/response"
	"nodal/analysis/stdvalue"
	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/tune"
	"nodal/netlist"
	"nodal/netlist/syntax"
)

// tuneCmd serves a page of sliders for the parameters and part values of
// one circuit file, with its responses and verdicts following them.
type tuneCmd struct {
	File string `arg:"" help:"Circuit file (.nodal) to tune; it is watched and, on request, rewritten (- reads standard input, for --print only)." type:"string"`
	requireProbe
	Addr  string `help:"Serve on this address, HOST:PORT (port 0 picks a free one); default 127.0.0.1:0. An address that is not loopback, or every interface (0.0.0.0:PORT), is served only when named here, with a warning that the page is reachable from the network." placeholder:"HOST:PORT"`
	Print string `help:"Print the figures and verdicts for this query string (?R=6.8k&C1=2.2n) as JSON and exit, serving nothing." placeholder:"QUERY"`
	// Format is json only (what --print writes); it is here so that -o
	// x.json and --format behave as in every other command.
	Format string `help:"Output format of --print: json (default: from the -o extension, else json)." placeholder:"json"`
	Output string `short:"o" help:"With --print, write the JSON to this file instead of standard output." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *tuneCmd) Help() string {
	return `Serves a page on this machine (a loopback address; the URL is printed on
standard error) with a slider for every let parameter and every part
value of the file: logarithmic, from a tenth to ten times the nominal,
with a box for an exact value written as in the file (6.8k, 2.2nF) and
the nearest E12, E24 and E96 values beside it. As a slider moves, the
page shows the Bode plot (the nominal response as a faint trace), the
step response, the poles and zeros, the figures (DC gain, −3 dB
frequencies, peak, f0 and Q of each pole pair) and every require
statement with its verdict at the current values. A setting with poles
of H in the right half-plane is shown as unstable, not as a curve.

The values are in the page's address (?R=6.8k&C1=2.2n; @out=NODE picks
the response), so a view can be bookmarked; --print with the same query
string, or GET /api/analyse?..., gives the same figures as JSON. The
save button shows the diff of the file and, once confirmed, writes the
values into the let lines and part values, keeping comments and layout
(the rewriting of snap). The file is watched: an edit reloads the page;
a syntax error is shown and the last good circuit stays. Ctrl-C stops
the server.

Examples:

    nodal tune testdata/examples/logger_antialias.nodal
    nodal tune testdata/examples/logger_antialias.nodal --out out --addr 127.0.0.1:8040
    nodal tune testdata/examples/logger_antialias.nodal --print '?R=6.8k&C0=12n'`
}

// tuneOutKey is the query key of the response choice; "@" cannot start a
// name of the circuit language, so it never shadows a control.
const tuneOutKey = "@out"

// tuneDigits are the significant digits of a value written back into the
// file (trailing zeros dropped: 6800 Ω is written 6.8k).
const tuneDigits = 6

// tuneSeries are the E-series whose nearest value is shown beside a
// resistor, capacitor or inductor value.
var tuneSeries = []string{"E12", "E24", "E96"}

// Run serves the page, or prints one analysis with --print.
func (c *tuneCmd) Run(e *env) error {
	if c.Output != "" && c.Print == "" {
		return errors.New("-o writes the JSON of --print: give --print QUERY, or leave -o out to serve the page")
	}
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "json"); err != nil {
		return err
	}
	loadFile := func(src []byte) (tune.Backend, error) { return c.backend(e, c.File, src) }
	if c.Print != "" {
		src, name, err := readSource(e, c.File)
		if err != nil {
			return err
		}
		b, err := c.backend(e, name, src)
		if err != nil {
			return err
		}
		q, err := url.ParseQuery(strings.TrimPrefix(c.Print, "?"))
		if err != nil {
			return fmt.Errorf("--print %q: %w", c.Print, err)
		}
		doc, err := b.Analyse(e.ctx, q)
		if err != nil {
			return fmt.Errorf("--print: %w", err)
		}
		return writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error { return writeJSON(w, doc) })
	}
	if c.File == "-" {
		return errors.New("nodal tune watches and rewrites a file: give its path, not -")
	}
	addr, named := c.Addr, c.Addr != ""
	if !named {
		addr = tune.DefaultAddr
	}
	srv, err := tune.New(tune.Config{Path: c.File, Load: loadFile, MaxBytes: maxInputBytes, Save: func(src []byte) error {
		return writeTo(e, c.File, nil, func(w io.Writer) error { _, err := w.Write(src); return err })
	}})
	if err != nil {
		return err
	}
	ln, err := tune.Listen(addr, named)
	if err != nil {
		return err
	}
	fmt.Fprint(e.stderr, tuneServingText(ln, c.File))
	return srv.Serve(e.ctx, ln)
}

// tuneServingText is what tune says on standard error once it listens:
// the URL, and a warning when the page is reachable from the network (an
// address that is not loopback, or every interface).
func tuneServingText(ln net.Listener, file string) string {
	if tune.IsEveryInterface(ln) {
		_, port, _ := net.SplitHostPort(ln.Addr().String())
		return fmt.Sprintf("nodal tune: %s at http://127.0.0.1:%s/ and this machine's other addresses (Ctrl-C stops)\n"+
			"nodal tune: warning: serving on every interface (port %s): the page is reachable from the network; anyone who can reach this machine can read the circuit and rewrite %s\n",
			file, port, port, file)
	}
	out := fmt.Sprintf("nodal tune: %s at %s (Ctrl-C stops)\n", file, tune.URL(ln.Addr()))
	if !tune.IsLoopback(ln) {
		out += fmt.Sprintf("nodal tune: warning: %s is not a loopback address: the page is reachable from the network; anyone who can reach it can read the circuit and rewrite %s\n", ln.Addr(), file)
	}
	return out
}

// tuneControl is one slider: a top-level let or a part value.
type tuneControl struct {
	name    string
	let     bool         // a let parameter; otherwise a part value
	kind    netlist.Kind // of a part
	unit    string       // SI unit symbol of the value ("" for a plain number)
	nominal float64
	line    int
	series  bool // show the nearest E-series values
}

// tuneBackend is one loaded version of the file (see tune.Backend).
type tuneBackend struct {
	name      string
	file      *netlist.File
	nominal   *netlist.Circuit
	probe     requireProbe
	defOut    string
	controls  []tuneControl
	byName    map[string]*tuneControl
	responses []string
	notes     []string
	metrics   []transfer.Metric // of the requirements, in order

	mu            sync.Mutex
	nominalTraces map[string]*tuneTrace // by response, computed once
}

// tuneTrace is the nominal Bode trace of one response and the frequency
// grid every setting of that response is swept on: two decades either
// side of the nominal poles and zeros (as nodal sweep chooses), so a
// tenfold change of a value stays in view.
type tuneTrace struct {
	freqsHz []float64
	sweep   sweepJSON
}

// backend loads src and lists its controls.
func (c *tuneCmd) backend(e *env, name string, src []byte) (*tuneBackend, error) {
	f, err := netlist.Parse(name, src)
	if err != nil {
		return nil, err
	}
	nom, err := netlist.Elaborate(f, nil)
	if err != nil {
		return nil, err
	}
	l := &loaded{name: name, src: src, circuit: nom}
	out, err := c.outNode(l)
	if err != nil {
		return nil, err
	}
	b := &tuneBackend{name: name, file: f, nominal: nom, probe: c.requireProbe, defOut: out, byName: map[string]*tuneControl{},
		responses: tuneResponses(nom), nominalTraces: map[string]*tuneTrace{}}
	if !slices.Contains(b.responses, out) {
		b.responses = append([]string{out}, b.responses...) // --out i(PART)
	}
	for _, q := range nom.Requirements {
		m, err := transfer.ParseMetric(q.Metric)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", q.Pos, err)
		}
		b.metrics = append(b.metrics, m)
	}
	for _, p := range nom.Params {
		if !(p.Value > 0) {
			b.notes = append(b.notes, fmt.Sprintf("let %s has no slider: its value %g is not positive (a slider spans a tenth to ten times it)", p.Name, p.Value))
		}
		if p.Value > 0 && !math.IsInf(p.Value, 0) {
			unit := p.Unit
			b.controls = append(b.controls, tuneControl{name: p.Name, let: true, unit: unit, nominal: p.Value, line: p.Pos.Line,
				series: unit == netlist.UnitOhm || unit == netlist.Capacitor.Unit() || unit == netlist.Inductor.Unit()})
		}
	}
	for _, p := range nom.Parts {
		switch p.Kind {
		case netlist.Resistor, netlist.Capacitor, netlist.Inductor, netlist.VCVS, netlist.VCCS, netlist.CCVS, netlist.CCCS:
		default:
			continue
		}
		if !(p.Value > 0) {
			continue
		}
		b.controls = append(b.controls, tuneControl{name: p.Name, kind: p.Kind, unit: p.Kind.Unit(), nominal: p.Value, line: p.Pos.Line,
			series: p.Kind == netlist.Resistor || p.Kind == netlist.Capacitor || p.Kind == netlist.Inductor})
	}
	kept := b.controls[:0]
	for _, ct := range b.controls {
		if _, dup := b.byName[ct.name]; dup {
			b.notes = append(b.notes, fmt.Sprintf("part %s has no slider: a let has the same name", ct.name))
			continue
		}
		kept = append(kept, ct)
		b.byName[ct.name] = nil
	}
	b.controls = kept
	for i := range b.controls {
		b.byName[b.controls[i].name] = &b.controls[i]
	}
	// The nominal trace of the default response is computed now, so a
	// file whose response cannot be had fails here with its reason.
	if _, err := b.nominalTrace(e.ctx, out); err != nil {
		return nil, err
	}
	for _, w := range nom.Warnings {
		fmt.Fprintln(e.stderr, w.Error())
	}
	return b, nil
}

// tuneResponses lists the responses the page offers: the file's named
// responses, then every node but ground, each observed against ground (or
// --ref).
func tuneResponses(c *netlist.Circuit) []string {
	return append(c.ResponseNames(), c.Nodes[1:]...)
}

// tuneControlJSON describes one slider.
type tuneControlJSON struct {
	Name    string  `json:"name"`
	What    string  `json:"what"` // "let" or the part's kind keyword
	Unit    string  `json:"unit"`
	Nominal float64 `json:"nominal"`
	Min     float64 `json:"min"`
	Max     float64 `json:"max"`
	Line    int     `json:"line"`
}

// tuneModelJSON is what the page builds its controls from.
type tuneModelJSON struct {
	Title     string            `json:"title"`
	Controls  []tuneControlJSON `json:"controls"`
	Responses []string          `json:"responses"`
	Response  string            `json:"response"`
	OutKey    string            `json:"out_key"`
	Notes     []string          `json:"notes,omitempty"`
}

// Model describes the controls.
func (b *tuneBackend) Model() any {
	m := tuneModelJSON{Title: b.nominal.Title, Responses: b.responses, Response: b.defOut, OutKey: tuneOutKey, Notes: b.notes}
	for _, ct := range b.controls {
		what := "let"
		if !ct.let {
			what = ct.kind.String()
		}
		m.Controls = append(m.Controls, tuneControlJSON{Name: ct.name, What: what, Unit: ct.unit, Nominal: ct.nominal, Min: ct.nominal / 10, Max: ct.nominal * 10, Line: ct.line})
	}
	return m
}

// tuneValues are the values a query string sets.
type tuneValues struct {
	lets  netlist.Overrides
	parts map[string]float64
	out   string
	set   map[string]bool
}

// parse reads a query string: NAME=VALUE for controls (a value as in the
// file: 6.8k, 2.2nF, 4k7) and @out=NODE. Every problem is a
// *tune.RequestError.
func (b *tuneBackend) parse(q url.Values) (*tuneValues, error) {
	v := &tuneValues{lets: netlist.Overrides{}, parts: map[string]float64{}, out: b.defOut, set: map[string]bool{}}
	keys := make([]string, 0, len(q))
	for k := range q {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for _, k := range keys {
		vals := q[k]
		if len(vals) != 1 {
			return nil, &tune.RequestError{Err: fmt.Errorf("%s is given %d times", k, len(vals))}
		}
		text := vals[0]
		if k == tuneOutKey {
			if !slices.Contains(b.responses, text) {
				return nil, &tune.RequestError{Err: fmt.Errorf("%s=%s: no such response (nodes: %s)", tuneOutKey, text, strings.Join(b.responses, ", "))}
			}
			v.out = text
			continue
		}
		ct := b.byName[k]
		if ct == nil {
			return nil, &tune.RequestError{Err: fmt.Errorf("%s is not a let or part value of %s (sliders: %s)", k, b.name, strings.Join(b.names(), ", "))}
		}
		unit := ct.unit
		if ct.let {
			unit = "" // a let may be written with or without its unit
		}
		x, err := syntax.ParseValueAt(k, k+"="+text, len(k)+1, len(k)+1+len(text), unit)
		if err != nil {
			return nil, &tune.RequestError{Err: err}
		}
		if !(x > 0) || math.IsInf(x, 0) {
			return nil, &tune.RequestError{Err: fmt.Errorf("%s=%s: the value must be positive and finite", k, text)}
		}
		if ct.let {
			v.lets[k] = x
		} else {
			v.parts[k] = x
		}
		v.set[k] = true
	}
	return v, nil
}

// names lists the control names.
func (b *tuneBackend) names() []string {
	var out []string
	for _, ct := range b.controls {
		out = append(out, ct.name)
	}
	return out
}

// circuit elaborates the file with the values of v: the lets as
// overrides (so every value written in terms of them follows), then the
// part values set directly.
func (b *tuneBackend) circuit(v *tuneValues) (*netlist.Circuit, error) {
	c := b.nominal
	if len(v.lets) > 0 {
		var err error
		if c, err = netlist.Elaborate(b.file, v.lets); err != nil {
			return nil, &tune.RequestError{Err: err}
		}
	}
	if len(v.parts) > 0 {
		c = c.Clone()
		for i := range c.Parts {
			if x, ok := v.parts[c.Parts[i].Name]; ok {
				c.Parts[i].Value = x
			}
		}
	}
	return c, nil
}

// tuneValueJSON is the current value of one control.
type tuneValueJSON struct {
	Name    string             `json:"name"`
	Value   float64            `json:"value"`
	Text    string             `json:"text"` // as it would be written into the file
	Set     bool               `json:"set"`  // given in the query string
	Nearest map[string]float64 `json:"nearest,omitempty"`
	// NearestText is the nearest values as written in the file
	// ("E24 6.8k · E96 6.81k").
	NearestText string `json:"nearest_text,omitempty"`
}

// tuneVerdictJSON is one requirement at the current values, with the keys
// of verify's verdicts for the nominal column.
type tuneVerdictJSON struct {
	Requirement string   `json:"requirement"`
	Line        int      `json:"line"`
	Unit        string   `json:"unit"`
	Value       *float64 `json:"value"`
	Text        string   `json:"text"` // the value for people, in its unit
	Pass        bool     `json:"pass"`
	Reason      string   `json:"reason,omitempty"`
}

// tuneStabilityBasis says what the stability verdict is read from.
const tuneStabilityBasis = "natural frequencies of the circuit (every finite root of det(G + sC))"

// tuneDoc is the document of /api/analyse and --print: the transfer
// function as `nodal transfer` gives it, the step response as `nodal time`, the
// Bode points as `nodal sweep` (current and nominal) and the verdicts.
type tuneDoc struct {
	File     string          `json:"file"`
	Query    string          `json:"query"`
	Response string          `json:"response"`
	Values   []tuneValueJSON `json:"values"`
	// The stability of the current setting, as every command writes it
	// ("stability": "stable", "marginal", "unstable" or "unchecked", and
	// "unstable_poles", rad/s), from the natural frequencies of the whole
	// circuit (package stability), so a mode that cancels out of the H
	// shown still counts; StabilityBasis says so, StabilityReason why a
	// setting is not stable.
	stabilityJSON
	StabilityBasis  string            `json:"stability_basis"`
	StabilityReason string            `json:"stability_reason,omitempty"`
	Transfer        tfJSON            `json:"transfer"`
	Step            *timeJSON         `json:"step"`
	StepReason      string            `json:"step_reason,omitempty"`
	StepText        string            `json:"step_text,omitempty"` // the step figures for people
	Bode            sweepJSON         `json:"bode"`
	NominalBode     *sweepJSON        `json:"nominal_bode"`
	Requirements    []tuneVerdictJSON `json:"requirements"`
	// Figures are the rows of the transfer command's figure table and the
	// pole pairs, written for people (cmd/nodal/notation), in order.
	Figures []tuneFigureJSON `json:"figures"`
}

// tuneFigureJSON is one figure as the page shows it.
type tuneFigureJSON struct {
	Name string `json:"name"`
	Text string `json:"text"`
}

// Analyse computes the document for the values of q.
func (b *tuneBackend) Analyse(ctx context.Context, q url.Values) (any, error) {
	v, err := b.parse(q)
	if err != nil {
		return nil, err
	}
	c, err := b.circuit(v)
	if err != nil {
		return nil, err
	}
	nom, err := b.nominalTrace(ctx, v.out)
	if err != nil {
		return nil, err
	}
	return b.analyse(ctx, c, v, nom)
}

// nominalTrace returns the nominal trace of response out, computing it
// the first time.
func (b *tuneBackend) nominalTrace(ctx context.Context, out string) (*tuneTrace, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	if t := b.nominalTraces[out]; t != nil {
		return t, nil
	}
	l := &loaded{name: b.name, circuit: b.nominal}
	r, err := extractTF(l, tfRequest{In: b.probe.In, Out: out, Ref: b.probe.Ref})
	if err != nil {
		return nil, &tune.RequestError{Err: err}
	}
	lo, hi := rangeOf(l, r.tf)
	per := 40
	for per > 5 && response.LogGridSize(lo, hi, per) > 1200 {
		per /= 2
	}
	if n := response.LogGridSize(lo, hi, per); n < 2 || n > maxPoints {
		return nil, fmt.Errorf("%s: no frequency range for the Bode plot (%s to %s)", b.name, notation.Eng(lo, "Hz"), notation.Eng(hi, "Hz"))
	}
	t := &tuneTrace{freqsHz: response.LogGrid(lo, hi, per)}
	sw, err := response.Sweep(ctx, r.sys, t.freqsHz, 1)
	if err != nil {
		return nil, err
	}
	t.sweep = responseJSON(sw)
	res, err := stability.Analyze(b.nominal, stability.Options{})
	if err != nil {
		return nil, &tune.RequestError{Err: err}
	}
	t.sweep.stabilityJSON = newStabilityJSON(res)
	b.nominalTraces[out] = t
	return t, nil
}

// analyse is Analyse on circuit c.
func (b *tuneBackend) analyse(ctx context.Context, c *netlist.Circuit, v *tuneValues, nom *tuneTrace) (*tuneDoc, error) {
	l := &loaded{name: b.name, circuit: c}
	r, err := extractTF(l, tfRequest{In: b.probe.In, Out: v.out, Ref: b.probe.Ref})
	if err != nil {
		return nil, &tune.RequestError{Err: err}
	}
	rep := newTFReport(r)
	doc := &tuneDoc{File: b.name, Query: b.query(v), Response: response.OutputLabel(r.sys.Output), Transfer: tfDoc(rep),
		Values: b.values(c, v), NominalBode: &nom.sweep}
	res, err := stability.Analyze(c, stability.Options{})
	if err != nil {
		return nil, &tune.RequestError{Err: err}
	}
	doc.stabilityJSON = newStabilityJSON(res)
	doc.StabilityBasis = tuneStabilityBasis
	if lines := stabilityLines(res); res.Class != stability.Stable && len(lines) > 0 {
		doc.StabilityReason = lines[0]
	}
	doc.Transfer.stabilityJSON = newStabilityJSON(res)
	for _, row := range rep.figureRows() {
		doc.Figures = append(doc.Figures, tuneFigureJSON{Name: row[0], Text: row[1]})
	}
	for i, p := range rep.pairs {
		doc.Figures = append(doc.Figures, tuneFigureJSON{Name: fmt.Sprintf("pole pair %d", i+1),
			Text: fmt.Sprintf("f0 %s, Q %s, ζ %s", notation.Eng(p.F0Hz, "Hz"), notation.Q(p.Q), trimFloat(p.Zeta, 4))})
	}
	sw, err := response.Sweep(ctx, r.sys, nom.freqsHz, 1)
	if err != nil {
		return nil, err
	}
	doc.Bode = responseJSON(sw)
	doc.Bode.stabilityJSON = newStabilityJSON(res)
	st, err := checkedStep(ctx, r.sys, r.tf, timeresp.TimeOptions{Points: 400}, false)
	switch {
	case errors.Is(err, timeresp.ErrNoTimeScale):
		doc.StepReason = "no time scale: H has no pole off s = 0"
	case err != nil:
		doc.StepReason = err.Error()
	default:
		d := timeDoc(st)
		d.Stability = res.Class.String()
		doc.Step = &d
		m := st.Metrics
		doc.StepText = fmt.Sprintf("final %s, rise (10–90 %%) %s, overshoot %s, settling (2 %%) %s",
			optEng(m.Final, ""), optEng(m.RiseTimeS, "s"), optPct(m.OvershootPct), optEng(m.SettlingTimeS, "s"))
	}
	// The requirements are judged on the transfer function just extracted
	// (the one require.RequirementMetrics would extract for this probe):
	// a metric that does not exist here is NaN, fails, and says why.
	// A requirement on another named response (tweeter.f3db) is judged on
	// that response's transfer function.
	tfs := map[string]*transfer.TransferFunction{}
	for i, req := range c.Requirements {
		unit, _ := netlist.MetricUnit(metricBase(req.Metric))
		tf := r.tf
		if req.Response != "" && req.Response != v.out {
			if tfs[req.Response] == nil {
				rr, err := extractTF(l, tfRequest{In: b.probe.In, Out: req.Response})
				if err != nil {
					return nil, &tune.RequestError{Err: err}
				}
				tfs[req.Response] = rr.tf
			}
			tf = tfs[req.Response]
		}
		val, err := b.metrics[i].Eval(tf)
		d := tuneVerdictJSON{Requirement: req.Text, Line: req.Pos.Line, Unit: unit}
		if err != nil {
			val, d.Reason = math.NaN(), err.Error()
		}
		d.Value, d.Text, d.Pass = finiteOrNil(val), metricText(val, unit), req.Pass(val)
		doc.Requirements = append(doc.Requirements, d)
	}
	return doc, ctx.Err()
}

// values lists every control's value in c, with the nearest standard
// values of resistors, capacitors and inductors.
func (b *tuneBackend) values(c *netlist.Circuit, v *tuneValues) []tuneValueJSON {
	out := make([]tuneValueJSON, 0, len(b.controls))
	for _, ct := range b.controls {
		var x float64
		if ct.let {
			x, _ = c.Lookup(ct.name)
		} else if p, ok := c.Part(ct.name); ok {
			x = p.Value
		}
		d := tuneValueJSON{Name: ct.name, Value: x, Text: netlist.FormatLiteral(x, ct.literalUnit(), tuneDigits), Set: v.set[ct.name]}
		if ct.series && x > 0 {
			d.Nearest = map[string]float64{}
			var texts []string
			for _, name := range tuneSeries {
				if s, err := stdvalue.SeriesByName(name); err == nil {
					d.Nearest[name] = stdvalue.Nearest(x, s)
					texts = append(texts, netlist.FormatLiteral(d.Nearest[name], ct.literalUnit(), s.Digits()))
				}
			}
			d.NearestText = strings.Join(texts, " · ")
		}
		out = append(out, d)
	}
	return out
}

// literalUnit is the unit written after the control's value in the file:
// a let keeps the unit it was written with, a resistor none (10k), other
// parts their kind's unit.
func (ct *tuneControl) literalUnit() string {
	if !ct.let && ct.unit == netlist.UnitOhm {
		return ""
	}
	return ct.unit
}

// query is the canonical query string of v: the values set, in control
// order, then the response when it is not the default.
func (b *tuneBackend) query(v *tuneValues) string {
	var parts []string
	for _, ct := range b.controls {
		if !v.set[ct.name] {
			continue
		}
		x := v.lets[ct.name]
		if !ct.let {
			x = v.parts[ct.name]
		}
		parts = append(parts, url.QueryEscape(ct.name)+"="+url.QueryEscape(netlist.FormatLiteral(x, "", tuneDigits)))
	}
	if v.out != b.defOut {
		parts = append(parts, tuneOutKey+"="+url.QueryEscape(v.out))
	}
	return strings.Join(parts, "&")
}

// Rewrite writes the values of q into the file: each let set is given its
// new literal, each part value set is written by snap's rules
// (netlist.PlanValues) with the lets set taken as overridden, so a part
// that refers to a let being rewritten gets its own literal. Values equal
// to the file's are left alone.
func (b *tuneBackend) Rewrite(q url.Values) ([]byte, error) {
	v, err := b.parse(q)
	if err != nil {
		return nil, err
	}
	c, err := b.circuit(v)
	if err != nil {
		return nil, err
	}
	var edits []netlist.ValueEdit
	for _, p := range b.nominal.Params {
		x, ok := v.lets[p.Name]
		if !ok || x == p.Value {
			continue
		}
		if p.Span.End <= p.Span.Start {
			return nil, &tune.RequestError{Err: fmt.Errorf("let %s: its value is not written in the file", p.Name)}
		}
		edits = append(edits, netlist.ValueEdit{Span: p.Span, Text: netlist.FormatLiteral(x, b.byName[p.Name].literalUnit(), tuneDigits)})
	}
	parts := map[string]float64{}
	for name, x := range v.parts {
		if p, ok := b.nominal.Part(name); ok && p.Value != x {
			parts[name] = x
		}
	}
	if len(parts) > 0 {
		plan := netlist.PlanValues(b.file, c, parts, tuneDigits, v.lets)
		if len(plan.Skipped) > 0 {
			var why []string
			for _, name := range slices.Sorted(maps.Keys(plan.Skipped)) {
				why = append(why, name+": "+plan.Skipped[name])
			}
			return nil, &tune.RequestError{Err: fmt.Errorf("cannot write every value into %s: %s", b.name, strings.Join(why, "; "))}
		}
		edits = append(edits, plan.Edits...)
	}
	out, err := netlist.ReplaceValues(b.file.Source, edits)
	if err != nil {
		return nil, &tune.RequestError{Err: err}
	}
	return out, nil
}
