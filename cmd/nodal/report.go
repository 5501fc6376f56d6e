package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"time"

	"nodal/analysis/reduce"
	"nodal/analysis/response"
	"nodal/analysis/stability"
	"nodal/analysis/timeresp"
	"nodal/analysis/transfer"
	"nodal/cmd/nodal/notation"
	"nodal/cmd/nodal/plot"
	"nodal/cmd/nodal/report"
	"nodal/netlist"
)

// reportCmd writes the single-file report.
type reportCmd struct {
	File   string   `arg:"" optional:"" help:"Circuit file (.nodal), or - for standard input; the built-in demo when left out." type:"string"`
	Set    []string `help:"Override a top-level parameter or a part value, NAME=VALUE (repeatable)." placeholder:"NAME=VALUE"`
	In     string   `help:"Input source; may be left out when the circuit has one source." placeholder:"SOURCE"`
	Out    string   `help:"Output: a response of the file, a node or i(PART) (default: every response of the file, a section each; then the node named out)." placeholder:"NAME"`
	Ref    string   `help:"Reference node of a differential output (default gnd)." placeholder:"NODE"`
	Output string   `short:"o" help:"Report file (default nodal-report.html; with --format text, standard output)." placeholder:"FILE" type:"path"`
	Format string   `help:"html: one self-contained HTML file; text: the same sections as terminal tables. (default: from the -o extension, .txt for text, else html)" placeholder:"html|text"`
	Runs   int      `help:"Monte Carlo runs when the file has tolerances." default:"2000"`
	Seed   uint64   `help:"Seed of the Monte Carlo draws." default:"1"`
	Force  bool     `help:"With no -o, overwrite nodal-report.html even when nodal did not write it."`
	tempArgs
}

// Help is the extended help with a worked example.
func (c *reportCmd) Help() string {
	return `Analyses a circuit end to end and writes one self-contained HTML file
(inline SVG and CSS, no network): the parts, H(s) expanded and factored,
the ODE, poles and zeros with f0 and Q, the Bode plot, the step response,
and, when the file has tolerances and requirements, the Monte Carlo band,
metric statistics and requirement verdicts. With no FILE it analyses the
built-in demo, a vibration-logger input stage.

Examples:

    nodal report                                   # demo → nodal-report.html
    nodal report testdata/examples/logger_antialias.nodal --out out -o logger.html
    nodal report testdata/examples/logger_antialias.nodal --format text`
}

// Run builds and writes the report.
func (c *reportCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "html", "text"); err != nil {
		return err
	}
	var l *loaded
	var err error
	path := c.Output
	if path == "" && c.Format == "html" {
		if path, err = defaultReportPath(c.Force); err != nil {
			return err
		}
		if err := checkOutputs([]string{c.File}, path); err != nil {
			return err
		}
		if path != defaultReportName {
			fmt.Fprintf(e.stderr, "nodal: %s exists and was not written by nodal; writing %s instead (--force overwrites it)\n", defaultReportName, path)
		}
	}
	tempK, err := c.kelvin()
	if err != nil {
		return err
	}
	builtIn := c.File == ""
	if builtIn {
		fmt.Fprintf(e.stderr, "nodal: no circuit file given: analysing the built-in demo (%s)\n", demoName)
		l, err = elaborate(e, demoName, demoCircuit, c.Set)
	} else {
		args := circuitArgs{File: c.File, Set: c.Set}
		l, err = args.load(e)
	}
	if err != nil {
		return err
	}
	d, err := buildReport(e, l, tfRequest{In: c.In, Out: c.Out, Ref: c.Ref}, reportRun{Runs: c.Runs, Seed: c.Seed, TempK: tempK})
	if err != nil {
		return err
	}
	d.Source.BuiltIn = builtIn
	d.Generated = reportDate()
	d.CommandLine = commandLine(e.args)
	if c.Format == "text" {
		return writeTo(e, path, []string{c.File}, func(w io.Writer) error { return report.RenderText(w, d) })
	}
	if err := writeTo(e, path, []string{c.File}, func(w io.Writer) error { return report.Render(w, d) }); err != nil {
		return err
	}
	fmt.Fprintf(e.stderr, "nodal: wrote %s\n", path)
	return nil
}

