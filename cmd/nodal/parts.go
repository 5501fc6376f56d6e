package main

import (
	"fmt"
	"io"
	"nodal/cmd/nodal/notation"
	"strings"

	"nodal/netlist"
	"nodal/netlist/syntax"
)

// partsCmd prints the elaborated circuit: what nodal understood.
type partsCmd struct {
	circuitArgs
	Format string `help:"Output format: table or json (default: from the -o extension, else table)." placeholder:"table|json"`
	Output string `short:"o" help:"Write to this file instead of standard output." placeholder:"FILE" type:"path"`
}

// Help is the extended help with a worked example.
func (c *partsCmd) Help() string {
	return `Shows every part after elaboration: hierarchical names of block parts,
node names, values in SI with units, tolerances, and the node list.

Example:

    nodal parts testdata/examples/logger_antialias.nodal
    nodal parts testdata/examples/bridge_inamp.nodal --format json`
}

// partJSON is one part in the JSON output.
type partJSON struct {
	Name  string   `json:"name"`
	Kind  string   `json:"kind"`
	Nodes []string `json:"nodes"`
	Value float64  `json:"value"`
	Unit  string   `json:"unit,omitempty"`
	Tol   float64  `json:"tol"`
	Dist  string   `json:"dist"`
	Fixed bool     `json:"fixed,omitempty"`
	// Inherited lists the toleranced parameters the part's value follows
	// (one shared draw each), with their tolerances.
	Inherited []inheritedJSON `json:"inherited_tol,omitempty"`
	// Extra carries kind-specific settings (the sensed nodes or part of a
	// controlled source, the coupled inductors, the opamp model).
	Extra map[string]any `json:"extra,omitempty"`
}

// inheritedJSON is a toleranced parameter a part follows.
type inheritedJSON struct {
	Param string  `json:"param"`
	Tol   float64 `json:"tol"`
	Dist  string  `json:"dist"`
}

// paramJSON is a toleranced parameter of the file.
type paramJSON struct {
	Name    string  `json:"name"`
	Nominal float64 `json:"nominal"`
	Unit    string  `json:"unit,omitempty"`
	Tol     float64 `json:"tol"`
	Dist    string  `json:"dist"`
	Line    int     `json:"line"`
}

// requirementJSON is a require statement of the file.
type requirementJSON struct {
	Text   string `json:"text"`
	Metric string `json:"metric"`
	Unit   string `json:"unit"`
	Line   int    `json:"line"`
}

// partsDoc is the JSON document of `nodal parts`: the title, every part,
// the nodes, the toleranced parameters and the requirements (empty lists,
// never null).
type partsDoc struct {
	Title        string            `json:"title"`
	Parts        []partJSON        `json:"parts"`
	Nodes        []string          `json:"nodes"`
	Params       []paramJSON       `json:"toleranced_params"`
	Requirements []requirementJSON `json:"requirements"`
}

// Run prints the parts.
func (c *partsCmd) Run(e *env) error {
	if err := startOutput(&c.Format, []string{c.File}, []string{c.Output}, "table", "json"); err != nil {
		return err
	}
	l, err := c.load(e)
	if err != nil {
		return err
	}
	return writeTo(e, c.Output, []string{c.File}, func(w io.Writer) error {
		if c.Format == "json" {
			return writeJSON(w, partsJSON(l.circuit))
		}
		return partsTable(w, l.circuit)
	})
}

// partsJSON is the JSON document of `nodal parts`.
func partsJSON(c *netlist.Circuit) partsDoc {
	doc := partsDoc{Title: c.Title, Parts: make([]partJSON, 0, len(c.Parts)), Nodes: c.Nodes,
		Params: []paramJSON{}, Requirements: []requirementJSON{}}
	via := inheritedTols(c)
	for i, p := range c.Parts {
		pj := partJSON{Name: p.Name, Kind: p.Kind.String(), Nodes: append([]string{}, p.Nodes...),
			Value: p.Value, Unit: p.Kind.Unit(), Tol: p.Tol.Rel, Dist: p.Tol.Dist.String(), Fixed: p.Fixed}
		if x := partExtra(p); len(x) > 0 {
			pj.Extra = x
		}
		for _, v := range via[i] {
			pj.Inherited = append(pj.Inherited, inheritedJSON{Param: v.Name, Tol: v.Tol.Rel, Dist: v.Tol.Dist.String()})
		}
		doc.Parts = append(doc.Parts, pj)
	}
	for _, v := range c.Variations {
		if v.IsParam {
			doc.Params = append(doc.Params, paramJSON{Name: v.Name, Nominal: v.Nominal, Unit: paramUnit(c, v.Name), Tol: v.Tol.Rel, Dist: v.Tol.Dist.String(), Line: v.Pos.Line})
		}
	}
	for _, r := range c.Requirements {
		unit, _ := netlist.MetricUnit(r.Metric)
		doc.Requirements = append(doc.Requirements, requirementJSON{Text: r.Text, Metric: r.Metric, Unit: unit, Line: r.Pos.Line})
	}
	return doc
}

