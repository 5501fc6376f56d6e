package netlist

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/alecthomas/participle/v2/lexer"
)

// kindSpec describes how an element kind is written.
type kindSpec struct {
	terminals string   // the terminal names, for messages
	unit      string   // unit of the main value ("" for a ratio)
	value     int      // valueRequired, valueDefaultOne or valueNone
	options   []string // options (NAME=VALUE)
}

const (
	valueRequired = iota
	valueDefaultOne
	valueNone
)

var kindSpecs = map[Kind]kindSpec{
	Resistor:      {"(a, b)", UnitOhm, valueRequired, nil},
	Capacitor:     {"(a, b)", UnitFarad, valueRequired, nil},
	Inductor:      {"(a, b)", UnitHenry, valueRequired, nil},
	VoltageSource: {"(p, n)", UnitVolt, valueDefaultOne, []string{"phase"}},
	CurrentSource: {"(a, b)", UnitAmpere, valueDefaultOne, []string{"phase"}},
	VCVS:          {"(p, n)", "", valueRequired, nil},
	VCCS:          {"(a, b)", UnitSiemens, valueRequired, nil},
	CCVS:          {"(p, n)", UnitOhm, valueRequired, nil},
	CCCS:          {"(a, b)", "", valueRequired, nil},
	OpAmp:         {"(noninverting, inverting, output)", "", valueNone, []string{"a0", "gbw", "rout", "en", "in", "fen", "fin"}},
	Coupling:      {"(L1, L2)", "", valueRequired, nil},
}

// Unit returns the unit symbol of the kind's main value (Part.Value): "Ω"
// for resistors and transresistances, "F", "H", "V", "A", "S", or "" for a
// ratio (a voltage or current gain, coupling) and for an opamp, which has no main value.
func (k Kind) Unit() string {
	return kindSpecs[k].unit
}

func (k Kind) terminalCount() int {
	return strings.Count(kindSpecs[k].terminals, ",") + 1
}

// partStep recomputes one part in Vary. Nil functions are options not
// given.
type partStep struct {
	idx   int
	value evalFn
	vi    int // index into Variations of the part's own tolerance, or -1
	phase evalFn
	a0    evalFn
	gbw   evalFn
	rout  evalFn
	noise [4]evalFn // opamp en, in, fen, fin
}

// apply evaluates the part's values from slots and its own factor, and
// returns a description of any invalid value.
func (s *partStep) apply(p *Part, slots []float64, factor float64) string {
	if s.value != nil {
		p.Value = s.value(slots) * factor
	}
	if s.phase != nil {
		p.PhaseRad = s.phase(slots) * math.Pi / 180
	}
	if s.a0 != nil {
		p.A0 = s.a0(slots)
	}
	if s.gbw != nil {
		p.GBWHz = s.gbw(slots)
	}
	if s.rout != nil {
		p.Rout = s.rout(slots)
	}
	for i, v := range p.noiseValues() {
		if s.noise[i] != nil {
			*v = s.noise[i](slots)
		}
	}
	return s.check(p)
}

// MinPartValue and MaxPartValue bound resistor, inductor and capacitor
// values in SI units (Ω, H, F): within them, products of three values and
// their reciprocals (the coefficients of a third-order response) stay
// inside the float64 range of about 1e±308, so no coefficient silently
// underflows to zero or overflows. Real parts lie many decades inside.
const (
	MinPartValue = 1e-100
	MaxPartValue = 1e100
)

// valueText writes v with 4 significant digits and its unit, for messages.
func valueText(v float64, unit string) string {
	return strings.TrimSpace(strconv.FormatFloat(v, 'g', 4, 64) + " " + unit)
}