// reportDate is when the report is made, in UTC to the minute; the
// SOURCE_DATE_EPOCH convention (seconds since 1970) fixes it for
// reproducible output.
func reportDate() string {
	t := time.Now()
	if sec, err := strconv.ParseInt(os.Getenv("SOURCE_DATE_EPOCH"), 10, 64); err == nil {
		t = time.Unix(sec, 0)
	}
	return t.UTC().Format("2006-01-02 15:04 UTC")
}

// commandLine writes the command as a shell would read it back: "nodal"
// and the arguments, each quoted when it holds a space or a character the
// shell treats specially.
func commandLine(args []string) string {
	words := []string{"nodal"}
	for _, a := range args {
		if a == "" || strings.ContainsAny(a, " \t\n'\"\\$`*?[]()<>|&;#~!{}") {
			a = "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
		}
		words = append(words, a)
	}
	return strings.Join(words, " ")
}

// defaultReportName is the report file written when no -o is given.
const defaultReportName = "nodal-report.html"

// reportMarker is how nodal recognises a report it wrote: every HTML report
// carries <meta name="generator" content="nodal VERSION"/> in its head,
// within the first reportMarkerBytes bytes.
const (
	reportMarker      = `<meta name="generator" content="nodal `
	reportMarkerBytes = 4096
)

// maxReportAlternatives bounds the numbered names tried beside
// nodal-report.html.
const maxReportAlternatives = 99

// defaultReportPath returns where a report with no -o goes: nodal-report.html
// when it does not exist, was written by nodal (it carries reportMarker) or
// force is set; otherwise the first of nodal-report-2.html,
// nodal-report-3.html, … that is free or ours.
func defaultReportPath(force bool) (string, error) {
	if force || !foreignFile(defaultReportName) {
		return defaultReportName, nil
	}
	for i := 2; i <= maxReportAlternatives; i++ {
		p := fmt.Sprintf("nodal-report-%d.html", i)
		if !foreignFile(p) {
			return p, nil
		}
	}
	return "", fmt.Errorf("%s and nodal-report-2.html … nodal-report-%d.html exist and were not written by nodal: give a file with -o, or --force to overwrite %s", defaultReportName, maxReportAlternatives, defaultReportName)
}

// foreignFile reports whether path exists and is not a report nodal wrote.
func foreignFile(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return !errors.Is(err, fs.ErrNotExist)
	}
	defer f.Close()
	head := make([]byte, reportMarkerBytes)
	n, _ := io.ReadFull(f, head)
	return !bytes.Contains(head[:n], []byte(reportMarker))
}

// buildReport runs every analysis the report shows: the response q, and
// when q names no output and the file declares several responses, a
// section of each further response (report.Data.Responses).
func buildReport(e *env, l *loaded, q tfRequest, rr reportRun) (*report.Data, error) {
	c := l.circuit
	d := &report.Data{
		Title:      c.Title,
		Source:     report.Source{Name: l.name, SHA256: report.Checksum(l.src)},
		Version:    version,
		SourceText: string(l.src),
	}
	via := inheritedTols(c)
	for i, p := range c.Parts {
		d.Parts = append(d.Parts, report.Part{Name: p.Name, Kind: p.Kind.String(), Nodes: reportNodes(p), Value: partValueText(p), Tolerance: reportTol(p, via[i])})
	}
	names := c.ResponseNames()
	var others []string
	first := q.Out
	if q.Out == "" && len(names) > 1 {
		first, others = names[0], names[1:]
		d.ResponseName = first
	}
	if first == "" && len(names) > 0 {
		first = names[0]
	}
	q.Out = first
	r, lo, hi, err := fillResponse(e, l, q, d, rr, true)
	if err != nil {
		return nil, err
	}
	d.Summary = fmt.Sprintf("%d parts, %d nodes; analysed %s, order %d.", len(c.Parts), len(c.Nodes), r.what, r.tf.Order())
	if len(others) > 0 {
		d.Summary = fmt.Sprintf("%d parts, %d nodes; %d named responses: %s.", len(c.Parts), len(c.Nodes), len(names), strings.Join(names, ", "))
	}
	for _, name := range others {
		dr := &report.Data{ResponseName: name}
		if _, _, _, err := fillResponse(e, l, tfRequest{In: q.In, Out: name}, dr, rr, false); err != nil {
			return nil, fmt.Errorf("response %s: %w", name, err)
		}
		d.Notes = append(d.Notes, dr.Notes...)
		d.Responses = append(d.Responses, dr)
	}
	if err := addStabilitySections(l, d); err != nil {
		return nil, err
	}
	if err := addNoiseSection(e, l, r, d, lo, hi, rr.TempK); err != nil {
		return nil, err
	}
	return d, nil
}

