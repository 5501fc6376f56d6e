package mna

import (
	"fmt"
	"math"

	"nodal/netlist"
)

// edgeKind classifies a conducting branch for the structure checks.
type edgeKind int

const (
	edgeResistive  edgeKind = iota // resistor
	edgeCapacitive                 // capacitor: open at s = 0
	edgeInductive                  // inductor: a voltage constraint at s = 0
	edgeVoltage                    // voltage sources (controlled too), opamp output (to Ground)
	edgeCurrent                    // current sources (controlled too)
)

// edge is one branch between node rows a and b (-1 is Ground); branch is
// the row of its branch current or -1.
type edge struct {
	a, b   int
	part   string
	kind   edgeKind
	branch int
}

// terminals returns the node rows of p's terminals after checking their
// count, in the builder's working memory: valid until the next call.
func (b *builder) terminals(p *netlist.Part, want int) ([]int, error) {
	if len(p.Nodes) != want {
		return nil, &PartError{Part: p.Name, Msg: fmt.Sprintf("a %s has %d terminals, not %d", p.Kind, want, len(p.Nodes))}
	}
	rows := b.term[:0]
	if want > len(b.term) {
		rows = make([]int, 0, want)
	}
	rows = rows[:want]
	for i, n := range p.Nodes {
		rows[i] = b.node(n)
	}
	return rows, nil
}

// sense returns the node rows of the pair (c, d) of a v(c, d) control.
func (b *builder) sense(p *netlist.Part) (int, int, error) {
	for _, n := range p.Sense {
		if !b.hasNode(n) {
			return 0, 0, partLookupError(p.Name, &LookupError{What: "node", Name: n, Known: b.nodeList(),
				Why: fmt.Sprintf("the node %q of its control v( ) does not exist", n)})
		}
	}
	return b.node(p.Sense[0]), b.node(p.Sense[1]), nil
}

// stamp dispatches on the part kind.
func (b *builder) stamp(p *netlist.Part) error {
	switch p.Kind {
	case netlist.Resistor:
		return b.stampResistor(p)
	case netlist.Capacitor:
		return b.stampCapacitor(p)
	case netlist.Inductor:
		return b.stampInductor(p)
	case netlist.VoltageSource:
		return b.stampVSource(p)
	case netlist.CurrentSource:
		return b.stampISource(p)
	case netlist.VCVS:
		return b.stampVCVS(p)
	case netlist.VCCS:
		return b.stampVCCS(p)
	case netlist.CCVS:
		return b.stampCCVS(p)
	case netlist.CCCS:
		return b.stampCCCS(p)
	case netlist.OpAmp:
		return b.stampOpAmp(p)
	case netlist.Coupling:
		return nil // after every inductor has its branch: stampCouplings
	}
	return &PartError{Part: p.Name, Msg: fmt.Sprintf("unknown part kind %v", p.Kind)}
}

// twoTerminal checks the terminals of a two-terminal part, records its edge
// and, when it has a branch current k, stamps the current into the KCL
// rows: +i leaves node a, −i leaves node b. It returns a, b and k (-1 when
// the part has no branch).
func (b *builder) twoTerminal(p *netlist.Part, kind edgeKind) (int, int, int, error) {
	t, err := b.terminals(p, 2)
	if err != nil {
		return 0, 0, 0, err
	}
	k, ok := b.branches[p.Name]
	if !ok {
		k = -1
	}
	if k >= 0 {
		b.addG(t[0], k, 1)
		b.addG(t[1], k, -1)
	}
	b.edges = append(b.edges, edge{a: t[0], b: t[1], part: p.Name, kind: kind, branch: k})
	return t[0], t[1], k, nil
}

// branchVoltage stamps v(a) − v(b) into row k of G.
func (b *builder) branchVoltage(k, a, nb int) {
	b.addG(k, a, 1)
	b.addG(k, nb, -1)
}

// stampResistor: conductance 1/R, or with a branch current
// v(a) − v(b) − R·i = 0.
func (b *builder) stampResistor(p *netlist.Part) error {
	if err := finitePositive(p, "resistance", p.Value); err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeResistive)
	if err != nil {
		return err
	}
	if k >= 0 {
		b.branchVoltage(k, a, nb)
		b.addG(k, k, -p.Value)
		return nil
	}
	g := 1 / p.Value
	b.addG(a, a, g)
	b.addG(nb, nb, g)
	b.addG(a, nb, -g)
	b.addG(nb, a, -g)
	return nil
}

