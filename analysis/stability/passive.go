package stability

import (
	"nodal/mna"
	"nodal/netlist"
)

// This file proves the stability of a circuit made only of passive parts
// without computing a single natural frequency, for circuits too large
// for the dense eigenvalue problem.
//
// Closed half-plane (the energy argument; Desoer and Kuh, Basic Circuit
// Theory, McGraw-Hill 1969, the chapters on energy and natural
// frequencies, from memory; Tellegen's theorem, Philips Res. Rep. 7
// (1952)). Let s be a natural frequency and x ≠ 0 its mode, every
// independent source zeroed (a voltage source a short, a current source
// open). Tellegen's theorem over the branches gives
//
//	0 = Σ_R R·|i|² + s̄·Σ_C C·|v|² + s·iᴴ·L·i
//
// (L the inductance matrix of the coupled inductors, positive
// semidefinite: netlist.CouplingProblem), whose real part is
// Σ_R R·|i|² + Re s·(Σ_C C·|v|² + iᴴLi) = 0. With R, C, L > 0 (mna refuses
// any other value), Re s > 0 would make every resistor current, capacitor
// voltage and inductor flux zero, hence every branch voltage zero, hence
// (the sources' currents then follow by KCL) x a mode at every s: a
// singular pencil. So every natural frequency has Re s ≤ 0.
//
// No root on the jω axis with ω ≠ 0. At s = jω the same sum gives
// Σ_R R·|i|² = 0: in such a mode every resistor carries neither current
// nor voltage. axisFree propagates what must then vanish (a capacitor
// or a single inductor with zero voltage has zero current and the other
// way round, as ω ≠ 0; a set of coupled inductors with zero currents has
// zero voltages; KCL at a node whose other branch currents vanish; node
// potentials along zero branch voltages from Ground). When every node
// potential and every branch current is forced to zero, no such mode
// exists. The propagation is sufficient, not necessary: a lossless LC
// part it cannot reach leaves the question open ("passive").
//
// s = 0 exactly (Y(0) singular), by structure: at s = 0 a capacitor and a
// current source are open, an inductor and a voltage source a short. Y(0)
// is singular exactly when some node has no path to Ground through
// resistors, inductors and voltage sources (a capacitor cut-set: its
// charge is free) or the inductors and voltage sources close a loop (a
// loop current is free); otherwise the nodes merged along the shorts
// carry a grounded conductance Laplacian, which is positive definite
// (common practice of network graph theory).

// passiveVerdict is what the passive certificate proves of one circuit.
type passiveVerdict struct {
	// zero: s = 0 is a natural frequency (a capacitor cut-set or an
	// inductor loop, by structure).
	zero bool
	// axisFree: no natural frequency jω with ω ≠ 0 (every unknown is
	// forced to zero by axisFree).
	axisFree bool
	// singular: voltage sources alone close a loop, det(G + sC) ≡ 0; the
	// verdict proves nothing then.
	singular bool
}

// strict reports whether the verdict proves every natural frequency in
// the open left half-plane.
func (v passiveVerdict) strict() bool { return !v.zero && v.axisFree && !v.singular }

// passiveRole is how a part enters the certificate.
type passiveRole int

const (
	roleNone      passiveRole = iota // no branch (a coupling)
	roleResistor                     // R > 0
	roleCapacitor                    // C > 0
	roleInductor                     // L > 0, perhaps coupled
	roleShort                        // a zeroed voltage source (or a broken voltage-output gain element)
	roleOpen                         // a zeroed current source (or a broken current-output gain element)
)

// passiveRoles returns the role of every part of c, or ok false when some
// part is active: a gain element whose control is still in m (gains), or
// an op-amp. A gain element whose control m has broken (absent from
// gains) is its zeroed output: a short for a voltage output, an open for
// a current output.
//
// With a block mask in (in[k]: unknown k is in the block), the roles are
// those of the block's own network (see blockCertificate): a part whose
// branch current is outside the block is open, and a gain element is its
// zeroed output (its control terms lie outside the block).
func passiveRoles(c *netlist.Circuit, m *mna.Matrices, gains map[string]bool, in []bool) ([]passiveRole, bool) {
	roles := make([]passiveRole, len(c.Parts))
	for i := range c.Parts {
		p := &c.Parts[i]
		if in != nil {
			if k := m.BranchIndex(p.Name); k >= 0 && !in[k] {
				roles[i] = roleOpen
				continue
			}
		}
		r, ok := kindRoles[p.Kind]
		if !ok || (r.gain && in == nil && gains[p.Name]) {
			return nil, false
		}
		roles[i] = r.role
	}
	return roles, true
}

