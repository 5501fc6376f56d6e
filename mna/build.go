package mna

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"nodal/netlist"
)

// Sign conventions (those of the circuit language):
//
//   - The current through a two-terminal part, i(PART), flows into its first
//     terminal and out of its second, through the part. For a vsource this
//     is the current entering its + terminal from the circuit: a source that
//     delivers power has a negative i(PART).
//   - An isource of value J pushes J into the node on its first terminal,
//     through the external circuit, and takes it back out of the node on
//     its second. With isource (a, gnd) into a resistor R from a to gnd,
//     v(a) = +R·J; the current through the part, i(PART), is −J.
//   - A vccs or cccs pushes its controlled current the same way, into the
//     node on its first terminal.
//   - The branch current of an opamp, i(PART), is the current its output
//     pushes into the output node.
//   - An injected test current (Input.Inject) is pushed into the node from
//     Ground, so v(node)/1 A is the impedance seen at the node.

// Build stamps every part of c into the MNA system for the given input and
// output and checks its structure (see Structure). The returned system is
// complete even when the structure check fails: the error is then a
// *StructureError and the system may still be printed.
//
// Errors: *LookupError for an unknown node, source or part (listing the
// ones that exist), *PartError for a part that cannot be stamped,
// *StructureError for a system singular at every s.
func Build(c *netlist.Circuit, in Input, out Output) (*System, error) {
	b, err := newBuilder(c, in, out)
	if err != nil {
		return nil, err
	}
	for i := range c.Parts {
		if err := b.stamp(&c.Parts[i]); err != nil {
			return nil, err
		}
	}
	if err := b.stampCouplings(); err != nil {
		return nil, err
	}
	sys := b.system()
	if err := sys.Structure(); err != nil {
		return sys, err
	}
	return sys, nil
}

// builder holds the unknown numbering and the matrices while stamping.
type builder struct {
	c      *netlist.Circuit
	in     Input
	out    Output
	source *netlist.Part // the input source, nil with Inject

	nodes    map[string]int
	names    []string // node names in row order
	branches map[string]int
	unknowns []string
	n        int
	g, cap   []float64 // row-major n×n
	bvec     []float64
	lvec     []float64
	edges    []edge
}