// stampCapacitor: admittance sC, or with a branch current
// sC·(v(a) − v(b)) − i = 0.
func (b *builder) stampCapacitor(p *netlist.Part) error {
	if err := finitePositive(p, "capacitance", p.Value); err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeCapacitive)
	if err != nil {
		return err
	}
	if k >= 0 {
		b.addC(k, a, p.Value)
		b.addC(k, nb, -p.Value)
		b.addG(k, k, -1)
		return nil
	}
	b.addC(a, a, p.Value)
	b.addC(nb, nb, p.Value)
	b.addC(a, nb, -p.Value)
	b.addC(nb, a, -p.Value)
	return nil
}

// stampInductor: v(a) − v(b) − sL·i = 0 (mutual terms: stampCouplings).
func (b *builder) stampInductor(p *netlist.Part) error {
	if err := finitePositive(p, "inductance", p.Value); err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeInductive)
	if err != nil {
		return err
	}
	b.branchVoltage(k, a, nb)
	b.addC(k, k, -p.Value)
	return nil
}

// stampVSource: v(p) − v(n) = 0, a zeroed voltage source (a short); an
// excitation that drives it puts u on the right of row k.
func (b *builder) stampVSource(p *netlist.Part) error {
	if err := finite(p, "amplitude", p.Value); err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeVoltage)
	if err != nil {
		return err
	}
	b.branchVoltage(k, a, nb)
	return nil
}

// stampISource: a zeroed current source is open; with a branch current
// (flowing through the part from a to b) the row is i = 0. An excitation
// that drives it pushes u out of its first terminal into node a, returning
// through b (with a branch: the row becomes i = −u).
func (b *builder) stampISource(p *netlist.Part) error {
	if err := finite(p, "amplitude", p.Value); err != nil {
		return err
	}
	_, _, k, err := b.twoTerminal(p, edgeCurrent)
	if err != nil {
		return err
	}
	if k >= 0 {
		b.addG(k, k, 1)
	}
	return nil
}

// stampVCVS: v(p) − v(n) − A·(v(c) − v(d)) = 0.
func (b *builder) stampVCVS(p *netlist.Part) error {
	if err := finite(p, "gain", p.Value); err != nil {
		return err
	}
	c, d, err := b.sense(p)
	if err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeVoltage)
	if err != nil {
		return err
	}
	b.branchVoltage(k, a, nb)
	b.stampControl(p.Name, []int{k}, []float64{-p.Value}, []int{c, d}, []float64{1, -1})
	return nil
}

// stampVCCS: pushes a current gm·(v(c) − v(d)) into node a, returning
// through b; with a branch current (through the part from a to b) the row
// is i + gm·(v(c) − v(d)) = 0.
func (b *builder) stampVCCS(p *netlist.Part) error {
	if err := finite(p, "transconductance", p.Value); err != nil {
		return err
	}
	c, d, err := b.sense(p)
	if err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeCurrent)
	if err != nil {
		return err
	}
	if k >= 0 {
		b.addG(k, k, 1)
		b.stampControl(p.Name, []int{k}, []float64{p.Value}, []int{c, d}, []float64{1, -1})
		return nil
	}
	b.stampControl(p.Name, []int{a, nb}, []float64{-p.Value, p.Value}, []int{c, d}, []float64{1, -1})
	return nil
}

// stampCCVS: v(p) − v(n) − R·i(Control) = 0.
func (b *builder) stampCCVS(p *netlist.Part) error {
	if err := finite(p, "transresistance", p.Value); err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeVoltage)
	if err != nil {
		return err
	}
	b.branchVoltage(k, a, nb)
	b.stampControl(p.Name, []int{k}, []float64{-p.Value}, []int{b.branches[p.Control]}, []float64{1})
	return nil
}

// stampCCCS: pushes a current A·i(Control) into node a, returning through
// b; with a branch current (through the part from a to b) the row is
// i + A·i(Control) = 0.
func (b *builder) stampCCCS(p *netlist.Part) error {
	if err := finite(p, "gain", p.Value); err != nil {
		return err
	}
	a, nb, k, err := b.twoTerminal(p, edgeCurrent)
	if err != nil {
		return err
	}
	ctl := b.branches[p.Control]
	if k >= 0 {
		b.addG(k, k, 1)
		b.stampControl(p.Name, []int{k}, []float64{p.Value}, []int{ctl}, []float64{1})
		return nil
	}
	b.stampControl(p.Name, []int{a, nb}, []float64{-p.Value, p.Value}, []int{ctl}, []float64{1})
	return nil
}

