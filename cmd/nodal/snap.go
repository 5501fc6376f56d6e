package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"nodal/cmd/nodal/notation"
	"strings"

	"nodal/analysis/require"
	"nodal/analysis/stdvalue"
	"nodal/netlist"
)

// snapCmd rounds part values to an IEC 60063 series.
type snapCmd struct {
	circuitArgs
	requireProbe
	Series string `required:"" help:"E-series for every resistor and capacitor (E6, E12, E24, E48, E96, E192), or per kind: R=E96,C=E12 (kinds R, C, L, or resistor, capacitor, inductor)." placeholder:"SERIES"`
	Output string `short:"o" help:"Write the snapped circuit file here (never over the input); without it only the report is printed." placeholder:"NEW_FILE" type:"path"`
	Format string `help:"Output format of the report: table or json. (default table)" placeholder:"table|json"`
}

// Help is the extended help with a worked example.
func (c *snapCmd) Help() string {
	return `Rounds every resistor and capacitor (and, when named, inductor) to the
nearest value of an IEC 60063 series on a logarithmic scale (9.6k in E12
becomes 10k), leaving parts marked fixed alone, and reports each part's
old and new value and how each requirement's metric moves (nominal values,
on --in/--out as for verify). With -o it writes the new circuit file: the
same layout, comments and tolerances, with only the value texts replaced.

A part whose value is a plain reference to a let (R1: resistor (a, b) R)
has the let rewritten, when every use of the let is such a reference and
all round to the same value; any other expression is replaced by the
literal. A part inside a block instance is rounded through the instance's
option when its value is a plain block parameter set there; otherwise it
is left alone with the reason.

Exit status: 0, or 1 when a requirement fails at nominal values after
rounding (the file is still written), 2 for bad input.

Examples:

    nodal snap testdata/examples/logger_antialias.nodal --series E24
    nodal snap testdata/examples/logger_antialias.nodal --series R=E96,C=E12 -o logger-e96.nodal`
}

// seriesKinds are the part kinds --series can name, each by its letter
// (R, C, L; any case) or its kind keyword (resistor, capacitor, inductor).
var seriesKinds = []struct {
	letter string
	kind   netlist.Kind
}{{"R", netlist.Resistor}, {"C", netlist.Capacitor}, {"L", netlist.Inductor}}

// seriesKind resolves one KIND of --series KIND=SERIES.
func seriesKind(k string) (netlist.Kind, bool) {
	k = strings.TrimSpace(k)
	for _, sk := range seriesKinds {
		if strings.EqualFold(k, sk.letter) || strings.EqualFold(k, sk.kind.String()) {
			return sk.kind, true
		}
	}
	return 0, false
}

// parseSeriesFlag reads "E24" (resistors and capacitors) or "R=E96,C=E12"
// (also "resistor=E96,capacitor=E12").
func parseSeriesFlag(s string) (map[netlist.Kind]stdvalue.Series, error) {
	out := map[netlist.Kind]stdvalue.Series{}
	if !strings.Contains(s, "=") {
		ser, err := stdvalue.SeriesByName(s)
		if err != nil {
			return nil, fmt.Errorf("--series: %w", err)
		}
		out[netlist.Resistor], out[netlist.Capacitor] = ser, ser
		return out, nil
	}
	for _, item := range strings.Split(s, ",") {
		k, name, ok := strings.Cut(strings.TrimSpace(item), "=")
		kind, known := seriesKind(k)
		if !ok || !known {
			return nil, fmt.Errorf("--series %q: want SERIES or KIND=SERIES,... with kinds R, C, L or resistor, capacitor, inductor (e.g. R=E96,C=E12)", s)
		}
		if _, dup := out[kind]; dup {
			return nil, fmt.Errorf("--series %q: %s given twice", s, kind)
		}
		ser, err := stdvalue.SeriesByName(name)
		if err != nil {
			return nil, fmt.Errorf("--series: %w", err)
		}
		out[kind] = ser
	}
	return out, nil
}

// snapReport is the JSON form of a snap.
type snapReport struct {
	File         string            `json:"file"`
	Written      string            `json:"written,omitempty"`
	Parts        []snapPartJSON    `json:"parts"`
	Skipped      []snapSkipJSON    `json:"skipped,omitempty"`
	Notes        []string          `json:"notes,omitempty"`
	Requirements []snapRequireJSON `json:"requirements,omitempty"`
	MetricsNote  string            `json:"metrics_note,omitempty"`
}

type snapPartJSON struct {
	Part      string  `json:"part"`
	Kind      string  `json:"kind"`
	Series    string  `json:"series"`
	Old       float64 `json:"old"`
	New       float64 `json:"new"`
	Unit      string  `json:"unit"`
	RelChange float64 `json:"rel_change"`
}

type snapSkipJSON struct {
	Part   string `json:"part"`
	Reason string `json:"reason"`
}

type snapRequireJSON struct {
	Requirement string   `json:"requirement"`
	Unit        string   `json:"unit"`
	Before      *float64 `json:"before"`
	After       *float64 `json:"after"`
	PassBefore  bool     `json:"pass_before"`
	PassAfter   bool     `json:"pass_after"`

	before, after float64 // as evaluated, ±Inf and NaN included, for the table
}

