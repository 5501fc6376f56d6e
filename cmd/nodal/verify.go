package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"nodal/cmd/nodal/notation"
	"slices"
	"strings"
	"time"

	"github.com/schollz/progressbar/v3"

	"nodal/analysis/require"
	"nodal/analysis/response"
	"nodal/analysis/stability"
	"nodal/mna"
	"nodal/netlist"
)

// requireProbe chooses the input and output that the file's requirements
// are taken on: a requirement that names a response (tweeter.f3db) is
// taken on it, the others on --out (default: the file's first response,
// then the node named out).
type requireProbe struct {
	In  string `help:"Input source of the requirements (default: the circuit's only source)." placeholder:"SOURCE"`
	Out string `help:"Output of the unqualified requirements: a response, a node or i(PART) (default: the file's first response, then the node named out)." placeholder:"NAME"`
	Ref string `help:"Reference node of a differential output (default gnd)." placeholder:"NODE"`
}

// outNode returns --out, or the default output: the file's first
// response, then the node named out.
func (p *requireProbe) outNode(l *loaded) (string, error) {
	switch {
	case p.Out != "":
		return p.Out, nil
	case len(l.circuit.Responses) > 0:
		return l.circuit.Responses[0].Name, nil
	case l.circuit.HasNode("out"):
		return "out", nil
	}
	return "", fmt.Errorf("%s has no node named out: say where the requirements are measured with --out NODE or a response statement (nodes: %s)", l.name, strings.Join(l.circuit.Nodes[1:], ", "))
}

// probes returns the probe of every requirement of the circuit and the
// name of the response each is taken on (the output label for a node).
func (p *requireProbe) probes(l *loaded) ([]mna.Probe, []string, error) {
	c := l.circuit
	probes := make([]mna.Probe, len(c.Requirements))
	names := make([]string, len(c.Requirements))
	for i, r := range c.Requirements {
		in, out, ref := p.In, p.Out, p.Ref
		if r.Response != "" {
			out, ref = r.Response, ""
		}
		q, name, err := probeFor(c, in, out, ref)
		if err != nil {
			return nil, nil, fmt.Errorf("%s: requirements: %w", l.name, err)
		}
		if _, err := mna.Build(c, q.Ex, q.Ob); err != nil {
			return nil, nil, err
		}
		if name == "" {
			ex, ob, _ := mna.Resolve(c, q.Ex, q.Ob)
			q, name = mna.Probe{Ex: ex, Ob: ob}, response.OutputLabel(ob)
		}
		if m, ok := netlist.LookupMetric(metricBase(r.Metric)); ok && m.Circuit {
			name = "circuit" // a property of the whole circuit, not of a response
		}
		probes[i], names[i] = q, name
	}
	return probes, names, nil
}

// verifyCmd checks the file's requirements.
type verifyCmd struct {
	circuitArgs
	requireProbe
	Runs   int    `help:"Monte Carlo runs for the yield (0: none)." default:"1000"`
	Seed   int64  `help:"Seed of the Monte Carlo draws." default:"1"`
	Strict bool   `help:"Also fail (exit 1) when a requirement fails in the worst case."`
	Format string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
	tempArgs
}

// Help is the extended help with a worked example.
func (c *verifyCmd) Help() string {
	return `Checks every require statement of the file on the transfer function from
the input source (--in, default the only source) to the output (--out,
default the node named out): at nominal values, over the worst-case
corners of the tolerances (every part and toleranced let at its limits;
for more than 12 toleranced items, the corners each metric's sensitivities
point to, as in the tolerance command), and as the Monte Carlo yield: the fraction of --runs random
builds meeting each requirement and all of them, with its 95 % Wilson
score interval.

Every circuit is first judged on the implicit requirement stable (every
natural frequency in the open left half-plane; write require stable to
place it yourself): a build that is not stable fails every requirement
and counts against the yield. Loop metrics judge the loop gain around a
gain element, as nodal loop prints it: phase_margin@U1 (°),
gain_margin@U1 (dB), crossover@U1 (Hz, the highest gain crossover).

Exit status: 0 when every requirement passes at nominal (with --strict:
also in the worst case), 1 otherwise, 2 for bad input. A file without
require statements is bad input.

A requirement may name a response declared in the file (response NAME =
v(NODE)): it is taken on that response, the others on --out (default the
first response, then the node named out); the table has a response column.

    response woofer = v(lp)
    require woofer.gain@2.5kHz within -6.2dB..-5.8dB

    nodal verify testdata/examples/speaker_crossover.nodal

Requirements in the file:

    require gain@1kHz within -0.5dB..0.5dB
    require f3db within 1.9kHz..2.1kHz
    require q above 0.6
    require phase_margin@U1 above 45deg

Examples:

    nodal verify testdata/examples/logger_antialias.nodal
    nodal verify testdata/examples/bridge_inamp.nodal --runs 5000 --strict
    nodal verify testdata/examples/logger_antialias.nodal --format json`
}