// reportRun is how a report draws its figures: the Monte Carlo Runs and
// Seed, and TempK, the resistors' temperature (K) of the noise section and
// the noise metrics.
type reportRun struct {
	Runs  int
	Seed  uint64
	TempK float64
}

// fillResponse puts the sections of one response into d: the transfer
// function, roots, Bode plot, step response and tolerances (over the
// requirements taken on it; with verdicts, every requirement's verdict
// too). It returns the transfer function and the plotted range (Hz).
func fillResponse(e *env, l *loaded, q tfRequest, d *report.Data, rr reportRun, verdicts bool) (*tfResult, float64, float64, error) {
	c := l.circuit
	r, model, err := reportTF(e, l, q)
	if err != nil {
		return nil, 0, 0, err
	}
	h := r.tf
	d.Transfer = &report.Transfer{
		Input:    r.sys.Input.Source,
		Output:   response.OutputLabel(r.sys.Output),
		Factored: "H(s) = " + factoredText(h),
		Expanded: "H(s) = " + rationalText(h.Num, h.Den),
		ODE:      odeText(h.ODE(), r.yName, r.uName),
	}
	if model != nil {
		// The reduced model's: its ODE is not the circuit's.
		d.Transfer.Factored = "H(s) ≈ " + factoredText(h) + " (reduced model)"
		d.Transfer.Expanded = "H(s) ≈ " + rationalText(h.Num, h.Den) + " (reduced model)"
		d.Transfer.ODE = ""
		d.Notes = append(d.Notes, responsePrefix(d)+fmt.Sprintf("H(s), its poles and zeros and the step response are those of a reduced model of order %d "+
			"(of %d unknowns: Krylov projection, PRIMA-style), verified against direct solves at %d frequencies over %s–%s within %s dB and %s°; "+
			"the step response's samples are checked against the integration of the full circuit (TR-BDF2).",
			model.Order, model.Unknowns, model.CheckPoints, notation.Eng(model.FromHz, "Hz"), notation.Eng(model.ToHz, "Hz"),
			trimFloat(model.MaxErrDB, 2), trimFloat(model.MaxErrDeg, 2)))
	}
	if d.ResponseName != "" {
		d.Transfer.Output = d.ResponseName + " = " + d.Transfer.Output
	}
	for _, cz := range h.Cancelled {
		d.Notes = append(d.Notes, fmt.Sprintf("%sA pole-zero pair at s = %s rad/s cancels: that mode does not reach the output.", responsePrefix(d), complexText(cz)))
	}
	for _, p := range h.DistinctPoles() {
		d.Roots = append(d.Roots, reportRoot(report.Pole, p))
	}
	for _, z := range h.DistinctZeros() {
		d.Roots = append(d.Roots, reportRoot(report.Zero, z))
	}
	// Bode plot over the default range (a reduced model's verified one).
	lo, hi := rangeOf(l, r.tf)
	if model != nil {
		lo, hi = model.FromHz, model.ToHz
	}
	resp, err := response.Sweep(e.ctx, r.sys, response.LogGrid(lo, hi, 50), 0)
	if err != nil {
		return nil, 0, 0, err
	}
	tr := plot.BodeTrace{Label: response.OutputLabel(r.sys.Output), FreqHz: resp.FreqHz, MagDB: resp.MagDB, PhaseDeg: resp.PhaseDeg}
	addBodeMarks(&tr, r.tf, resp)
	bode, err := plot.Bode([]plot.BodeTrace{tr}, plot.BodeOptions{})
	if err != nil {
		return nil, 0, 0, err
	}
	d.Bode = report.Plot{Figure: bode, Caption: fmt.Sprintf("Bode plot of %s", r.what)}
	d.Response = responseRows(e, r, lo, hi, tr.Minus3dBHz)
	pz, err := plot.PoleZero(h.Poles, h.Zeros, plot.PoleZeroOptions{})
	if err != nil {
		return nil, 0, 0, err
	}
	d.PoleZero = report.Plot{Figure: pz, Caption: "pole-zero map (× poles, ○ zeros), rad/s"}
	if st, err := reportStep(e, r, model != nil); err == nil {
		d.Step = st
	} else {
		d.Notes = append(d.Notes, responsePrefix(d)+"No step response: "+err.Error())
	}
	var reqs []netlist.Requirement
	for _, rq := range c.Requirements {
		if rq.Response == q.Out || rq.Response == "" && verdicts {
			reqs = append(reqs, rq)
		}
	}
	if err := addToleranceSections(e, l, r, d, rr, reqs, verdicts); err != nil {
		return nil, 0, 0, err
	}
	return r, lo, hi, nil
}

