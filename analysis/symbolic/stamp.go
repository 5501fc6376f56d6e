package symbolic

import (
	"fmt"
	"math"
	"math/big"
	"strconv"
	"strings"

	"nodal/mna"
	"nodal/netlist"
)

// LaplaceVar is the name of the Laplace variable s (rad/s) inside the
// polynomials before they are split into powers of s.
const LaplaceVar = "s"

// condPrefix marks the internal conductance symbol of a symbolic resistor.
// It cannot occur in a part name, so it never clashes.
const condPrefix = "\x00G:"

// system is the symbolic MNA system [Y B; L −F] of one circuit, input and
// output, with every entry a polynomial over the kept symbols and s.
//
// Invariants: len(m) == len(unknowns)+1 and every row has that length; row
// and column n (= len(unknowns)) are the border: m[i][n] = B[i],
// m[n][j] = L[j], m[n][n] = −F.
type system struct {
	unknowns []string
	m        [][]Poly
	// resistor maps the internal conductance symbol to the resistor's
	// symbol name.
	resistor map[string]string
	// values holds the nominal SI value of every kept symbol.
	values map[string]float64
	// kinds ranks symbols for display (see displayOrder).
	kinds  map[string]int
	input  mna.Input
	output mna.Output
}

// linForm is a linear form Σ coef[j]·x[j] + feed·u over the unknowns x and
// the input u.
type linForm struct {
	coef map[int]Poly
	feed Poly
}

func (f *linForm) add(j int, p Poly) {
	if j < 0 || p.IsZero() {
		return
	}
	f.coef[j] = f.coef[j].Add(p)
}

// builder stamps parts into a system.
type builder struct {
	c    *netlist.Circuit
	keep keepSet
	sys  *system
	node map[string]int // node name → unknown index; ground → −1
	br   map[string]int // part name → branch-current unknown index
	y    map[[2]int]Poly
	b    map[int]Poly
}

// keepSet decides which symbols stay symbolic.
type keepSet struct {
	all   bool
	names map[string]bool
	used  map[string]bool
}

func newKeepSet(keep []string) keepSet {
	k := keepSet{all: keep == nil, names: map[string]bool{}, used: map[string]bool{}}
	for _, n := range keep {
		k.names[strings.TrimSpace(n)] = true
	}
	return k
}

// kept reports whether symbol sym of part is kept symbolic. explicit
// symbols (NAME.wt) are kept only when named exactly.
func (k keepSet) kept(part, sym string, explicit bool) bool {
	if k.names[sym] {
		k.used[sym] = true
		return true
	}
	if explicit {
		return false
	}
	if k.names[part] {
		k.used[part] = true
		return true
	}
	return k.all
}

func isGround(n string) bool { return n == netlist.Ground || n == "0" }

// decimalRat returns the exact rational of the shortest decimal that
// round-trips to v.
func decimalRat(v float64) (*big.Rat, error) {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("value %v is not finite", v)
	}
	r, ok := new(big.Rat).SetString(strconv.FormatFloat(v, 'g', -1, 64))
	if !ok {
		return nil, fmt.Errorf("value %v has no rational form", v)
	}
	return r, nil
}

// Display ranks of symbol kinds: resistors, inductors, mutuals,
// capacitors, controlled-source gains, op-amp parameters.
const (
	rankR = iota
	rankL
	rankM
	rankC
	rankGain
	rankOpAmp
)

// symbol returns the polynomial of one value: a kept symbol or its
// rational value. buildSystem has rejected a part named like s.
func (bd *builder) symbol(part, sym string, v float64, rank int, explicit bool) (Poly, error) {
	if bd.keep.kept(part, sym, explicit) {
		bd.sys.values[sym] = v
		bd.sys.kinds[sym] = rank
		return Var(sym), nil
	}
	r, err := decimalRat(v)
	if err != nil {
		return Poly{}, fmt.Errorf("part %q: %w", part, err)
	}
	return Const(r), nil
}