// kindRoles is the role of each kind that can be passive; gain marks the
// gain elements, passive only with their control broken. An op-amp is
// never passive here.
var kindRoles = map[netlist.Kind]struct {
	role passiveRole
	gain bool
}{
	netlist.Resistor: {roleResistor, false}, netlist.Capacitor: {roleCapacitor, false},
	netlist.Inductor: {roleInductor, false}, netlist.Coupling: {roleNone, false},
	netlist.VoltageSource: {roleShort, false}, netlist.CurrentSource: {roleOpen, false},
	netlist.VCVS: {roleShort, true}, netlist.CCVS: {roleShort, true},
	netlist.VCCS: {roleOpen, true}, netlist.CCCS: {roleOpen, true},
}

// passiveCertificate returns the verdict on c, whose matrices are m, or
// ok false when a part of c is active (see passiveRoles).
func passiveCertificate(c *netlist.Circuit, m *mna.Matrices) (passiveVerdict, bool) {
	gains := map[string]bool{}
	for _, g := range m.GainParts() {
		gains[g] = true
	}
	roles, ok := passiveRoles(c, m, gains, nil)
	if !ok {
		return passiveVerdict{}, false
	}
	return newPartGraph(c, m, nil).verdict(c, roles), true
}

// blockCertificate returns the verdict on one principal diagonal block of
// m that holds no gain entry (passivePrincipal), in[k] marking its
// unknowns. Its sub-pencil is the MNA pencil of the block's own network:
// every node outside the block grounded, every branch current outside it
// zero (that part open, its law dropped with its row), each gain element
// its zeroed output; the certificate above applies to that network
// (whose Ground is every outside node).
func blockCertificate(c *netlist.Circuit, m *mna.Matrices, in []bool) (passiveVerdict, bool) {
	roles, ok := passiveRoles(c, m, nil, in)
	if !ok {
		return passiveVerdict{}, false
	}
	return newPartGraph(c, m, in).verdict(c, roles), true
}

// verdict runs the certificate on the graph.
func (g *partGraph) verdict(c *netlist.Circuit, roles []passiveRole) passiveVerdict {
	zero, singular := g.zeroAtDC(roles)
	return passiveVerdict{zero: zero, singular: singular, axisFree: g.axisFree(c, roles)}
}

// partGraph is the circuit as a graph: nodes by index (Ground 0), each
// two-terminal part an edge.
type partGraph struct {
	nodes    int
	ends     [][2]int // ends[i]: the nodes of part i (−1 for a part without two terminals)
	incident [][]int  // incident[v]: the parts with a terminal at node v
}

// newPartGraph returns the graph of c; with a block mask in, every node
// whose voltage is outside the block is Ground.
func newPartGraph(c *netlist.Circuit, m *mna.Matrices, in []bool) *partGraph {
	at := make(map[string]int, len(c.Nodes)+1)
	at[netlist.Ground] = 0
	count := 1
	for _, n := range c.Nodes {
		if _, ok := at[n]; ok {
			continue
		}
		if k := m.NodeIndex(n); in != nil && (k < 0 || !in[k]) {
			at[n] = 0
			continue
		}
		at[n] = count
		count++
	}
	g := &partGraph{ends: make([][2]int, len(c.Parts))}
	for i := range c.Parts {
		p := &c.Parts[i]
		g.ends[i] = [2]int{-1, -1}
		if len(p.Nodes) != 2 {
			continue
		}
		for t, name := range p.Nodes {
			v, ok := at[name]
			if !ok { // not in c.Nodes (a circuit built by hand)
				v = count
				at[name] = v
				count++
			}
			g.ends[i][t] = v
		}
	}
	g.nodes = count
	g.incident = make([][]int, g.nodes)
	for i, e := range g.ends {
		if e[0] >= 0 {
			g.incident[e[0]] = append(g.incident[e[0]], i)
			if e[1] != e[0] {
				g.incident[e[1]] = append(g.incident[e[1]], i)
			}
		}
	}
	return g
}

// zeroAtDC reports whether s = 0 is a natural frequency: a node with no
// path to Ground through resistors, inductors and shorts, or a loop of
// inductors and shorts (union-find, common practice); singular reports a
// loop of shorts alone (det(G + sC) ≡ 0).
func (g *partGraph) zeroAtDC(roles []passiveRole) (zero, singular bool) {
	parent := make([]int, g.nodes)
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(v int) int {
		for parent[v] != v {
			parent[v] = parent[parent[v]]
			v = parent[v]
		}
		return v
	}
	// Voltage sources first, then inductors: a cycle the inductors close
	// is an inductor loop. A cycle of voltage sources alone makes the
	// pencil singular (mna's structure check refuses it; here it is only
	// not taken for a root at s = 0).
	for _, want := range []passiveRole{roleShort, roleInductor} {
		for i, e := range g.ends {
			if e[0] < 0 || roles[i] != want {
				continue
			}
			a, b := find(e[0]), find(e[1])
			if a == b {
				return want == roleInductor, want == roleShort
			}
			parent[a] = b
		}
	}
	for i, e := range g.ends {
		if e[0] >= 0 && roles[i] == roleResistor {
			parent[find(e[0])] = find(e[1])
		}
	}
	root := find(0)
	for v := 1; v < g.nodes; v++ {
		if find(v) != root {
			return true, false
		}
	}
	return false, false
}

