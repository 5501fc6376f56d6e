package mna

import (
	"fmt"

	"nodal/netlist"
)

// A probe says where a signal enters the circuit (an Excitation) and where
// it is read (an Observation). Resolve checks the names of both against a
// circuit; Matrices.Excite turns an excitation into a right-hand side (and,
// for the kinds that change stamps, a modified copy of the matrices) and
// Excited.Observe turns an observation into an output row. The numeric and
// the symbolic engines both resolve through Resolve, so the same mistake
// gives the same message.

// ExcitationKind says what an Excitation drives.
type ExcitationKind int

const (
	// Drive sets the independent source Source to a unit amplitude (phase
	// 0) and every other independent source to zero (voltage sources
	// shorted, current sources opened). Source "" means the circuit's
	// only source.
	Drive ExcitationKind = iota
	// Injection pushes a unit test current (1 A) into node Inject and takes
	// it back out of node Ref ("" means Ground), every independent source
	// zeroed.
	Injection
	// SourceTest removes the independent source Source ("" means the
	// circuit's only source) and puts a unit test current source in its
	// place, pushing 1 A out of its first terminal into the circuit and
	// back in at its second; every other independent source is zeroed.
	// With the ExcitationVoltage observation this is the impedance seen
	// at the source's terminals.
	SourceTest
	// BrokenControl breaks the control of the gain element Part (a
	// controlled source, or an opamp with a finite gain: a0 or gbw set) and
	// drives the element as if its control quantity were a unit test
	// signal t: its output becomes k·t, k its gain (for an opamp the
	// output voltage behind rout is A(s)·t). Every independent source is
	// zeroed. With the ControlReturn observation the transfer is r/t, the
	// control quantity r that the circuit returns, so Bode's return ratio
	// (the loop gain around that element) is T(s) = −r/t.
	BrokenControl
)

// Excitation names the input u of a probe (see ExcitationKind).
//
// For compatibility a Drive excitation with Inject set means Injection.
type Excitation struct {
	Kind   ExcitationKind
	Source string // Drive, SourceTest: the source's hierarchical name
	Inject string // Injection: the node the test current enters
	Ref    string // Injection: the node it leaves by; "" means Ground
	Part   string // BrokenControl: the gain element
}

// ObservationKind says what an Observation reads.
type ObservationKind int

const (
	// NodeVoltage observes v(Node) − v(Ref): one node against Ground, or
	// the difference of two nodes.
	NodeVoltage ObservationKind = iota
	// PartCurrent observes the current through a part, flowing into its
	// first terminal and out of its second (for an opamp: the current its
	// output pushes into the output node).
	PartCurrent
	// SourceCurrent observes the current an independent source Part
	// delivers: out of its first terminal into the circuit, −i(PART).
	SourceCurrent
	// ExcitationVoltage observes the voltage across the test source of an
	// Injection or SourceTest excitation (first terminal minus second), so
	// that the transfer is an impedance in Ω. Resolve turns it into a
	// NodeVoltage.
	ExcitationVoltage
	// ControlReturn observes the control quantity of the gain element
	// broken by a BrokenControl excitation (Part "" means that element):
	// v(c) − v(d) of a v(c, d) control, v(+) − v(−) of an opamp, the
	// current of an i(PART) control. Resolve turns it into a NodeVoltage or
	// a PartCurrent.
	ControlReturn
)

// Observation names the observed quantity y of a probe.
type Observation struct {
	Kind ObservationKind
	Node string // NodeVoltage: the node (Ground allowed only as Ref)
	Ref  string // NodeVoltage: the reference node; "" means Ground
	Part string // PartCurrent, SourceCurrent, ControlReturn: the part
}

// Input is the former name of Excitation.
type Input = Excitation

// Output is the former name of Observation.
type Output = Observation

// OutputKind is the former name of ObservationKind.
type OutputKind = ObservationKind

// Probe is one excitation and one observation: the transfer y/u.
type Probe struct {
	Ex Excitation
	Ob Observation
}

// SourceImpedance is the probe of the impedance (Ω) seen by the source at
// its terminals, looking into the circuit with the source removed and
// every other independent source zeroed. source "" means the only source.
func SourceImpedance(source string) Probe {
	return Probe{Excitation{Kind: SourceTest, Source: source}, Observation{Kind: ExcitationVoltage}}
}

// NodeImpedance is the probe of the impedance (Ω) between node and ref (""
// means Ground) with every independent source zeroed: the Thévenin
// impedance seen there.
func NodeImpedance(node, ref string) Probe {
	return Probe{Excitation{Kind: Injection, Inject: node, Ref: ref}, Observation{Kind: ExcitationVoltage}}
}