// responsePrefix is "woofer: " for a named response's notes ("" for none).
func responsePrefix(d *report.Data) string {
	if d.ResponseName == "" {
		return ""
	}
	return d.ResponseName + ": "
}

// addStabilitySections states the circuit's stability (a banner at the
// top when it is not stable) and adds a loop section for every gain
// element a requirement names (phase_margin@U1, ...).
func addStabilitySections(l *loaded, d *report.Data) error {
	st, err := circuitStability(l)
	if err != nil {
		return err
	}
	d.Banner = stabilityLines(st)
	d.Stability = "Stability: " + st.Class.String() + "."
	if st.Class == stability.Stable {
		d.Stability = "Stability: stable (every natural frequency of the circuit lies in the open left half-plane)."
	}
	seen := map[string]bool{}
	for _, q := range l.circuit.Requirements {
		m, param, err := netlist.ParseMetric(q.Metric)
		part := param.Part
		if err != nil || m.Param != netlist.MetricParamPart || seen[part] {
			continue
		}
		seen[part] = true
		lr, err := loopGain(l.circuit, part)
		if err != nil {
			return fmt.Errorf("%s: %w", q.Pos, err)
		}
		lo, hi := rangeOf(l, lr.T)
		freqs := response.LogGrid(lo, hi, 50)
		mag, ph := loopCurves(lr, freqs)
		fig, err := loopFigure(l, lr, freqs, mag, ph)
		if err != nil {
			return err
		}
		d.Loops = append(d.Loops, report.Loop{Part: part, Factored: factoredText(lr.T),
			Plot:    report.Plot{Figure: fig, Caption: "Bode plot of the loop gain around " + part + " with its crossovers and margins"},
			Figures: loopFigureRows(lr, st)})
	}
	return nil
}