// check validates the values of a part.
func (s *partStep) check(p *Part) string {
	finite := func(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
	if !finite(p.Value) {
		return fmt.Sprintf("value is not finite (%v)", p.Value)
	}
	switch p.Kind {
	case Resistor, Capacitor, Inductor:
		if p.Value <= 0 {
			return fmt.Sprintf("value must be > 0, got %s", valueText(p.Value, kindSpecs[p.Kind].unit))
		}
		if p.Value < MinPartValue {
			return fmt.Sprintf("value %s is too small to represent: R, L and C values must be at least %g (in Ω, H, F)", valueText(p.Value, kindSpecs[p.Kind].unit), MinPartValue)
		}
		if p.Value > MaxPartValue {
			return fmt.Sprintf("value %s is too large to represent: R, L and C values must be at most %g (in Ω, H, F)", valueText(p.Value, kindSpecs[p.Kind].unit), MaxPartValue)
		}
	case Coupling:
		if p.Value == 0 || math.Abs(p.Value) > 1 {
			return fmt.Sprintf("coupling factor must satisfy 0 < |K| ≤ 1, got %v", p.Value)
		}
	}
	for _, o := range []struct {
		name string
		fn   evalFn
		v    float64
	}{{"a0", s.a0, p.A0}, {"gbw", s.gbw, p.GBWHz}, {"rout", s.rout, p.Rout}} {
		if o.fn != nil && !(o.v > 0 && finite(o.v)) {
			return fmt.Sprintf("%s must be finite and > 0, got %v", o.name, o.v)
		}
	}
	for i, v := range p.noiseValues() {
		if s.noise[i] != nil && !(*v >= 0 && finite(*v)) {
			return fmt.Sprintf("%s must be finite and ≥ 0, got %v", noiseOptions[i].name, *v)
		}
	}
	if !finite(p.PhaseRad) {
		return "phase is not finite"
	}
	return ""
}

// noiseOptions are the opamp noise options in the order of
// Part.noiseValues, with their units: en= and in= accept a trailing
// "/rtHz" (per root hertz), which may also be left out.
var noiseOptions = [4]struct{ name, unit string }{
	{"en", UnitVolt}, {"in", UnitAmpere}, {"fen", UnitHertz}, {"fin", UnitHertz},
}

// noiseValues points at the opamp noise fields, in noiseOptions order.
func (p *Part) noiseValues() [4]*float64 {
	return [4]*float64{&p.EnVPerRtHz, &p.InAPerRtHz, &p.FenHz, &p.FinHz}
}

// perRootHz returns x without a trailing "/rtHz" (x itself when there is
// none): en=4nV/rtHz is en=4nV.
func perRootHz(x *Expr) *Expr {
	if x == nil || len(x.Rest) > 0 || len(x.Left.Rest) != 1 {
		return x
	}
	last := x.Left.Rest[0]
	if last.Op != "/" || bareName(&Expr{Left: &Term{Left: last.Unary}}) != "rtHz" {
		return x
	}
	return &Expr{Pos: x.Pos, Tokens: x.Tokens, Left: &Term{Pos: x.Left.Pos, Left: x.Left.Left}}
}

// maxWork bounds the statements elaborated while expanding blocks.
const maxWork = 4 * MaxParts

func (e *elab) overBudget(p lexer.Position) bool {
	e.work++
	if len(e.c.Parts) < MaxParts && e.work < maxWork {
		return false
	}
	e.refuseTooBig(p)
	return true
}

// refuseTooBig reports, once, that the circuit is past its budget.
func (e *elab) refuseTooBig(p lexer.Position) {
	if !e.tooBig {
		e.tooBig = true
		e.errorf(p, "", "circuit too large: more than %d parts or %d statements after expanding blocks (the memory budget of a circuit, about 1 GB); split the network or use fewer block instances", MaxParts, maxWork)
	}
}

// expandedSize returns the statements and the parts an instance of b
// expands to (its body, instances counted with their own expansion),
// saturating past maxWork, so that an instance too big for the budget is
// refused before any of it is built. Cycles count as nothing here
// (instance reports them).
func (e *elab) expandedSize(b *BlockStmt, visiting map[string]bool) blockSize {
	if n, ok := e.sizes[b.Name]; ok {
		return n
	}
	if visiting[b.Name] {
		return blockSize{}
	}
	visiting[b.Name] = true
	var n blockSize
	for _, bs := range b.Body {
		n.stmts++
		if bs.Element != nil {
			if inner, ok := e.blocks[bs.Element.Kind.Word()]; ok {
				in := e.expandedSize(inner, visiting)
				n.stmts += in.stmts
				n.parts += in.parts
			} else {
				n.parts++
			}
		}
		if n.stmts > maxWork {
			n = blockSize{maxWork + 1, maxWork + 1}
			break
		}
	}
	delete(visiting, b.Name)
	e.sizes[b.Name] = n
	return n
}

// blockSize is what one instance of a block expands to.
type blockSize struct{ stmts, parts int }

func (e *elab) element(sc *scope, st *ElementStmt) {
	if e.overBudget(st.Pos) || !e.checkName(st.Pos, st.Name, "element") {
		return
	}
	if prev, dup := sc.elems[st.Name]; dup {
		e.errorf(st.Pos, "", "duplicate name %q (first defined at %s)", st.Name, e.f.posAt(prev))
		return
	}
	sc.elems[st.Name] = st.Pos.Offset
	before := len(e.diags)
	word := st.Kind.Word()
	kind, ok := KindByKeyword(word)
	if !ok {
		if b, isBlock := e.blocks[word]; isBlock {
			if n := e.expandedSize(b, map[string]bool{}); e.work+n.stmts >= maxWork || len(e.c.Parts)+n.parts > MaxParts {
				e.refuseTooBig(st.Pos)
				return
			}
			e.instance(sc, st, b)
			return
		}
		cands := Keywords()
		for n := range e.blocks {
			cands = append(cands, n)
		}
		e.errorf(st.Kind.Pos, kindHint(word, cands), "unknown element kind or block %q", word)
		return
	}
	var ctl *control
	if it := st.Items; (kind == VoltageSource || kind == CurrentSource) && len(it) > 0 && it[0].Expr != nil {
		c, at, msg := splitControl(it[0].Expr)
		if msg != "" {
			e.errorf(at, ControlForms, "%s %s: %s", kind, sc.prefix+st.Name, msg)
			return
		}
		if c != nil {
			ctl = c
			kind = controlledKind(kind, c)
		}
	}
	spec := kindSpecs[kind]
	if n := kind.terminalCount(); len(st.Terms) != n {
		e.errorf(st.Pos, "", "%s %s takes %d terminals %s, got %d", kind, st.Name, n, spec.terminals, len(st.Terms))
		return
	}
	full := sc.prefix + st.Name
	idx := len(e.c.Parts)
	p := Part{Name: full, Kind: kind, Pos: e.f.Position(st.Pos)}
	if kind == Coupling {
		for i, t := range st.Terms {
			e.pending = append(e.pending, pendingRef{part: idx, target: sc.prefix + t.Name, pos: t.Pos, slot: i})
		}
	} else {
		p.Nodes = e.partNodes(len(st.Terms))
		for _, t := range st.Terms {
			n := e.node(sc, t)
			p.Nodes = append(p.Nodes, n)
			e.touch(n, full, t.Pos)
		}
	}
	it := e.items(sc, st.Items, "element")
	p.Fixed = sc.fixed || it.fixed
	p.Noiseless = it.noiseless
	if it.noiseless && kind != Resistor {
		e.errorf(st.Pos, "only a resistor has thermal noise to remove", "%s %s cannot be noiseless", kind, full)
	}
	for _, x := range it.exprs {
		e.errorf(x.Pos, "the value comes right after the terminals; options are NAME=VALUE", "unexpected expression")
	}
	step := partStep{idx: idx, vi: -1}
	dynamic := false // some value depends on parameters
	c := e.compiler(sc)
	compile := func(x *Expr, unit, what string) evalFn {
		v, ok := c.expr(x)
		if !ok {
			return nil
		}
		if v.d.known && v.d.unit != "" && v.d.unit != unit {
			switch {
			case v.d.unit == UnitPercent:
				e.errorf(x.Pos, tolHint, "%% is only allowed in a tolerance")
			case unit == "":
				e.errorf(x.Pos, "", "unit mismatch: %s of %s %s is a plain number, not %s", what, kind, full, v.d.unit)
			default:
				e.errorf(x.Pos, "", "unit mismatch: %s of %s %s is in %s, not %s", what, kind, full, unit, v.d.unit)
			}
			return nil
		}
		dynamic = dynamic || !v.konst
		return v.fn
	}
	switch {
	case it.value != nil && spec.value == valueNone:
		e.errorf(it.value.Pos, "use a0=, gbw= and rout=", "an opamp takes no value")
	case it.value != nil && ctl != nil:
		step.value = compile(ctl.gain, spec.unit, "the gain")
		p.ValueSpan = e.span(it.value)
	case it.value != nil:
		step.value = compile(it.value, spec.unit, "the value")
		p.ValueSpan = e.span(it.value)
	case spec.value == valueRequired:
		e.errorf(st.Pos, "", "%s %s needs a value%s", kind, full, unitWord(spec.unit))
	case spec.value == valueDefaultOne:
		step.value = func([]float64) float64 { return 1 }
	}
	if ov, has := e.ov[full]; has && step.value != nil {
		e.usedOv[full] = true
		step.value = func([]float64) float64 { return ov }
	}
	switch {
	case ctl != nil && ctl.part != "":
		e.pending = append(e.pending, pendingRef{part: idx, target: sc.prefix + ctl.part, pos: ctl.ref.Args[0].Pos, slot: -1})
	case ctl != nil:
		refs := ctl.nodes
		if len(refs) == 1 {
			refs = append(refs, &NodeRef{Pos: ctl.ref.Pos, Name: "gnd"})
		}
		for i, r := range refs {
			n := e.node(sc, r)
			p.Sense[i] = n
			e.touch(n, full, r.Pos)
		}
	}
	for _, o := range it.opts {
		switch {
		case o.Key == "phase" && (kind == VoltageSource || kind == CurrentSource):
			step.phase = compile(o.Value, UnitDegree, "phase")
		case kind == OpAmp && o.Key == "a0":
			step.a0 = compile(o.Value, "", "a0")
		case kind == OpAmp && o.Key == "gbw":
			step.gbw = compile(o.Value, UnitHertz, "gbw")
		case kind == OpAmp && o.Key == "rout":
			step.rout = compile(o.Value, UnitOhm, "rout")
		case kind == OpAmp && noiseOption(o.Key) >= 0:
			i := noiseOption(o.Key)
			step.noise[i] = compile(perRootHz(o.Value), noiseOptions[i].unit, o.Key)
		default:
			hint := suggest(o.Key, spec.options)
			if hint == "" {
				takes := "no options"
				if len(spec.options) > 0 {
					takes = strings.Join(spec.options, "=, ") + "="
				}
				hint = kind.String() + " " + full + " takes " + takes + " and the flag fixed" + noiselessFlag(kind) + "; " + tolHint
			}
			e.errorf(o.Pos, hint, "unknown option %q for %s", o.Key, kind)
		}
	}
	if it.hasTol && spec.value == valueNone {
		e.errorf(st.Pos, "put the tolerance on a let used by a0= or gbw=", "an opamp takes no tolerance")
		it.tol = Tolerance{}
	}
	p.Tol = it.tol
	if msg := step.apply(&p, e.nom, 1); msg != "" && len(e.diags) == before {
		at := st.Pos
		if it.value != nil {
			at = it.value.Pos
		}
		e.errorf(at, "", "%s %s: %s", kind, full, msg)
	}
	if p.Tol.Rel > 0 {
		step.vi = len(e.c.Variations)
		e.c.Variations = append(e.c.Variations, Variation{Name: full, Nominal: p.Value, Tol: p.Tol, Pos: p.Pos})
	}
	e.c.Parts = append(e.c.Parts, p)
	if dynamic || step.vi >= 0 {
		e.m.parts = append(e.m.parts, step)
	}
}

// noiselessFlag names the flag noiseless in the option hint of a resistor.
func noiselessFlag(k Kind) string {
	if k == Resistor {
		return " or noiseless"
	}
	return ""
}

// noiseOption returns the index of an opamp noise option, or -1.
func noiseOption(key string) int {
	for i, o := range noiseOptions {
		if o.name == key {
			return i
		}
	}
	return -1
}

func unitWord(u string) string {
	if u == "" {
		return ""
	}
	return " in " + u
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

// controlledKind is the kind of a source whose value has the control c.
func controlledKind(out Kind, c *control) Kind {
	switch {
	case out == VoltageSource && c.part == "":
		return VCVS
	case out == VoltageSource:
		return CCVS
	case c.part == "":
		return VCCS
	}
	return CCCS
}

// kindHint names the nearest kind or block to an unknown word, and the
// kinds there are.
func kindHint(word string, cands []string) string {
	if h := suggest(word, cands); h != "" {
		return h
	}
	return fmt.Sprintf("the nearest is %q; the kinds are %s", Nearest(word, cands), strings.Join(Keywords(), ", "))
}

// instance expands a block instance into sc.
func (e *elab) instance(sc *scope, st *ElementStmt, b *BlockStmt) {
	if len(st.Terms) != len(b.Ports) {
		e.errorf(st.Pos, "", "block %s has %d ports, got %d terminals", b.Name, len(b.Ports), len(st.Terms))
		return
	}
	for i, s := range sc.stack {
		if s == b.Name {
			if !e.cycles[st.Pos.Offset] {
				e.cycles[st.Pos.Offset] = true
				chain := append(append([]string(nil), sc.stack[i:]...), b.Name)
				e.errorf(st.Pos, "", "block cycle: %s", strings.Join(chain, " → "))
			}
			return
		}
	}
	if len(sc.stack) >= MaxBlockDepth {
		e.errorf(st.Pos, "", "blocks nested more than %d deep", MaxBlockDepth)
		return
	}
	it := e.items(sc, st.Items, "instance")
	if it.value != nil {
		e.errorf(it.value.Pos, "give parameters as NAME=VALUE", "a block instance takes no value")
	}
	if it.noiseless {
		e.errorf(st.Pos, "mark the resistors inside the block", "a block instance cannot be noiseless")
	}
	for _, x := range it.exprs {
		e.errorf(x.Pos, "give parameters as NAME=VALUE", "unexpected expression")
	}
	if it.hasTol {
		e.errorf(st.Pos, "put tolerances on the parts inside the block or on a let", "a block instance takes no tolerance")
	}
	global := sc
	if sc.parent != nil {
		global = sc.parent
	}
	inner := &scope{
		prefix: sc.prefix + st.Name + ".",
		vars:   map[string]varInfo{},
		parent: global,
		ports:  map[string]string{},
		stack:  append(append([]string(nil), sc.stack...), b.Name),
		elems:  map[string]int{},
		fixed:  sc.fixed || it.fixed,
		block:  b,
	}
	for i, port := range b.Ports {
		inner.ports[port.Name] = e.node(sc, st.Terms[i])
	}
	given := map[string]*Option{}
	var params []string
	for _, d := range b.Defaults {
		params = append(params, d.Key)
	}
	for _, o := range it.opts {
		if !contains(params, o.Key) {
			hint := suggest(o.Key, params)
			if hint == "" {
				hint = fmt.Sprintf("block %s has parameters: %s", b.Name, strings.Join(params, ", "))
				if len(params) == 0 {
					hint = fmt.Sprintf("block %s has no parameters", b.Name)
				}
			}
			e.errorf(o.Pos, hint, "block %s has no parameter %q", b.Name, o.Key)
			continue
		}
		given[o.Key] = o
	}
	for _, d := range b.Defaults {
		var val compiled
		var ok bool
		x := d.Value
		if o, has := given[d.Key]; has {
			x = o.Value
			val, ok = e.compiler(sc).expr(x)
		} else {
			val, ok = e.compiler(inner).expr(x)
		}
		if !ok {
			continue
		}
		v := val.fn(e.nom)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			e.errorf(x.Pos, "", "parameter %s of %s%s is not finite (%v)", d.Key, sc.prefix, st.Name, v)
			continue
		}
		slot := e.defineVar(inner, d.Key, val.d, v)
		e.m.lets = append(e.m.lets, letStep{slot: slot, fn: val.fn, vi: -1, param: -1, konst: val.konst, name: inner.prefix + d.Key})
	}
	for _, bs := range b.Body {
		switch {
		case bs.Let != nil:
			if !e.overBudget(bs.Pos) {
				e.let(inner, bs.Let)
			}
		case bs.Element != nil:
			e.element(inner, bs.Element)
		}
	}
}