func newBuilder(c *netlist.Circuit, in Input, out Output) (*builder, error) {
	b := &builder{c: c, in: in, out: out, nodes: map[string]int{}, branches: map[string]int{}}
	add := func(name string) {
		if isGround(name) || name == "" {
			return
		}
		if _, ok := b.nodes[name]; !ok {
			b.nodes[name] = len(b.names)
			b.names = append(b.names, name)
		}
	}
	for _, n := range c.Nodes {
		add(n)
	}
	for i := range c.Parts {
		for _, n := range c.Parts[i].Nodes {
			add(n)
		}
		if k := c.Parts[i].Kind; k == netlist.VCVS || k == netlist.VCCS {
			for _, n := range c.Parts[i].Sense {
				add(n)
			}
		}
	}
	for _, n := range b.names {
		b.unknowns = append(b.unknowns, "v("+n+")")
	}
	if err := b.resolveInput(); err != nil {
		return nil, err
	}
	if err := b.resolveOutput(); err != nil {
		return nil, err
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
	if out.Kind == PartCurrent {
		sensed[out.Part] = true
	}
	for i := range c.Parts {
		p := &c.Parts[i]
		if needsBranch(p.Kind) || sensed[p.Name] {
			b.branches[p.Name] = len(b.unknowns)
			b.unknowns = append(b.unknowns, "i("+p.Name+")")
		}
	}
	b.n = len(b.unknowns)
	b.g = make([]float64, b.n*b.n)
	b.cap = make([]float64, b.n*b.n)
	b.bvec = make([]float64, b.n)
	b.lvec = make([]float64, b.n)
	if in.Inject != "" {
		b.bvec[b.nodes[in.Inject]] = 1
	}
	if out.Kind == PartCurrent {
		b.lvec[b.branches[out.Part]] = 1
	} else {
		b.addL(b.node(out.Node), 1)
		b.addL(b.node(out.Ref), -1)
	}
	return b, nil
}

func isGround(name string) bool { return name == netlist.Ground || name == "0" }

// needsBranch reports whether a part kind always has a branch current.
func needsBranch(k netlist.Kind) bool {
	switch k {
	case netlist.VSource, netlist.Inductor, netlist.VCVS, netlist.CCVS, netlist.OpAmp:
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

func (b *builder) resolveInput() error {
	var sources []string
	var only *netlist.Part
	for i := range b.c.Parts {
		p := &b.c.Parts[i]
		if p.Kind == netlist.VSource || p.Kind == netlist.ISource {
			sources = append(sources, p.Name)
			only = p
		}
	}
	switch {
	case b.in.Inject != "":
		if b.in.Source != "" {
			return fmt.Errorf("input: give either a source (%q) or a node to inject into (%q), not both", b.in.Source, b.in.Inject)
		}
		if isGround(b.in.Inject) || !b.hasNode(b.in.Inject) {
			return &LookupError{What: "node", Name: b.in.Inject, Known: b.names,
				Why: fmt.Sprintf("cannot inject a test current into node %q", b.in.Inject)}
		}
		return nil
	case b.in.Source == "":
		if len(sources) != 1 {
			why := "the circuit has several independent sources; name the input"
			if len(sources) == 0 {
				why = "the circuit has no independent source; inject a test current into a node instead"
			}
			return &LookupError{What: "source", Known: sources, Why: why}
		}
		b.source = only
	default:
		p, ok := b.c.Part(b.in.Source)
		if !ok || (p.Kind != netlist.VSource && p.Kind != netlist.ISource) {
			return &LookupError{What: "source", Name: b.in.Source, Known: sources}
		}
		b.source = p
	}
	b.in.Source = b.source.Name
	return nil
}

func (b *builder) resolveOutput() error {
	switch b.out.Kind {
	case NodeVoltage:
		if b.out.Ref == "" {
			b.out.Ref = netlist.Ground
		}
		for _, n := range []string{b.out.Node, b.out.Ref} {
			if !b.hasNode(n) {
				return &LookupError{What: "node", Name: n, Known: b.nodeList()}
			}
		}
		if isGround(b.out.Node) && isGround(b.out.Ref) {
			return &LookupError{What: "node", Name: b.out.Node, Known: b.nodeList(),
				Why: "the output node is the reference node"}
		}
		return nil
	case PartCurrent:
		p, ok := b.c.Part(b.out.Part)
		if !ok || p.Kind == netlist.Coupling {
			return &LookupError{What: "part", Name: b.out.Part, Known: b.currentParts()}
		}
		return nil
	}
	return fmt.Errorf("output: unknown output kind %d", b.out.Kind)
}

// currentParts lists the parts that have a current (every kind but coupling).
func (b *builder) currentParts() []string {
	var names []string
	for i := range b.c.Parts {
		if b.c.Parts[i].Kind != netlist.Coupling {
			names = append(names, b.c.Parts[i].Name)
		}
	}
	return names
}

func (b *builder) checkControl(p *netlist.Part) error {
	ctl, ok := b.c.Part(p.Control)
	if !ok || ctl.Kind == netlist.Coupling {
		return partLookupError(p.Name, &LookupError{What: "part", Name: p.Control, Known: b.currentParts(),
			Why: fmt.Sprintf("sense=%q names no part with a current", p.Control)})
	}
	return nil
}

func (b *builder) system() *System {
	sys := &System{
		Unknowns: b.unknowns,
		G:        mat.NewDense(max(b.n, 1), max(b.n, 1), padded(b.g, b.n)),
		C:        mat.NewDense(max(b.n, 1), max(b.n, 1), padded(b.cap, b.n)),
		B:        b.bvec,
		L:        b.lvec,
		Input:    b.in,
		Output:   b.out,
		idx: index{
			nodeIndex:   b.nodes,
			branchIndex: b.branches,
			nodeNames:   b.names,
			edges:       b.edges,
		},
	}
	sys.SourceAmplitude = 1
	if b.source != nil {
		sys.SourceAmplitude = complex(b.source.Value, 0) * cmplx.Exp(complex(0, b.source.PhaseRad))
	}
	return sys
}

// padded returns data, or a 1×1 zero matrix for an empty system (gonum
// has no 0×0 Dense).
func padded(data []float64, n int) []float64 {
	if n == 0 {
		return []float64{0}
	}
	return data
}

func (b *builder) addG(r, c int, v float64) {
	if r >= 0 && c >= 0 {
		b.g[r*b.n+c] += v
	}
}

func (b *builder) addC(r, c int, v float64) {
	if r >= 0 && c >= 0 {
		b.cap[r*b.n+c] += v
	}
}

func (b *builder) addB(r int, v float64) {
	if r >= 0 {
		b.bvec[r] += v
	}
}

func (b *builder) addL(r int, v float64) {
	if r >= 0 {
		b.lvec[r] += v
	}
}

// isInput reports whether p is the excitation.
func (b *builder) isInput(p *netlist.Part) bool { return b.source != nil && p.Name == b.source.Name }

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
