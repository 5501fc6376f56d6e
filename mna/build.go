package mna

import (
	"fmt"
	"math"

	"nodal/netlist"
)

// Sign conventions (those of the circuit language):
//
//   - The current through a two-terminal part, i(PART), flows into its first
//     terminal and out of its second, through the part. For a voltage source this
//     is the current entering its + terminal from the circuit: a source that
//     delivers power has a negative i(PART).
//   - A current source of value J pushes J into the node on its first terminal,
//     through the external circuit, and takes it back out of the node on
//     its second. With a current source (a, gnd) into a resistor R from a to gnd,
//     v(a) = +R·J; the current through the part, i(PART), is −J.
//   - A controlled current source pushes its controlled current the same way, into the
//     node on its first terminal.
//   - The branch current of an opamp, i(PART), is the current its output
//     pushes into the output node.
//   - An injected test current (Input.Inject) is pushed into the node from
//     Ground, so v(node)/1 A is the impedance seen at the node.

// Build resolves the probe (in, out) against c (see Resolve), stamps every
// part of c into its MNA matrices (BuildMatrices), applies the excitation
// and the observation, and checks the structure of the result (see
// Structure). The returned system is complete even when the structure
// check fails: the error is then a *StructureError and the system may
// still be printed.
//
// Errors: *LookupError for an unknown node, source or part (naming the
// closest existing name), *PartError for a part that cannot be stamped,
// *StructureError for a system singular at every s.
func Build(c *netlist.Circuit, in Input, out Output) (*System, error) {
	in, out, err := Resolve(c, in, out)
	if err != nil {
		return nil, err
	}
	m, err := BuildMatrices(c)
	if err != nil {
		return nil, err
	}
	e, err := m.Excite(in)
	if err != nil {
		return nil, err
	}
	return e.System(out)
}

// BuildMatrices stamps every part of c into the circuit's MNA matrices,
// independent of any input or output: every independent source zeroed
// (voltage sources shorted, current sources opened). Build one per circuit
// and derive systems and solvers for any number of probes from it.
//
// Errors: *PartError for a part that cannot be stamped.
func BuildMatrices(c *netlist.Circuit) (*Matrices, error) {
	b, err := newBuilder(c)
	if err != nil {
		return nil, err
	}
	if err := b.stampAll(); err != nil {
		return nil, err
	}
	return b.matrices(), nil
}

// builder holds the unknown numbering and the matrices while stamping.
type builder struct {
	c *netlist.Circuit

	nodes    map[string]int
	names    []string // node names in row order
	branches map[string]int
	unknowns []string
	n        int
	g, cap   []triplet // the stamps, summed into Sparse matrices at the end
	edges    []edge
	controls map[string]control
	term     [3]int // terminals' working memory (its result is used at once)
}

func newBuilder(c *netlist.Circuit) (*builder, error) {
	b := &builder{c: c, nodes: map[string]int{}, branches: map[string]int{}, controls: map[string]control{}}
	b.names = circuitNodes(c)
	for i, n := range b.names {
		b.nodes[n] = i
		b.unknowns = append(b.unknowns, "v("+n+")")
	}
	sensed := map[string]bool{}
	for i := range c.Parts {
		p := &c.Parts[i]
		if p.Kind == netlist.CCVS || p.Kind == netlist.CCCS {
			if err := b.checkControl(p); err != nil {
				return nil, err
			}
			sensed[p.Control] = true
		}
	}
	for i := range c.Parts {
		p := &c.Parts[i]
		if needsBranch(p.Kind) || sensed[p.Name] {
			b.branches[p.Name] = len(b.unknowns)
			b.unknowns = append(b.unknowns, "i("+p.Name+")")
		}
	}
	b.n = len(b.unknowns)
	return b, nil
}

func isGround(name string) bool { return name == netlist.Ground || name == "0" }

// needsBranch reports whether a part kind always has a branch current.
func needsBranch(k netlist.Kind) bool {
	switch k {
	case netlist.VoltageSource, netlist.Inductor, netlist.VCVS, netlist.CCVS, netlist.OpAmp:
		return true
	}
	return false
}

// node returns the row of a node, -1 for Ground.
func (b *builder) node(name string) int {
	if isGround(name) || name == "" {
		return -1
	}
	return b.nodes[name]
}

func (b *builder) nodeList() []string {
	return append([]string{netlist.Ground}, b.names...)
}

func (b *builder) hasNode(name string) bool {
	if isGround(name) {
		return true
	}
	_, ok := b.nodes[name]
	return ok
}

func (b *builder) checkControl(p *netlist.Part) error {
	ctl, ok := b.c.Part(p.Control)
	if !ok || ctl.Kind == netlist.Coupling {
		return partLookupError(p.Name, &LookupError{What: "part", Name: p.Control, Known: newNames(b.c).currentParts(),
			Why: fmt.Sprintf("i(%s) names no part with a current", p.Control)})
	}
	return nil
}

func (b *builder) matrices() *Matrices {
	return &Matrices{
		Unknowns: b.unknowns,
		G:        newSparse(b.n, b.g),
		C:        newSparse(b.n, b.cap),
		orders:   &orderCache{},
		c:        b.c,
		controls: b.controls,
		idx: index{
			nodeIndex:   b.nodes,
			branchIndex: b.branches,
			nodeNames:   b.names,
			edges:       b.edges,
		},
	}
}

func (b *builder) addG(r, c int, v float64) {
	if r >= 0 && c >= 0 {
		b.g = append(b.g, triplet{r, c, v})
	}
}

func (b *builder) addC(r, c int, v float64) {
	if r >= 0 && c >= 0 {
		b.cap = append(b.cap, triplet{r, c, v})
	}
}

// finitePositive checks a part value that must be finite and > 0.
func finitePositive(p *netlist.Part, what string, v float64) error {
	if !(v > 0) || math.IsInf(v, 0) {
		return &PartError{Part: p.Name, Msg: fmt.Sprintf("%s must be finite and > 0, not %g", what, v)}
	}
	return nil
}

// finite checks a part value that must be a finite number.
func finite(p *netlist.Part, what string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return &PartError{Part: p.Name, Msg: fmt.Sprintf("%s must be finite, not %g", what, v)}
	}
	return nil
}