// partExtra returns the kind-specific settings of p.
func partExtra(p netlist.Part) map[string]any {
	x := map[string]any{}
	switch p.Kind {
	case netlist.VCVS, netlist.VCCS:
		x["sense"] = []string{p.Sense[0], p.Sense[1]}
	case netlist.CCVS, netlist.CCCS:
		x["sense"] = p.Control
	case netlist.Coupling:
		x["inductors"] = []string{p.Coupled[0], p.Coupled[1]}
	case netlist.VoltageSource, netlist.CurrentSource:
		if p.PhaseRad != 0 {
			x["phase_deg"] = p.PhaseRad * 180 / pi
		}
	case netlist.OpAmp:
		if p.A0 > 0 {
			x["a0"] = p.A0
		}
		if p.GBWHz > 0 {
			x["gbw_hz"] = p.GBWHz
		}
		if p.Rout > 0 {
			x["rout"] = p.Rout
		}
		for _, o := range opampNoise(p) {
			x[o.key] = o.v
		}
	case netlist.Resistor:
		if p.Noiseless {
			x["noiseless"] = true
		}
	}
	return x
}

// partValueText is the value column of the parts table.
func partValueText(p netlist.Part) string {
	switch p.Kind {
	case netlist.OpAmp:
		var opts []string
		if p.A0 > 0 {
			opts = append(opts, "a0="+notation.Eng(p.A0, ""))
		}
		if p.GBWHz > 0 {
			opts = append(opts, "gbw="+notation.Eng(p.GBWHz, "Hz"))
		}
		if p.Rout > 0 {
			opts = append(opts, "rout="+notation.Eng(p.Rout, "Ω"))
		}
		for _, o := range opampNoise(p) {
			opts = append(opts, o.name+"="+notation.Eng(o.v, o.unit))
		}
		if len(opts) == 0 {
			return "ideal"
		}
		return strings.Join(opts, " ")
	case netlist.VCVS, netlist.VCCS:
		ctl := "v(" + p.Sense[0] + ")"
		if p.Sense[1] != netlist.Ground {
			ctl = "v(" + p.Sense[0] + ", " + p.Sense[1] + ")"
		}
		return notation.Eng(p.Value, p.Kind.Unit()) + "·" + ctl
	case netlist.CCVS, netlist.CCCS:
		return notation.Eng(p.Value, p.Kind.Unit()) + "·i(" + p.Control + ")"
	case netlist.Coupling:
		return fmt.Sprintf("K=%s", notation.Eng(p.Value, ""))
	case netlist.VoltageSource, netlist.CurrentSource:
		v := notation.Eng(p.Value, p.Kind.Unit())
		if p.PhaseRad != 0 {
			v += fmt.Sprintf(" ∠%.4g°", p.PhaseRad*180/pi)
		}
		return v
	}
	if p.Kind == netlist.Resistor && p.Noiseless {
		return notation.Eng(p.Value, p.Kind.Unit()) + " noiseless"
	}
	return notation.Eng(p.Value, p.Kind.Unit())
}

// noiseSetting is one opamp noise option as shown: its option name, JSON
// key, value and unit.
type noiseSetting struct {
	name, key, unit string
	v               float64
}