// conductance returns 1/R: an internal symbol when R is kept, else the
// exact reciprocal of its rational value.
func (bd *builder) conductance(part, sym string, r float64) (Poly, error) {
	if r == 0 {
		return Poly{}, fmt.Errorf("part %q: resistance is zero", part)
	}
	p, err := bd.symbol(part, sym, r, rankR, false)
	if err != nil {
		return Poly{}, err
	}
	if c, numeric := p.IsConst(); numeric {
		return Const(c.Inv(c)), nil
	}
	g := condPrefix + sym
	bd.sys.resistor[g] = sym
	return Var(g), nil
}

func (bd *builder) stamp(i, j int, p Poly) {
	if i < 0 || j < 0 || p.IsZero() {
		return
	}
	k := [2]int{i, j}
	bd.y[k] = bd.y[k].Add(p)
}

// stampAdmittance stamps admittance y between nodes a and b.
func (bd *builder) stampAdmittance(a, b int, y Poly) {
	bd.stamp(a, a, y)
	bd.stamp(b, b, y)
	bd.stamp(a, b, y.Neg())
	bd.stamp(b, a, y.Neg())
}

// stampBranch stamps the incidence of branch current k flowing from node
// a through the part to node b: KCL rows and the branch voltage v_a − v_b
// in row k.
func (bd *builder) stampBranch(k, a, b int) {
	one := Int(1)
	bd.stamp(a, k, one)
	bd.stamp(b, k, one.Neg())
	bd.stamp(k, a, one)
	bd.stamp(k, b, one.Neg())
}

// buildSystem writes the symbolic MNA system of c for in and out.
func buildSystem(c *netlist.Circuit, in mna.Input, out mna.Output, keep []string) (*system, error) {
	bd := &builder{
		c:    c,
		keep: newKeepSet(keep),
		sys: &system{
			resistor: map[string]string{},
			values:   map[string]float64{},
			kinds:    map[string]int{},
		},
		node: map[string]int{},
		br:   map[string]int{},
		y:    map[[2]int]Poly{},
		b:    map[int]Poly{},
	}
	sys := bd.sys
	addNode := func(n string) {
		if isGround(n) {
			bd.node[n] = -1
			return
		}
		if _, ok := bd.node[n]; !ok {
			bd.node[n] = len(sys.unknowns)
			sys.unknowns = append(sys.unknowns, "v("+n+")")
		}
	}
	for _, n := range c.Nodes {
		addNode(n)
	}
	for _, p := range c.Parts {
		for _, n := range p.Nodes {
			addNode(n)
		}
		if p.Kind == netlist.VCVS || p.Kind == netlist.VCCS {
			for _, n := range p.Sense {
				if !bd.hasNode(n) {
					return nil, fmt.Errorf("part %q: the node %q of its control v( ) is not a node of the circuit", p.Name, n)
				}
			}
		}
	}
	for _, p := range c.Parts {
		if p.Name == LaplaceVar {
			return nil, fmt.Errorf("part %q: the name %q is reserved for the Laplace variable", p.Name, p.Name)
		}
		switch p.Kind {
		case netlist.Inductor, netlist.VoltageSource, netlist.VCVS, netlist.CCVS, netlist.OpAmp:
			bd.br[p.Name] = len(sys.unknowns)
			sys.unknowns = append(sys.unknowns, "i("+p.Name+")")
		}
	}
	if err := bd.resolveInput(in); err != nil {
		return nil, err
	}
	for i := range c.Parts {
		if err := bd.stampPart(&c.Parts[i]); err != nil {
			return nil, err
		}
	}
	lf, err := bd.outputForm(out)
	if err != nil {
		return nil, err
	}
	for k := range bd.keep.names {
		if k != "" && !bd.keep.used[k] {
			return nil, fmt.Errorf("keep: %q names no symbol of the circuit (symbols are part names, NAME.a0, NAME.rout, NAME.wt, NAME.M)", k)
		}
	}
	n := len(sys.unknowns)
	sys.m = make([][]Poly, n+1)
	for i := range sys.m {
		sys.m[i] = make([]Poly, n+1)
	}
	for k, p := range bd.y {
		sys.m[k[0]][k[1]] = p
	}
	for i, p := range bd.b {
		sys.m[i][n] = p
	}
	for j, p := range lf.coef {
		sys.m[n][j] = p
	}
	sys.m[n][n] = lf.feed.Neg()
	return sys, nil
}