// stampOpAmp stamps the output branch i (pushed into the output node) and
// the gain row
//
//	(1/A0 + s/ωt)·(v(out) + Rout·i) − (v(+) − v(−)) = 0
//
// where v(out) + Rout·i is the voltage behind the output resistance. A
// missing A0 drops 1/A0 (infinite DC gain), a missing gbw drops s/ωt (no
// pole); with neither the row is the nullor v(+) = v(−) with a free
// output current. With A0 and gbw this is the single pole A0/(1 + s·A0/ωt),
// with gbw alone the integrator ωt/s, ωt = 2π·GBWHz.
func (b *builder) stampOpAmp(p *netlist.Part) error {
	for _, v := range []struct {
		what string
		v    float64
	}{{"a0", p.A0}, {"gbw", p.GBWHz}, {"rout", p.Rout}} {
		if err := finite(p, v.what, v.v); err != nil {
			return err
		}
		if v.v < 0 {
			return &PartError{Part: p.Name, Msg: fmt.Sprintf("%s must be ≥ 0, not %g", v.what, v.v)}
		}
	}
	t, err := b.terminals(p, 3)
	if err != nil {
		return err
	}
	plus, minus, out := t[0], t[1], t[2]
	k := b.branches[p.Name]
	b.addG(out, k, -1)
	b.edges = append(b.edges, edge{a: out, b: -1, part: p.Name, kind: edgeVoltage, branch: k})
	var g0, c0 float64
	if p.A0 > 0 {
		g0 = 1 / p.A0
	}
	if p.GBWHz > 0 {
		c0 = 1 / (2 * math.Pi * p.GBWHz)
	}
	b.addG(k, out, g0)
	b.addG(k, k, g0*p.Rout)
	b.addC(k, out, c0)
	b.addC(k, k, c0*p.Rout)
	b.stampControl(p.Name, []int{k}, []float64{-1}, []int{plus, minus}, []float64{1, -1})
	return nil
}

// control records how a gain element's control quantity q = Σ sig[j]·x[cols[j]]
// enters its equations: row rows[i] holds the term w[i]·q (rows and cols
// −1 for Ground are skipped). Breaking the control removes these terms and
// puts −w[i]·t on the right of row rows[i].
type control struct {
	rows []int
	w    []float64
	cols []int
	sig  []float64
}

// stampControl stamps the control terms of a gain element and records them.
func (b *builder) stampControl(part string, rows []int, w []float64, cols []int, sig []float64) {
	for i, r := range rows {
		for j, c := range cols {
			b.addG(r, c, w[i]*sig[j])
		}
	}
	b.controls[part] = control{rows: rows, w: w, cols: cols, sig: sig}
}

// stampCouplings adds the mutual inductance M = K·√(L1·L2) of every
// coupling as −sM terms between the two inductor branch rows (dots on the
// first terminals: both currents entering the dots add flux). Two
// couplings of one pair are an error, and so is a set of couplings whose
// inductance matrix is not positive semidefinite (netlist.CouplingProblem:
// Elaborate reports it with a position, this catches drawn values).
func (b *builder) stampCouplings() error {
	for i := range b.c.Parts {
		p := &b.c.Parts[i]
		if p.Kind != netlist.Coupling {
			continue
		}
		if err := finite(p, "coupling factor", p.Value); err != nil {
			return err
		}
		if p.Value == 0 || math.Abs(p.Value) > 1 {
			return &PartError{Part: p.Name, Msg: fmt.Sprintf("coupling factor must satisfy 0 < |K| ≤ 1, not %g", p.Value)}
		}
		var ind [2]*netlist.Part
		for j, name := range p.Coupled {
			l, ok := b.c.Part(name)
			if !ok || l.Kind != netlist.Inductor {
				return &PartError{Part: p.Name, Msg: fmt.Sprintf("couples %q, which is not an inductor", name)}
			}
			ind[j] = l
		}
		if ind[0].Name == ind[1].Name {
			return &PartError{Part: p.Name, Msg: fmt.Sprintf("couples %q with itself", ind[0].Name)}
		}
		m := p.Value * math.Sqrt(ind[0].Value*ind[1].Value)
		k1, k2 := b.branches[ind[0].Name], b.branches[ind[1].Name]
		b.addC(k1, k2, -m)
		b.addC(k2, k1, -m)
	}
	if p, msg := netlist.CouplingProblem(b.c.Parts); p != nil {
		return &PartError{Part: p.Name, Msg: msg}
	}
	return nil
}