// Run rounds, reports and writes the new file.
func (c *snapCmd) Run(e *env) error {
	format, err := chooseFormat(c.Format, "", "table", "json")
	if err != nil {
		return err
	}
	c.Format = format
	if err := checkOutputs([]string{c.File}, c.Output); err != nil {
		return err
	}
	series, err := parseSeriesFlag(c.Series)
	if err != nil {
		return err
	}
	if c.Output == "-" {
		return errors.New("-o wants a file name for the new circuit (the report goes to standard output)")
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	ov, err := parseOverrides(c.Set)
	if err != nil {
		return err
	}
	res, err := stdvalue.Snap(l.name, l.src, ov, series)
	if err != nil {
		return err
	}
	rep := &snapReport{File: l.name, Notes: res.Notes}
	for _, ch := range res.Changes {
		rep.Parts = append(rep.Parts, snapPartJSON{Part: ch.Part, Kind: ch.Kind.String(), Series: ch.Series, Old: ch.Old, New: ch.New, Unit: ch.Kind.Unit(), RelChange: ch.RelChange})
	}
	for _, s := range res.Skipped {
		rep.Skipped = append(rep.Skipped, snapSkipJSON{s.Part, s.Reason})
	}
	failAfter := false
	if len(l.circuit.Requirements) > 0 {
		rows, note, err := c.requirementMoves(l, res)
		if err != nil {
			return err
		}
		rep.Requirements, rep.MetricsNote = rows, note
		for _, r := range rows {
			failAfter = failAfter || !r.PassAfter
		}
	}
	if c.Output != "" {
		if err := writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error {
			_, err := w.Write(res.Source)
			return err
		}); err != nil {
			return err
		}
		rep.Written = c.Output
	}
	if err := writeTo(e, "", nil, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, rep)
		}
		return snapTable(w, rep)
	}); err != nil {
		return err
	}
	if failAfter {
		return &verdictError{msg: "requirements fail after rounding"}
	}
	return nil
}

// requirementMoves evaluates each requirement's metric before and after
// rounding. When the output cannot be chosen it returns a note instead.
func (c *snapCmd) requirementMoves(l *loaded, res *stdvalue.SnapResult) ([]snapRequireJSON, string, error) {
	probes, _, err := c.probes(l)
	if err != nil {
		return nil, "metrics not shown: " + err.Error(), nil
	}
	rm, err := require.NewProbeMetrics(l.circuit, l.circuit.Requirements, probes)
	if err != nil {
		return nil, "", err
	}
	var notes []string
	eval := func(c *netlist.Circuit, when string) []float64 {
		v, err := rm.Eval(c)
		if err != nil {
			notes = append(notes, fmt.Sprintf("%s the circuit cannot be analysed: %v", when, err))
			v = make([]float64, len(c.Requirements))
			for i := range v {
				v[i] = math.NaN()
			}
		}
		return v
	}
	before, after := eval(res.Before, "before rounding"), eval(res.After, "after rounding")
	var rows []snapRequireJSON
	for i, r := range l.circuit.Requirements {
		unit, _ := netlist.MetricUnit(metricBase(r.Metric))
		rows = append(rows, snapRequireJSON{
			Requirement: r.Text, Unit: unit, Before: finiteOrNil(before[i]), After: finiteOrNil(after[i]),
			PassBefore: r.Pass(before[i]), PassAfter: r.Pass(after[i]),
			before: before[i], after: after[i],
		})
	}
	return rows, strings.Join(notes, "; "), nil
}

func snapTable(w io.Writer, rep *snapReport) error {
	t := newTable(w, "part", "series", "old", "new", "change")
	for _, p := range rep.Parts {
		change := "unchanged"
		if p.New != p.Old {
			change = fmt.Sprintf("%+.2f %%", 100*p.RelChange)
		}
		if err := t.row(p.Part, p.Series, notation.Eng(p.Old, p.Unit), notation.Eng(p.New, p.Unit), change); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	for _, s := range rep.Skipped {
		fmt.Fprintf(w, "left alone: %s: %s\n", s.Part, s.Reason)
	}
	for _, n := range rep.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
	if len(rep.Requirements) > 0 {
		t := newTable(w, "requirement", "before", "verdict", "after", "verdict")
		for _, r := range rep.Requirements {
			if err := t.row(strings.TrimPrefix(r.Requirement, "require "), metricText(r.before, r.Unit), passText(r.PassBefore), metricText(r.after, r.Unit), passText(r.PassAfter)); err != nil {
				return err
			}
		}
		if err := t.render(); err != nil {
			return err
		}
	}
	if rep.MetricsNote != "" {
		fmt.Fprintf(w, "note: %s\n", rep.MetricsNote)
	}
	if rep.Written != "" {
		fmt.Fprintf(w, "wrote %s\n", rep.Written)
	} else {
		fmt.Fprintln(w, "no file written (give -o NEW_FILE to write the rounded circuit)")
	}
	return nil
}