// nodeIndex returns the unknown index of node n (−1 for ground).
func (bd *builder) nodeIndex(n string) int {
	if isGround(n) {
		return -1
	}
	return bd.node[n]
}

// hasNode reports whether n is ground or a node of the circuit.
func (bd *builder) hasNode(n string) bool {
	_, ok := bd.node[n]
	return ok || isGround(n)
}

// resolveInput writes the input vector B for an excitation resolved by
// mna.Resolve.
func (bd *builder) resolveInput(in mna.Input) error {
	bd.sys.input = in
	inject := func(a, b string) {
		if i := bd.nodeIndex(a); i >= 0 {
			bd.b[i] = bd.b[i].Add(Int(1))
		}
		if i := bd.nodeIndex(b); i >= 0 {
			bd.b[i] = bd.b[i].Sub(Int(1))
		}
	}
	switch in.Kind {
	case mna.Injection:
		inject(in.Inject, in.Ref)
		return nil
	case mna.Drive, mna.SourceTest:
		p, _ := bd.c.Part(in.Source)
		switch {
		case p.Kind == netlist.VoltageSource && in.Kind == mna.Drive:
			bd.b[bd.br[p.Name]] = Int(1)
		case p.Kind == netlist.VoltageSource:
			// The test current u leaves the + terminal: i = −u
			// (stampPart writes the row).
			bd.b[bd.br[p.Name]] = Int(-1)
		default:
			// The source pushes u into its first terminal's node.
			inject(p.Nodes[0], p.Nodes[1])
		}
		return nil
	}
	return fmt.Errorf("input: a %s is not supported symbolically", in.Kind)
}

func (bd *builder) nodes2(p *netlist.Part) (int, int, error) {
	if len(p.Nodes) != 2 {
		return 0, 0, fmt.Errorf("part %q: a %s needs 2 terminals, has %d", p.Name, p.Kind, len(p.Nodes))
	}
	return bd.nodeIndex(p.Nodes[0]), bd.nodeIndex(p.Nodes[1]), nil
}

// stampPart stamps one part.
func (bd *builder) stampPart(p *netlist.Part) error {
	s := Var(LaplaceVar)
	switch p.Kind {
	case netlist.Coupling:
		return bd.stampCoupling(p)
	case netlist.OpAmp:
		return bd.stampOpAmp(p)
	}
	a, b, err := bd.nodes2(p)
	if err != nil {
		return err
	}
	switch p.Kind {
	case netlist.Resistor:
		g, err := bd.conductance(p.Name, p.Name, p.Value)
		if err != nil {
			return err
		}
		bd.stampAdmittance(a, b, g)
	case netlist.Capacitor:
		cv, err := bd.symbol(p.Name, p.Name, p.Value, rankC, false)
		if err != nil {
			return err
		}
		bd.stampAdmittance(a, b, s.Mul(cv))
	case netlist.Inductor:
		lv, err := bd.symbol(p.Name, p.Name, p.Value, rankL, false)
		if err != nil {
			return err
		}
		k := bd.br[p.Name]
		bd.stampBranch(k, a, b)
		bd.stamp(k, k, s.Mul(lv).Neg()) // v_a − v_b − sL·i = 0
	case netlist.VoltageSource:
		k := bd.br[p.Name]
		if in := bd.sys.input; in.Kind == mna.SourceTest && in.Source == p.Name {
			bd.stamp(a, k, Int(1)) // replaced by a test current: i = −u
			bd.stamp(b, k, Int(-1))
			bd.stamp(k, k, Int(1))
			break
		}
		bd.stampBranch(k, a, b) // v_a − v_b = u or 0
	case netlist.CurrentSource:
		// Stamped only as the input (resolveInput); otherwise open.
	case netlist.VCVS:
		e, err := bd.symbol(p.Name, p.Name, p.Value, rankGain, false)
		if err != nil {
			return err
		}
		k := bd.br[p.Name]
		bd.stampBranch(k, a, b)
		bd.stamp(k, bd.nodeIndex(p.Sense[0]), e.Neg()) // v_a − v_b − E(v_c − v_d) = 0
		bd.stamp(k, bd.nodeIndex(p.Sense[1]), e)
	case netlist.VCCS:
		g, err := bd.symbol(p.Name, p.Name, p.Value, rankGain, false)
		if err != nil {
			return err
		}
		// Pushes g·(v_c − v_d) into a, out of b.
		c, d := bd.nodeIndex(p.Sense[0]), bd.nodeIndex(p.Sense[1])
		bd.stamp(a, c, g.Neg())
		bd.stamp(a, d, g)
		bd.stamp(b, c, g)
		bd.stamp(b, d, g.Neg())
	case netlist.CCVS, netlist.CCCS:
		gain, err := bd.symbol(p.Name, p.Name, p.Value, rankGain, false)
		if err != nil {
			return err
		}
		f, err := bd.currentForm(p.Control, map[string]bool{p.Name: true})
		if err != nil {
			return fmt.Errorf("part %q: its control i( ): %w", p.Name, err)
		}
		if !f.feed.IsZero() {
			return fmt.Errorf("part %q: sensing the current of the input source is not supported", p.Name)
		}
		if p.Kind == netlist.CCVS {
			k := bd.br[p.Name]
			bd.stampBranch(k, a, b) // v_a − v_b − R·i_sense = 0
			for j, cf := range f.coef {
				bd.stamp(k, j, gain.Mul(cf).Neg())
			}
		} else {
			for j, cf := range f.coef { // pushes gain·i_sense into a
				bd.stamp(a, j, gain.Mul(cf).Neg())
				bd.stamp(b, j, gain.Mul(cf))
			}
		}
	default:
		return fmt.Errorf("part %q: kind %s has no symbolic stamp", p.Name, p.Kind)
	}
	return nil
}