// verifyReport is the JSON form of a verification.
type verifyReport struct {
	File    string `json:"file"`
	Input   string `json:"input"`
	Output  string `json:"output"`
	Runs    int    `json:"runs"`
	Seed    int64  `json:"seed"`
	Corners int    `json:"corners"`
	// Toleranced counts the toleranced parts and lets; with none, the
	// worst case is the nominal circuit and no Monte Carlo runs (runs 0,
	// no yield): see noTolerancesNote.
	Toleranced   int             `json:"toleranced_items"`
	Failed       int             `json:"failed_evaluations"`
	Requirements []verdictJSON   `json:"requirements"`
	Yield        *proportionJSON `json:"yield_all,omitempty"`
	PassNominal  bool            `json:"pass_nominal"`
	PassWorst    bool            `json:"pass_worst_case"`
	Notes        []string        `json:"notes,omitempty"`
	// the nominal circuit's stability and offending natural frequencies
	stabilityJSON
}

type verdictJSON struct {
	Requirement string   `json:"requirement"`
	Response    string   `json:"response"`
	Line        int      `json:"line"`
	Unit        string   `json:"unit"`
	Nominal     *float64 `json:"nominal"`
	// NominalReason says why nominal is null ("q: first-order: no pole
	// pair").
	NominalReason string          `json:"nominal_reason,omitempty"`
	NominalPass   bool            `json:"nominal_pass"`
	WorstMin      *float64        `json:"worst_min"`
	WorstMax      *float64        `json:"worst_max"`
	WorstPass     bool            `json:"worst_pass"`
	Yield         *proportionJSON `json:"yield,omitempty"`

	nominal, worstMin, worstMax float64 // as evaluated, ±Inf and NaN included, for the table
	stable                      bool    // the requirement is `stable` (values 1 or 0)
	unproven                    bool    // stable: the nominal class is passive or not checked
}

// stableText reads the value of the stable metric.
func stableText(v float64) string {
	if v == 1 {
		return "stable"
	}
	return "not stable"
}

type proportionJSON struct {
	Passed   int     `json:"passed"`
	Runs     int     `json:"runs"`
	Fraction float64 `json:"fraction"`
	Lo95     float64 `json:"wilson95_lo"`
	Hi95     float64 `json:"wilson95_hi"`
}

func proportionOut(p require.Proportion) *proportionJSON {
	if p.Runs == 0 {
		return nil
	}
	return &proportionJSON{Passed: p.Passed, Runs: p.Runs, Fraction: p.Fraction, Lo95: p.Lo, Hi95: p.Hi}
}