// reportStep computes the step response section (checkedStep; always
// checked when r is a reduced model's).
func reportStep(e *env, r *tfResult, reduced bool) (*report.Step, error) {
	sr, err := checkedStep(e.ctx, r.sys, r.tf, timeresp.TimeOptions{Points: 400}, reduced)
	if err != nil {
		return nil, err
	}
	ts := make([]float64, len(sr.Points))
	ys := make([]float64, len(sr.Points))
	for i, p := range sr.Points {
		ts[i], ys[i] = p.TS, p.Y
	}
	m := sr.Metrics
	marks := plot.StepMarks{}
	if m.Final != nil {
		marks.Final = *m.Final
		marks.RiseStartS, marks.RiseEndS = m.Rise10S, m.Rise90S
		marks.SettlingS, marks.SettlingBand = m.SettlingTimeS, 0.02
		if m.OvershootPct != nil && *m.OvershootPct > 0 {
			marks.PeakTimeS, marks.PeakValue = m.PeakTimeS, m.Peak
		}
	} else if len(ys) > 0 {
		marks.Final = ys[len(ys)-1]
	}
	fig, err := plot.Step(ts, ys, marks, plot.StepOptions{})
	if err != nil {
		return nil, err
	}
	st := &report.Step{Plot: report.Plot{Figure: fig, Caption: closedFormText(sr)}}
	add := func(name string, v *float64, unit string) {
		if v != nil {
			st.Metrics = append(st.Metrics, report.Metric{Name: name, Value: *v, Unit: unit})
		} else {
			st.Metrics = append(st.Metrics, report.Metric{Name: name, Value: math.NaN(), Unit: unit, Note: m.Note})
		}
	}
	add("final value", m.Final, "")
	add("rise time 10–90 %", m.RiseTimeS, "s")
	add("overshoot", m.OvershootPct, "%")
	if m.OvershootPct != nil && *m.OvershootPct == 0 {
		st.Metrics = append(st.Metrics, report.Metric{Name: "peak time", Value: math.NaN(), Unit: "s", Note: "no overshoot"})
	} else {
		add("peak time", m.PeakTimeS, "s")
	}
	add("settling time 2 %", m.SettlingTimeS, "s")
	return st, nil
}

// reportRoot converts a pole or zero for the report.
func reportRoot(k report.RootKind, m transfer.MultipleRoot) report.Root {
	s := m.Root
	mag := math.Hypot(real(s), imag(s))
	r := report.Root{Kind: k, S: s, F0Hz: mag / (2 * math.Pi), Multiplicity: m.Multiplicity}
	if imag(s) != 0 {
		q := transfer.PairOf(s).Q // +Inf on the jω axis
		r.Q = &q
	}
	return r
}

// reportNodes lists what a part connects (inductor names for a coupling).
func reportNodes(p netlist.Part) []string {
	if p.Kind == netlist.Coupling {
		return []string{p.Coupled[0], p.Coupled[1]}
	}
	return append([]string(nil), p.Nodes...)
}

// reportTol is the tolerance column of a part in the report: its own and
// those it follows ("±5 % via C"), "" for none.
func reportTol(p netlist.Part, via []netlist.Variation) string {
	if p.Tol.Rel == 0 && len(via) == 0 {
		return ""
	}
	return partTolText(p, via)
}

// responseRows is the report's frequency-response table: one point per
// decade of the Bode range and the −3 dB points, in increasing frequency.
func responseRows(e *env, r *tfResult, lo, hi float64, minus3dB []float64) []report.ResponsePoint {
	var fs []float64
	for f := lo; f <= hi*1.0001; f *= 10 {
		fs = append(fs, f)
	}
	fs = append(fs, minus3dB...)
	slices.Sort(fs)
	resp, err := response.Sweep(e.ctx, r.sys, fs, 1)
	if err != nil {
		return nil
	}
	rows := make([]report.ResponsePoint, len(fs))
	for i := range fs {
		rows[i] = report.ResponsePoint{FreqHz: resp.FreqHz[i], MagDB: resp.MagDB[i], PhaseDeg: resp.PhaseDeg[i]}
	}
	return rows
}

// reportTF is the transfer function a report shows: the full extraction,
// or above reducedAboveUnknowns the verified reduced model (returned too)
// that transfer and time use.
func reportTF(e *env, l *loaded, q tfRequest) (*tfResult, *reduce.Model, error) {
	p, sys, err := buildTF(l, q)
	if err != nil {
		return nil, nil, err
	}
	if sys.Size() <= reducedAboveUnknowns {
		r, err := extractFrom(l, p, sys)
		return r, nil, err
	}
	m, err := reducedModelFor(e, l, sys)
	if err != nil {
		return nil, nil, err
	}
	what, unit := p.describe(l.circuit, sys.Input, sys.Output)
	return &tfResult{tf: m.TF, sys: sys, what: what, yName: p.yName, uName: p.uName, unit: unit}, m, nil
}