// stampCoupling stamps the mutual inductance sM between two inductor
// branches (dots on their first terminals).
func (bd *builder) stampCoupling(p *netlist.Part) error {
	var l [2]float64
	var k [2]int
	for i, name := range p.Coupled {
		q, ok := bd.c.Part(name)
		if !ok || q.Kind != netlist.Inductor {
			return fmt.Errorf("part %q: coupled element %q is not an inductor of the circuit", p.Name, name)
		}
		l[i], k[i] = q.Value, bd.br[name]
	}
	m, err := bd.symbol(p.Name, p.Name+".M", p.Value*math.Sqrt(l[0]*l[1]), rankM, false)
	if err != nil {
		return err
	}
	sm := Var(LaplaceVar).Mul(m).Neg()
	bd.stamp(k[0], k[1], sm) // v1 − sL1·i1 − sM·i2 = 0
	bd.stamp(k[1], k[0], sm)
	return nil
}

// stampOpAmp stamps an op-amp (noninverting, inverting, output); its
// branch current is the current the output pushes into the output node.
//
// Ideal: v+ − v− = 0. Otherwise, with A(s) = num/den (a0: a0/1; gbw:
// ωt/s; both: a0·ωt/(ωt + s·a0)) and v_int = v_out + rout·i:
// den·v_int − num·(v+ − v−) = 0.
func (bd *builder) stampOpAmp(p *netlist.Part) error {
	if len(p.Nodes) != 3 {
		return fmt.Errorf("part %q: an opamp needs 3 terminals, has %d", p.Name, len(p.Nodes))
	}
	np, nn, no := bd.nodeIndex(p.Nodes[0]), bd.nodeIndex(p.Nodes[1]), bd.nodeIndex(p.Nodes[2])
	k := bd.br[p.Name]
	bd.stamp(no, k, Int(-1))
	if p.A0 == 0 && p.GBWHz == 0 {
		bd.stamp(k, np, Int(1))
		bd.stamp(k, nn, Int(-1))
		return nil
	}
	s := Var(LaplaceVar)
	var num, den Poly
	var a0, wt Poly
	var err error
	if p.A0 != 0 {
		if a0, err = bd.symbol(p.Name, p.Name+".a0", p.A0, rankOpAmp, false); err != nil {
			return err
		}
	}
	if p.GBWHz != 0 {
		if wt, err = bd.symbol(p.Name, p.Name+".wt", 2*math.Pi*p.GBWHz, rankOpAmp, true); err != nil {
			return err
		}
	}
	switch {
	case p.GBWHz == 0:
		num, den = a0, Int(1)
	case p.A0 == 0:
		num, den = wt, s
	default:
		num, den = a0.Mul(wt), wt.Add(s.Mul(a0))
	}
	bd.stamp(k, no, den)
	if p.Rout != 0 {
		rout, err := bd.symbol(p.Name, p.Name+".rout", p.Rout, rankOpAmp, false)
		if err != nil {
			return err
		}
		bd.stamp(k, k, den.Mul(rout))
	}
	bd.stamp(k, np, num.Neg())
	bd.stamp(k, nn, num)
	return nil
}