// opampNoise lists the noise options an opamp has (those > 0).
func opampNoise(p netlist.Part) []noiseSetting {
	var out []noiseSetting
	for _, o := range []noiseSetting{
		{"en", "en_v_per_rthz", "V/√Hz", p.EnVPerRtHz}, {"in", "in_a_per_rthz", "A/√Hz", p.InAPerRtHz},
		{"fen", "fen_hz", "Hz", p.FenHz}, {"fin", "fin_hz", "Hz", p.FinHz},
	} {
		if o.v > 0 {
			out = append(out, o)
		}
	}
	return out
}

// partNodesText is the nodes column of the parts table.
func partNodesText(p netlist.Part) string {
	if p.Kind == netlist.Coupling {
		return p.Coupled[0] + ", " + p.Coupled[1]
	}
	return strings.Join(p.Nodes, ", ")
}

// inheritedTols returns, for each part of c (by index), the toleranced
// parameters (`let NAME = VALUE ±TOL`) whose draw changes its value:
// C1 = 2*Q*C0 follows C0. It is found by varying each parameter alone to
// its upper limit (Circuit.Vary), so a design let computed from a
// toleranced one (which keeps its nominal value) is rightly not followed.
func inheritedTols(c *netlist.Circuit) [][]netlist.Variation {
	out := make([][]netlist.Variation, len(c.Parts))
	for i, v := range c.Variations {
		if !v.IsParam {
			continue
		}
		f := make([]float64, len(c.Variations))
		for k := range f {
			f[k] = 1
		}
		f[i] = 1 + v.Tol.Rel
		d, err := c.Vary(f)
		if err != nil {
			continue
		}
		for k, p := range c.Parts {
			q := d.Parts[k]
			if q.Value != p.Value || q.A0 != p.A0 || q.GBWHz != p.GBWHz || q.Rout != p.Rout {
				out[k] = append(out[k], v)
			}
		}
	}
	return out
}

// partTolText is the tolerance column of a part: its own tolerance and
// those it follows from toleranced parameters ("±1 %, ±5 % via C0"), "-"
// for none.
func partTolText(p netlist.Part, via []netlist.Variation) string {
	var s []string
	if p.Tol.Rel != 0 {
		s = append(s, tolText(p.Tol))
	}
	for _, v := range via {
		s = append(s, tolText(v.Tol)+" via "+v.Name)
	}
	if len(s) == 0 {
		return "-"
	}
	return strings.Join(s, ", ")
}

// tolText formats a tolerance for tables.
func tolText(t netlist.Tolerance) string {
	if t.Rel == 0 {
		return "-"
	}
	s := "±" + trimFloat(t.Rel*100, 4) + " %"
	if t.Dist == netlist.Normal {
		s += " normal"
	}
	return s
}

// partsTable prints the parts and nodes tables.
func partsTable(w io.Writer, c *netlist.Circuit) error {
	if c.Title != "" {
		fmt.Fprintf(w, "%s\n\n", syntax.EscapeText(c.Title)) // file text: no terminal controls
	}
	t := newTextTable(w, "name", "kind", "nodes", "value", "tolerance")
	via := inheritedTols(c)
	for i, p := range c.Parts {
		name := p.Name
		if p.Fixed {
			name += " (fixed)"
		}
		if err := t.row(name, p.Kind.String(), partNodesText(p), partValueText(p), partTolText(p, via[i])); err != nil {
			return err
		}
	}
	if err := t.render(); err != nil {
		return err
	}
	var shared []string
	for _, v := range c.Variations {
		if v.IsParam {
			shared = append(shared, fmt.Sprintf("%s = %s %s", v.Name, notation.Eng(v.Nominal, paramUnit(c, v.Name)), tolText(v.Tol)))
		}
	}
	if len(shared) > 0 {
		fmt.Fprintf(w, "\ntoleranced parameters (one shared draw each): %s\n", strings.Join(shared, "; "))
	}
	fmt.Fprintf(w, "\nnodes (%d): %s\n", len(c.Nodes), strings.Join(c.Nodes, ", "))
	if len(c.Requirements) > 0 {
		fmt.Fprintln(w, "\nrequirements:")
		for _, r := range c.Requirements {
			fmt.Fprintf(w, "  %s\n", r.Text)
		}
	}
	return nil
}

// paramUnit returns the unit a parameter was written with.
func paramUnit(c *netlist.Circuit, name string) string {
	for _, p := range c.Params {
		if p.Name == name {
			return p.Unit
		}
	}
	return ""
}