// ReturnRatio is the probe r/t of the gain element part with its control
// broken (BrokenControl, ControlReturn); the loop gain is T = −r/t.
func ReturnRatio(part string) Probe {
	return Probe{Excitation{Kind: BrokenControl, Part: part}, Observation{Kind: ControlReturn}}
}

// circuitNodes lists the nodes of c other than Ground in row order: the
// circuit's nodes, then the terminals and sense nodes of its parts.
func circuitNodes(c *netlist.Circuit) []string {
	seen := map[string]bool{}
	var names []string
	add := func(n string) {
		if isGround(n) || n == "" || seen[n] {
			return
		}
		seen[n] = true
		names = append(names, n)
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
	return names
}

// names is the circuit's name lists for resolving probes.
type names struct {
	c       *netlist.Circuit
	nodes   []string // without Ground
	sources []string
}

func newNames(c *netlist.Circuit) names {
	nm := names{c: c, nodes: circuitNodes(c)}
	for i := range c.Parts {
		if k := c.Parts[i].Kind; k == netlist.VoltageSource || k == netlist.CurrentSource {
			nm.sources = append(nm.sources, c.Parts[i].Name)
		}
	}
	return nm
}

func (nm names) withGround() []string { return append([]string{netlist.Ground}, nm.nodes...) }

func (nm names) hasNode(n string) bool {
	if isGround(n) {
		return true
	}
	for _, m := range nm.nodes {
		if m == n {
			return true
		}
	}
	return false
}

func (nm names) node(n string) error {
	if !nm.hasNode(n) {
		return &LookupError{What: "node", Name: n, Known: nm.withGround()}
	}
	return nil
}

// source resolves a source name, "" meaning the only one.
func (nm names) source(name string) (*netlist.Part, error) {
	if name == "" {
		if len(nm.sources) != 1 {
			why := "the circuit has several independent sources; name the input"
			if len(nm.sources) == 0 {
				why = "the circuit has no independent source; inject a test current into a node instead"
			}
			return nil, &LookupError{What: "source", Known: nm.sources, Why: why}
		}
		name = nm.sources[0]
	}
	p, ok := nm.c.Part(name)
	if !ok || (p.Kind != netlist.VoltageSource && p.Kind != netlist.CurrentSource) {
		return nil, &LookupError{What: "source", Name: name, Known: nm.sources}
	}
	return p, nil
}

// currentParts lists the parts that have a current (every kind but coupling).
func (nm names) currentParts() []string {
	var out []string
	for i := range nm.c.Parts {
		if nm.c.Parts[i].Kind != netlist.Coupling {
			out = append(out, nm.c.Parts[i].Name)
		}
	}
	return out
}

// gainParts lists the parts whose control can be broken.
func (nm names) gainParts() []string {
	var out []string
	for i := range nm.c.Parts {
		if breakable(&nm.c.Parts[i]) {
			out = append(out, nm.c.Parts[i].Name)
		}
	}
	return out
}

// breakable reports whether p is a gain element with a finite gain.
func breakable(p *netlist.Part) bool {
	switch p.Kind {
	case netlist.VCVS, netlist.VCCS, netlist.CCVS, netlist.CCCS:
		return true
	case netlist.OpAmp:
		return p.A0 > 0 || p.GBWHz > 0
	}
	return false
}

// Resolve checks the names of a probe against c and returns it completed:
// the default source named, Ref "" replaced by Ground, ExcitationVoltage
// and ControlReturn turned into the node voltage or part current they
// read, a legacy Inject turned into Kind Injection. It is the one place
// where probe names are checked, for the numeric and the symbolic engine.
//
// Errors: *LookupError (naming the closest existing name as a hint) for a
// node, source or part the circuit does not have, or a probe that makes
// no sense (injecting into Ground, observing Ground against itself).
func Resolve(c *netlist.Circuit, ex Excitation, ob Observation) (Excitation, Observation, error) {
	nm := newNames(c)
	ex, err := nm.excitation(ex)
	if err != nil {
		return ex, ob, err
	}
	ob, err = nm.observation(ex, ob)
	return ex, ob, err
}

func (nm names) excitation(ex Excitation) (Excitation, error) {
	if ex.Kind == Drive && ex.Inject != "" {
		if ex.Source != "" {
			return ex, fmt.Errorf("input: give either a source (%q) or a node to inject into (%q), not both", ex.Source, ex.Inject)
		}
		ex.Kind = Injection
	}
	switch ex.Kind {
	case Drive, SourceTest:
		p, err := nm.source(ex.Source)
		if err != nil {
			return ex, err
		}
		ex.Source = p.Name
	case Injection:
		if isGround(ex.Inject) || !nm.hasNode(ex.Inject) {
			return ex, &LookupError{What: "node", Name: ex.Inject, Known: nm.nodes,
				Why: fmt.Sprintf("cannot inject a test current into node %q", ex.Inject)}
		}
		if ex.Ref == "" {
			ex.Ref = netlist.Ground
		}
		if err := nm.node(ex.Ref); err != nil {
			return ex, err
		}
		if ex.Ref == ex.Inject {
			return ex, fmt.Errorf("input: the test current enters and leaves node %q", ex.Inject)
		}
	case BrokenControl:
		p, ok := nm.c.Part(ex.Part)
		if !ok || !breakable(p) {
			return ex, &LookupError{What: "gain element", Name: ex.Part, Known: nm.gainParts()}
		}
	default:
		return ex, fmt.Errorf("input: unknown excitation kind %d", ex.Kind)
	}
	return ex, nil
}

func (nm names) observation(ex Excitation, ob Observation) (Observation, error) {
	switch ob.Kind {
	case ExcitationVoltage:
		switch ex.Kind {
		case Injection:
			return Observation{Kind: NodeVoltage, Node: ex.Inject, Ref: ex.Ref}, nil
		case SourceTest:
			p, _ := nm.c.Part(ex.Source)
			if len(p.Nodes) != 2 {
				return ob, &PartError{Part: p.Name, Msg: fmt.Sprintf("a %s has 2 terminals, not %d", p.Kind, len(p.Nodes))}
			}
			return Observation{Kind: NodeVoltage, Node: p.Nodes[0], Ref: p.Nodes[1]}, nil
		}
		return ob, fmt.Errorf("output: the voltage across the test source needs a test current input, not a %s", ex.Kind)
	case ControlReturn:
		if ob.Part == "" {
			ob.Part = ex.Part
		}
		p, ok := nm.c.Part(ob.Part)
		if !ok || !breakable(p) {
			return ob, &LookupError{What: "gain element", Name: ob.Part, Known: nm.gainParts()}
		}
		switch p.Kind {
		case netlist.VCVS, netlist.VCCS:
			if len(p.Sense) != 2 {
				return ob, &PartError{Part: p.Name, Msg: "needs the two nodes of its control v(c, d)"}
			}
			return nm.observation(ex, Observation{Kind: NodeVoltage, Node: p.Sense[0], Ref: p.Sense[1]})
		case netlist.OpAmp:
			if len(p.Nodes) != 3 {
				return ob, &PartError{Part: p.Name, Msg: fmt.Sprintf("an opamp has 3 terminals, not %d", len(p.Nodes))}
			}
			return nm.observation(ex, Observation{Kind: NodeVoltage, Node: p.Nodes[0], Ref: p.Nodes[1]})
		}
		return nm.observation(ex, Observation{Kind: PartCurrent, Part: p.Control})
	case NodeVoltage:
		if ob.Ref == "" {
			ob.Ref = netlist.Ground
		}
		for _, n := range []string{ob.Node, ob.Ref} {
			if err := nm.node(n); err != nil {
				return ob, err
			}
		}
		if isGround(ob.Node) && isGround(ob.Ref) {
			return ob, &LookupError{What: "node", Name: ob.Node, Known: nm.withGround(),
				Why: "the output node is the reference node"}
		}
		return ob, nil
	case PartCurrent:
		p, ok := nm.c.Part(ob.Part)
		if !ok && ob.Part != "" && nm.node(ob.Part) == nil {
			return ob, &LookupError{What: "part", Name: ob.Part, Known: nm.currentParts(),
				Why: fmt.Sprintf("%q is a node, not a part: i(PART) is the current through a part, and the voltage of the node is v(%s)", ob.Part, ob.Part)}
		}
		if !ok || p.Kind == netlist.Coupling {
			return ob, &LookupError{What: "part", Name: ob.Part, Known: nm.currentParts()}
		}
		return ob, nil
	case SourceCurrent:
		p, err := nm.source(ob.Part)
		if err != nil {
			return ob, err
		}
		ob.Part = p.Name
		return ob, nil
	}
	return ob, fmt.Errorf("output: unknown output kind %d", ob.Kind)
}

// String names the excitation kind.
func (k ExcitationKind) String() string {
	switch k {
	case Drive:
		return "source drive"
	case Injection:
		return "current injection"
	case SourceTest:
		return "test source"
	case BrokenControl:
		return "broken control"
	}
	return fmt.Sprintf("excitation kind %d", int(k))
}