// Run verifies and prints the verdicts.
func (c *verifyCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "table", "json"); err != nil {
		return err
	}
	if c.Runs < 0 {
		return fmt.Errorf("--runs must be ≥ 0, got %d", c.Runs)
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	if len(l.circuit.Requirements) == 0 {
		return fmt.Errorf("%s has no require statements to verify; add one such as `require f3db within 1.9kHz..2.1kHz` (metrics: %s)", l.name, strings.Join(netlist.MetricNames(), ", "))
	}
	l.circuit.Requirements = require.WithStable(l.circuit.Requirements)
	probes, names, err := c.probes(l)
	if err != nil {
		return err
	}
	rm, err := require.NewProbeMetrics(l.circuit, l.circuit.Requirements, probes)
	if err != nil {
		return err
	}
	if rm.TempK, err = c.kelvin(); err != nil {
		return err
	}
	st, err := circuitStability(l)
	if err != nil {
		return err
	}
	runs := c.Runs
	if len(l.circuit.Variations) == 0 {
		runs = 0 // every draw is the nominal circuit
	}
	opt := require.VerifyOptions{Runs: runs, Seed: uint64(c.Seed)}
	finish := func() {}
	if e.stderrIsTerminal && runs > 0 {
		bar := progressbar.NewOptions(runs, progressbar.OptionSetWriter(e.stderr), progressbar.OptionSetDescription("verify"),
			progressbar.OptionShowCount(), progressbar.OptionThrottle(100*time.Millisecond), progressbar.OptionClearOnFinish())
		opt.Progress = func(done int) { _ = bar.Set(done) }
		finish = func() { _ = bar.Finish() }
	}
	res, err := require.Verify(e.ctx, l.circuit, rm, opt)
	finish()
	if err != nil {
		return err
	}
	why, err := rm.Explain(l.circuit)
	if err != nil {
		return err
	}
	rep := &verifyReport{
		File: l.name, Input: inputsOf(probes), Output: strings.Join(slices.DeleteFunc(uniq(names), func(n string) bool { return n == "circuit" }), ", "), Runs: runs, Seed: c.Seed, Corners: res.Corners,
		Toleranced: len(l.circuit.Variations),
		Failed:     res.Failed, Yield: proportionOut(res.Yield), PassNominal: res.PassNominal(), PassWorst: res.PassWorst(),
	}
	unstableNoted := false
	for i, d := range res.Verdicts {
		_, respUnit := tfProbe{}.describe(l.circuit, probes[i].Ex, probes[i].Ob)
		unit, _ := netlist.MetricUnit(metricBase(d.Requirement.Metric))
		if unit == netlist.UnitDecibel && responseLevel(metricBase(d.Requirement.Metric)) {
			unit = dbReference(respUnit) // dB re 1 V/A for a transimpedance
		}
		rep.Requirements = append(rep.Requirements, verdictJSON{
			Requirement: d.Requirement.Text, Response: names[i], Line: d.Requirement.Pos.Line, Unit: unit,
			Nominal: finiteOrNil(d.Nominal), NominalPass: d.NominalPass,
			WorstMin: finiteOrNil(d.WorstMin), WorstMax: finiteOrNil(d.WorstMax), WorstPass: d.WorstPass,
			Yield:   proportionOut(d.Yield),
			nominal: d.Nominal, worstMin: d.WorstMin, worstMax: d.WorstMax, stable: d.Requirement.Metric == "stable",
		})
		if errors.Is(why[i], stability.ErrUnstable) {
			if !unstableNoted {
				rep.Notes = append(rep.Notes, "at nominal values the circuit is not stable: every requirement fails ("+st.Class.String()+": "+naturalList(st.Offending)+")")
			}
			unstableNoted = true
			rep.Requirements[len(rep.Requirements)-1].NominalReason = "not stable"
		} else if why[i] != nil {
			rep.Requirements[len(rep.Requirements)-1].unproven = errors.Is(why[i], stability.ErrUnchecked)
			rep.Requirements[len(rep.Requirements)-1].NominalReason = why[i].Error()
			rep.Notes = append(rep.Notes, fmt.Sprintf("%s: at nominal values: %v", d.Requirement.Text, why[i]))
		}
	}
	if note := noiseMetricsNote(rm.Metrics(), rm.TempK); note != "" {
		rep.Notes = append(rep.Notes, note)
	}
	if rep.Toleranced == 0 {
		rep.Notes = append(rep.Notes, noTolerancesNote)
	}
	if res.Failed > 0 {
		rep.Notes = append(rep.Notes, fmt.Sprintf("%d varied builds could not be analysed and count as failing (first: %v)", res.Failed, res.FirstFailure))
	}
	rep.stabilityJSON = newStabilityJSON(st)
	if err := writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, rep)
		}
		warnStability(e.stderr, st)
		return verifyTable(w, rep)
	}); err != nil {
		return err
	}
	switch {
	case !res.PassNominal():
		return &verdictError{msg: "requirements fail at nominal values"}
	case c.Strict && !res.PassWorst():
		return &verdictError{msg: "requirements fail in the worst case"}
	}
	return nil
}