// axisFree reports whether the propagation described at the top of this
// file forces every node potential and every branch current of a mode at
// s = jω, ω ≠ 0, to zero. Each fact is set once and each part and node is
// revisited only when one of its facts changes: O(parts + nodes).
func (g *partGraph) axisFree(c *netlist.Circuit, roles []passiveRole) bool {
	np := len(c.Parts)
	pot := make([]bool, g.nodes) // node potential is zero
	cur := make([]bool, np)      // part current is zero
	vol := make([]bool, np)      // part voltage is zero
	open := make([]int, g.nodes) // incident parts whose current is not known zero
	for v, ps := range g.incident {
		open[v] = len(ps)
	}
	// Coupled sets: the inductors joined by couplings (set index per
	// part, −1 for none), with the count of currents not yet known zero.
	set := make([]int, np)
	for i := range set {
		set[i] = -1
	}
	index := make(map[string]int, np)
	for i := range c.Parts {
		index[c.Parts[i].Name] = i
	}
	var members [][]int
	var join func(a, b int)
	join = func(a, b int) {
		sa, sb := set[a], set[b]
		switch {
		case sa < 0 && sb < 0:
			set[a], set[b] = len(members), len(members)
			members = append(members, []int{a, b})
		case sa < 0:
			set[a] = sb
			members[sb] = append(members[sb], a)
		case sb < 0:
			set[b] = sa
			members[sa] = append(members[sa], b)
		case sa != sb:
			for _, p := range members[sb] {
				set[p] = sa
			}
			members[sa] = append(members[sa], members[sb]...)
			members[sb] = nil
		}
	}
	for i := range c.Parts {
		if p := &c.Parts[i]; p.Kind == netlist.Coupling {
			a, okA := index[p.Coupled[0]]
			b, okB := index[p.Coupled[1]]
			// An inductor opened in a block (its current outside it) is no
			// longer coupled: its current is zero and its voltage free.
			if okA && okB && a != b && roles[a] == roleInductor && roles[b] == roleInductor {
				join(a, b)
			}
		}
	}
	pending := make([]int, len(members))
	for s, ms := range members {
		pending[s] = len(ms)
	}

	type fact struct {
		kind int // 0 node potential, 1 part current, 2 part voltage
		i    int
	}
	var queue []fact
	setPot := func(v int) {
		if v >= 0 && !pot[v] {
			pot[v] = true
			queue = append(queue, fact{0, v})
		}
	}
	setCur := func(i int) {
		if !cur[i] {
			cur[i] = true
			queue = append(queue, fact{1, i})
		}
	}
	setVol := func(i int) {
		if !vol[i] {
			vol[i] = true
			queue = append(queue, fact{2, i})
		}
	}
	// The branch laws of part i once one of its facts is known.
	law := func(i int) {
		e := g.ends[i]
		if e[0] < 0 {
			return
		}
		if pot[e[0]] && pot[e[1]] {
			setVol(i)
		}
		if vol[i] {
			if pot[e[0]] {
				setPot(e[1])
			}
			if pot[e[1]] {
				setPot(e[0])
			}
		}
		switch roles[i] {
		case roleCapacitor:
			if vol[i] {
				setCur(i)
			}
			if cur[i] {
				setVol(i)
			}
		case roleInductor:
			if set[i] < 0 {
				if vol[i] {
					setCur(i)
				}
				if cur[i] {
					setVol(i)
				}
			}
		}
	}
	// KCL at node v (not Ground, whose law is the sum of the others):
	// the last current not known zero is zero.
	kcl := func(v int) {
		if v <= 0 || open[v] != 1 {
			return
		}
		for _, p := range g.incident[v] {
			if !cur[p] {
				setCur(p)
			}
		}
	}
	setPot(0)
	for v := range open {
		kcl(v)
	}
	for i := range c.Parts {
		switch roles[i] {
		case roleResistor:
			setCur(i)
			setVol(i)
		case roleShort:
			setVol(i)
		case roleOpen:
			setCur(i)
		case roleNone:
			cur[i], vol[i] = true, true // no branch
		}
	}
	for len(queue) > 0 {
		f := queue[0]
		queue = queue[1:]
		switch f.kind {
		case 0:
			for _, i := range g.incident[f.i] {
				law(i)
			}
		case 1:
			law(f.i)
			if s := set[f.i]; s >= 0 {
				if pending[s]--; pending[s] == 0 {
					for _, p := range members[s] {
						setVol(p)
					}
				}
			}
			if e := g.ends[f.i]; e[0] >= 0 {
				open[e[0]]--
				kcl(e[0])
				if e[1] != e[0] {
					open[e[1]]--
					kcl(e[1])
				}
			}
		case 2:
			law(f.i)
		}
	}
	for _, ok := range pot {
		if !ok {
			return false
		}
	}
	for _, ok := range cur {
		if !ok {
			return false
		}
	}
	return true
}