// currentForm returns the current through part name, flowing into its
// first terminal and out of its second (for an opamp: the current its
// output pushes into the output node), as a linear form. seen guards
// against cycles of current-controlled sources.
func (bd *builder) currentForm(name string, seen map[string]bool) (linForm, error) {
	f := linForm{coef: map[int]Poly{}}
	p, ok := bd.c.Part(name)
	if !ok {
		return f, fmt.Errorf("no part %q", name)
	}
	if k, ok := bd.br[name]; ok {
		f.add(k, Int(1))
		return f, nil
	}
	if p.Kind == netlist.Coupling || len(p.Nodes) != 2 {
		return f, fmt.Errorf("part %q (%s) carries no current of its own", name, p.Kind)
	}
	a, b := bd.nodeIndex(p.Nodes[0]), bd.nodeIndex(p.Nodes[1])
	var y Poly
	switch p.Kind {
	case netlist.Resistor:
		g, err := bd.conductance(p.Name, p.Name, p.Value)
		if err != nil {
			return f, err
		}
		y = g
	case netlist.Capacitor:
		cv, err := bd.symbol(p.Name, p.Name, p.Value, rankC, false)
		if err != nil {
			return f, err
		}
		y = Var(LaplaceVar).Mul(cv)
	case netlist.CurrentSource:
		if bd.sys.input.Source == name {
			f.feed = Int(-1) // it pushes u out of its first terminal
		}
		return f, nil
	case netlist.VCCS:
		g, err := bd.symbol(p.Name, p.Name, p.Value, rankGain, false)
		if err != nil {
			return f, err
		}
		f.add(bd.nodeIndex(p.Sense[0]), g.Neg())
		f.add(bd.nodeIndex(p.Sense[1]), g)
		return f, nil
	case netlist.CCCS:
		if seen[name] {
			return f, fmt.Errorf("current-controlled sources sense each other in a loop through %q", name)
		}
		seen[name] = true
		g, err := bd.symbol(p.Name, p.Name, p.Value, rankGain, false)
		if err != nil {
			return f, err
		}
		inner, err := bd.currentForm(p.Control, seen)
		if err != nil {
			return f, err
		}
		for j, cf := range inner.coef {
			f.add(j, g.Mul(cf).Neg())
		}
		f.feed = g.Mul(inner.feed).Neg()
		return f, nil
	default:
		return f, fmt.Errorf("part %q (%s) has no current form", name, p.Kind)
	}
	f.add(a, y)
	f.add(b, y.Neg())
	return f, nil
}

// outputForm returns the output y, resolved by mna.Resolve, as a linear
// form.
func (bd *builder) outputForm(out mna.Output) (linForm, error) {
	bd.sys.output = out
	switch out.Kind {
	case mna.NodeVoltage:
		f := linForm{coef: map[int]Poly{}}
		f.add(bd.nodeIndex(out.Node), Int(1))
		f.add(bd.nodeIndex(out.Ref), Int(-1))
		return f, nil
	case mna.PartCurrent, mna.SourceCurrent:
		f, err := bd.currentForm(out.Part, map[string]bool{})
		if err != nil {
			return f, fmt.Errorf("output: %w", err)
		}
		if out.Kind == mna.SourceCurrent {
			for j, c := range f.coef {
				f.coef[j] = c.Neg()
			}
			f.feed = f.feed.Neg()
		}
		return f, nil
	}
	return linForm{}, fmt.Errorf("output: unknown kind %d", out.Kind)
}