// inputsOf names the sources of the probes, each once.
func inputsOf(probes []mna.Probe) string {
	var in []string
	for _, p := range probes {
		in = append(in, p.Ex.Source)
	}
	return strings.Join(uniq(in), ", ")
}

// uniq returns the strings in order with repeats left out.
func uniq(names []string) []string {
	var out []string
	for _, n := range names {
		if !slices.Contains(out, n) {
			out = append(out, n)
		}
	}
	return out
}

// metricBase is the metric name without its frequency ("gain@1kHz" → "gain").
func metricBase(metric string) string {
	name, _, _ := strings.Cut(metric, "@")
	return name
}

// responseLevel reports whether a metric in dB is a level of the
// response itself (its dB is re 1 of the response's unit), unlike a loop
// gain's margin.
func responseLevel(metric string) bool {
	switch metric {
	case "gain", "peak", "dc":
		return true
	}
	return false
}

// metricText formats a metric value in its unit.
func metricText(v float64, unit string) string {
	if math.IsNaN(v) {
		return "-"
	}
	return notation.Metric(v, unit)
}

func passText(ok bool) string {
	if ok {
		return "pass"
	}
	return "FAIL"
}

// noTolerancesNote replaces the corner and run counts when no part or let
// carries a tolerance.
const noTolerancesNote = "no toleranced parts: worst case and yield equal nominal"

// yieldText is "97.3 % [96.1, 98.2]".
func yieldText(p *proportionJSON) string {
	if p == nil {
		return "-"
	}
	return fmt.Sprintf("%.1f %% [%.1f, %.1f]", 100*p.Fraction, 100*p.Lo95, 100*p.Hi95)
}

func verifyTable(w io.Writer, rep *verifyReport) error {
	if rep.Output == "" {
		// Only loop metrics (phase_margin@U1, ...): no response to name.
		fmt.Fprintf(w, "%s: requirements on the circuit's loops\n", rep.File)
	} else {
		fmt.Fprintf(w, "%s: requirements on %s driven by %s\n", rep.File, rep.Output, rep.Input)
	}
	t := newTable(w, "response", "requirement", "nominal", "verdict", "worst case", "verdict", "yield [95 % CI]")
	for _, v := range rep.Requirements {
		worst, yield := "-", yieldText(v.Yield)
		switch {
		case rep.Toleranced == 0:
			worst, yield = "as nominal", "as nominal"
		case !math.IsNaN(v.worstMin):
			worst = metricText(v.worstMin, v.Unit) + " .. " + metricText(v.worstMax, v.Unit)
		}
		nominal := metricText(v.nominal, v.Unit)
		if v.stable && rep.Toleranced > 0 {
			nominal, worst = stableText(v.nominal), "stable at every corner"
			if v.worstMin == 0 {
				worst = "not stable at a corner"
			}
		} else if v.stable {
			nominal = stableText(v.nominal)
		}
		if v.unproven {
			nominal = "not proven"
		}
		if err := t.row(v.Response, strings.TrimPrefix(v.Requirement, "require "), nominal, passText(v.NominalPass), worst, passText(v.WorstPass), yield); err != nil {
			return err
		}
	}
	allYield := yieldText(rep.Yield)
	if rep.Toleranced == 0 {
		allYield = "as nominal"
	}
	if err := t.row("all", "", "", passText(rep.PassNominal), "", passText(rep.PassWorst), allYield); err != nil {
		return err
	}
	if err := t.render(); err != nil {
		return err
	}
	switch {
	case rep.Toleranced == 0: // said in the notes
	case rep.Runs == 0:
		fmt.Fprintf(w, "worst case over %d corners; no Monte Carlo runs (--runs 0)\n", rep.Corners)
	default:
		fmt.Fprintf(w, "worst case over %d corners; yield from %d Monte Carlo runs (seed %d)\n", rep.Corners, rep.Runs, rep.Seed)
	}
	for _, n := range rep.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	switch {
	case !rep.PassNominal:
		fmt.Fprintln(w, "verdict: FAIL at nominal values")
	case !rep.PassWorst:
		fmt.Fprintln(w, "verdict: pass at nominal values; FAIL in the worst case")
	default:
		fmt.Fprintln(w, "verdict: pass at nominal values and in the worst case")
	}
	return nil
}
