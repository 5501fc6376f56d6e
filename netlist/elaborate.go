package netlist

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/alecthomas/participle/v2/lexer"

	"nodal/netlist/syntax"
)

// Overrides maps a top-level parameter name to an SI value that replaces
// the expression of its `let`, or a part's hierarchical name to an SI value
// that replaces the part's value (a controlled source's gain); the
// tolerance, if any, still applies.
type Overrides map[string]float64

// Limits of block expansion, so that a small file cannot ask for an
// unbounded circuit.
const (
	// MaxParts is the most parts a circuit may have after expanding
	// blocks: the memory budget of a circuit. Parts are held sparse from
	// the stamps on, so 10⁶ parts fit in about 1 GB through a sweep; Load
	// of a plain netlist of 10⁶ parts (38 MB) peaks near 0.5 GB of heap,
	// 13× the file (the Circuit's Parts, 272 bytes each, the source and
	// the elaboration's name tables); 10⁵ parts peak near 46 MB.
	MaxParts = 1_000_000
	// MaxBlockDepth is the deepest nesting of block instances.
	MaxBlockDepth = 64
)

// Load parses and elaborates a circuit file: Parse followed by Elaborate.
func Load(name string, src []byte, ov Overrides) (*Circuit, error) {
	f, err := parseFile(name, src, true)
	if err != nil {
		return nil, err
	}
	return elaborate(f, ov, true)
}

// Elaborate evaluates and validates a parsed file into a flat Circuit:
// block instances expanded with hierarchical names, every value in SI, and
// every check of the language made. On failure the error is an ErrorList
// (errors and warnings, sorted by position); on success warnings are in
// Circuit.Warnings.
func Elaborate(f *File, ov Overrides) (*Circuit, error) {
	return elaborate(f, ov, false)
}

// elaborate is Elaborate; release drops each top-level statement from
// f.Stmts once elaborated (Load, which owns f), so that the syntax tree is
// freed while the circuit grows.
func elaborate(f *File, ov Overrides, release bool) (*Circuit, error) {
	// The top-level elements size the part and node tables up front (a
	// ladder of n parts has (n+3)/2 nodes), sparing the copies of growth.
	n := 0
	for i := range f.stmtCount() {
		if st := f.peek(i); st == nil || st.Element != nil {
			n++ // a deferred statement is an element
		}
	}
	n = min(n, MaxParts)
	e := &elab{
		f:         f,
		ov:        ov,
		c:         &Circuit{File: f.Name, Nodes: append(make([]string, 0, n/2+2), Ground), Parts: make([]Part, 0, n)},
		m:         &model{},
		blocks:    map[string]*BlockStmt{},
		sizes:     map[string]blockSize{},
		nodeIndex: make(map[string]int, n/2+2),
		touches:   append(make([]nodeTouch, 0, n/2+2), nodeTouch{}),
		cycles:    map[int]bool{},
		usedOv:    map[string]bool{},
		topParts:  n,
		release:   release,
	}
	e.nodeIndex[Ground] = 0
	e.run()
	if err := e.diags.Err(); err != nil {
		e.diags.Sort()
		return nil, e.diags
	}
	e.c.Warnings = e.diags
	e.m.finish(e.nom)
	e.c.model = e.m
	return e.c, nil
}

// elab is the state of one elaboration.
type elab struct {
	f      *File
	ov     Overrides
	diags  ErrorList
	c      *Circuit
	m      *model
	nom    []float64 // nominal slot values, grown as parameters are defined
	blocks map[string]*BlockStmt
	sizes  map[string]blockSize // expandedSize of each block, once computed

	nodeIndex map[string]int // node name → index in c.Nodes
	nodeSlab  []string       // where the parts' Nodes are cut from
	touches   []nodeTouch    // per node: terminal count and the first one
	pending   []pendingRef
	cycles    map[int]bool // offsets of instances already reported as cycles
	usedOv    map[string]bool
	tooBig    bool
	work      int
	topParts  int  // top-level element statements (a capacity hint)
	release   bool // drop top-level statements once elaborated
}

type nodeTouch struct {
	n    int32  // terminals on the node
	off  int32  // byte offset of the first one
	part string // its part
}

// pendingRef is a reference to another element, resolved once all parts
// exist: the PART of i(PART) in a current-controlled source, or a coupled
// inductor.
type pendingRef struct {
	part   int // index of the referring part
	target string
	pos    lexer.Position
	slot   int // Coupling: 0 or 1 in Coupled; -1: Control
}

func (e *elab) errorf(p lexer.Position, hint, format string, args ...any) {
	e.diags = append(e.diags, e.f.diag(p, SevError, fmt.Sprintf(format, args...), hint))
}

func (e *elab) run() {
	global := &scope{vars: map[string]varInfo{}, elems: make(map[string]int, e.topParts)}
	for i := range e.f.stmtCount() {
		st := e.f.peek(i)
		if st != nil && st.Block != nil {
			e.defineBlock(st.Block)
		}
		if st != nil && st.Response != nil {
			e.response(st.Response)
		}
	}
	for i := range e.f.stmtCount() {
		st := e.f.peek(i)
		switch {
		case e.release:
			st = e.f.scratchStmt(i) // nothing below keeps a pointer into st
		case st == nil:
			st = e.f.stmt(i)
		}
		if e.release && st.Block == nil && st.Response == nil {
			e.f.drop(i) // Elaborate reads it no more
		}
		switch {
		case st.Title != nil:
			if e.c.Title != "" {
				e.errorf(st.Pos, "", "second title statement")
			}
			title, err := strconv.Unquote(st.Title.Text)
			if err != nil {
				e.errorf(st.Title.Pos, `write the title in double quotes; \" and \\ escape`, "bad title string")
			}
			e.c.Title = title
		case st.Let != nil:
			e.let(global, st.Let)
		case st.Element != nil:
			e.element(global, st.Element)
		case st.Require != nil:
			e.require(st.Require)
		}
	}
	e.resolvePending()
	if p, msg := CouplingProblem(e.c.Parts); p != nil {
		e.diags = append(e.diags, &Diagnostic{Pos: p.Pos, Msg: fmt.Sprintf("coupling %s: %s", p.Name, msg), Line: e.f.lineText(p.Pos.Offset)})
	}
	e.checkOverrides()
	e.checkTopology()
}

func (e *elab) checkOverrides() {
	if len(e.usedOv) == len(e.ov) {
		return // every override was used
	}
	var names []string
	for _, p := range e.c.Params {
		names = append(names, p.Name)
	}
	var unknown []string
	for name := range e.ov {
		if !e.usedOv[name] {
			unknown = append(unknown, name)
		}
	}
	sort.Strings(unknown)
	var parts []string
	for _, p := range e.c.Parts {
		if p.Kind != OpAmp {
			parts = append(parts, p.Name)
		}
	}
	for _, name := range unknown {
		hint := suggest(name, append(append([]string(nil), names...), parts...))
		if hint == "" && len(names) > 0 {
			hint = "parameters: " + strings.Join(names, ", ")
		}
		e.diags = append(e.diags, &Diagnostic{Pos: Pos{File: e.f.Name}, Msg: fmt.Sprintf("no top-level parameter or part value %q to override", name), Hint: hint})
	}
}

// scope is the name space of the top level or of one block instance.
type scope struct {
	prefix string             // "" at the top level, "LP1." inside instance LP1
	vars   map[string]varInfo // parameters defined here
	order  []string           // their names, in order
	parent *scope             // the top level, for block scopes
	ports  map[string]string  // block port → node of the instantiating scope
	stack  []string           // block names being expanded, outermost first
	elems  map[string]int     // element name → byte offset of its statement
	fixed  bool               // the instance was marked fixed: all its parts are
	block  *BlockStmt
	comp   *exprCompiler // made by elab.compiler
}

func (s *scope) lookup(name string) (varInfo, bool) {
	for sc := s; sc != nil; sc = sc.parent {
		if v, ok := sc.vars[name]; ok {
			return v, true
		}
	}
	return varInfo{}, false
}

func (s *scope) visibleNames() []string {
	var out []string
	for sc := s; sc != nil; sc = sc.parent {
		out = append(out, sc.order...)
	}
	return out
}

// compiler returns the expression compiler of a scope (one per scope).
func (e *elab) compiler(sc *scope) *exprCompiler {
	if sc.comp == nil {
		sc.comp = &exprCompiler{sc: sc, report: func(p lexer.Position, msg, hint string) {
			e.diags = append(e.diags, e.f.diag(p, SevError, msg, hint))
		}}
	}
	return sc.comp
}

// span returns the source range of an expression.
func (e *elab) span(x *Expr) Span {
	start := x.Pos.Offset
	return Span{Start: start, End: tokensEnd(start, x.Tokens)}
}

// tokensEnd returns the byte offset just after the last significant token,
// or start when there is none.
func tokensEnd(start int, toks []lexer.Token) int {
	end := start
	for _, t := range toks {
		if t.Type != symSpace && t.Type != symComment && !t.EOF() {
			end = t.Pos.Offset + len(t.Value)
		}
	}
	return end
}

// checkName reports a name that cannot be defined.
func (e *elab) checkName(p lexer.Position, name, what string) bool {
	if strings.Contains(name, ".") {
		e.errorf(p, "", "%s name %q may not contain \".\"", what, name)
		return false
	}
	return true
}

func (e *elab) defineBlock(b *BlockStmt) {
	p := b.Pos
	if !e.checkName(p, b.Name, "block") {
		return
	}
	if _, ok := KindByKeyword(b.Name); ok {
		e.errorf(p, "", "block name %q is an element kind", b.Name)
		return
	}
	if prev, ok := e.blocks[b.Name]; ok {
		e.errorf(p, "", "duplicate block %q (first defined at %s)", b.Name, e.f.Position(prev.Pos))
		return
	}
	seen := map[string]bool{}
	for _, port := range b.Ports {
		switch {
		case port.Name == Ground || port.Name == "0":
			e.errorf(port.Pos, "", "port %q: the reference node is global and cannot be a port", port.Name)
		case seen[port.Name]:
			e.errorf(port.Pos, "", "duplicate port %q", port.Name)
		}
		seen[port.Name] = true
		e.checkName(port.Pos, port.Name, "port")
	}
	seen = map[string]bool{}
	for _, d := range b.Defaults {
		if seen[d.Key] {
			e.errorf(d.Pos, "", "duplicate parameter %q", d.Key)
		}
		if reservedNames[d.Key] {
			e.errorf(d.Pos, "", "%q is reserved and cannot be a parameter", d.Key)
		}
		seen[d.Key] = true
	}
	e.blocks[b.Name] = b
}

// defineVar adds a parameter slot to a scope with its nominal value.
func (e *elab) defineVar(sc *scope, name string, d dim, v float64) int {
	slot := len(e.nom)
	e.nom = append(e.nom, v)
	sc.vars[name] = varInfo{slot: slot, d: d}
	sc.order = append(sc.order, name)
	return slot
}

func (e *elab) let(sc *scope, l *LetStmt) {
	if !e.checkName(l.Pos, l.Name, "parameter") {
		return
	}
	if reservedNames[l.Name] {
		e.errorf(l.Pos, "", "%q is reserved and cannot be a parameter", l.Name)
		return
	}
	if _, dup := sc.vars[l.Name]; dup {
		e.errorf(l.Pos, "", "duplicate parameter %q", l.Name)
		return
	}
	val, ok := e.compiler(sc).expr(l.Value)
	if !ok {
		return
	}
	if val.d.known && val.d.unit == UnitPercent {
		e.errorf(l.Value.Pos, tolHint, "%% is only allowed in a tolerance")
		return
	}
	top := sc.parent == nil
	if ov, has := e.ov[l.Name]; has && top {
		e.usedOv[l.Name] = true
		val = konst(ov, val.d)
	}
	it := e.items(sc, l.Items, "let")
	for _, x := range it.exprs {
		e.errorf(x.Pos, "", "unexpected expression after the value of %q", l.Name)
	}
	for _, o := range it.opts {
		e.errorf(o.Pos, "a let takes no options; "+tolHint, "unknown option %q", o.Key)
	}
	v := val.fn(e.nom)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		e.errorf(l.Value.Pos, "", "parameter %q is not finite (%v)", l.Name, v)
		return
	}
	vi := -1
	if it.tol.Rel > 0 {
		vi = len(e.c.Variations)
		e.c.Variations = append(e.c.Variations, Variation{Name: sc.prefix + l.Name, IsParam: true, Nominal: v, Tol: it.tol, Pos: e.f.Position(l.Pos)})
	}
	slot := e.defineVar(sc, l.Name, val.d, v)
	param := -1
	if top {
		param = len(e.c.Params)
		unit := ""
		if val.d.known {
			unit = val.d.unit
		}
		e.c.Params = append(e.c.Params, Param{Name: l.Name, Value: v, Unit: unit, Tol: it.tol, Pos: e.f.Position(l.Pos), Span: e.span(l.Value)})
	}
	e.m.lets = append(e.m.lets, letStep{slot: slot, fn: val.fn, vi: vi, param: param, konst: val.konst, name: sc.prefix + l.Name, design: true})
}

// itemSet is the classified trailing items of an element or let.
type itemSet struct {
	value  *Expr // the first bare expression, when values are allowed
	exprs  []*Expr
	opts   []*Option
	tol    Tolerance
	fixed  bool
	hasTol bool
	// noiseless is the flag `noiseless` (resistors only).
	noiseless bool
}

// items classifies trailing items: the tolerance (±) and normal are
// handled here; other options and bare expressions are returned. what
// names the statement for messages; values are allowed unless "let".
func (e *elab) items(sc *scope, list []*Item, what string) itemSet {
	var it itemSet
	var tolPos lexer.Position
	normal := false
	for i, item := range list {
		switch {
		case item.Tol != nil:
			if it.hasTol {
				e.errorf(item.Pos, "", "second tolerance (first at %s)", e.f.Position(tolPos))
				continue
			}
			it.hasTol, tolPos = true, item.Pos
			it.tol.Rel = e.tolerance(sc, item.Tol.Value)
		case item.Option != nil:
			for _, o := range it.opts {
				if o.Key == item.Option.Key {
					e.errorf(item.Pos, "", "option %s= given twice", o.Key)
				}
			}
			it.opts = append(it.opts, item.Option)
		case bareName(item.Expr) == "fixed":
			it.fixed = true
		case bareName(item.Expr) == "noiseless" && what != "let":
			it.noiseless = true
		case bareName(item.Expr) == "normal":
			switch {
			case normal:
				e.errorf(item.Pos, "", "normal given twice")
			case !it.hasTol:
				e.errorf(item.Pos, "write the tolerance first, as in ±5% normal", "normal without a tolerance")
			}
			normal = true
			it.tol.Dist = Normal
		case i == 0 && what != "let":
			it.value = item.Expr
		default:
			it.exprs = append(it.exprs, item.Expr)
		}
	}
	return it
}

// tolHint says how a tolerance is written.
const tolHint = "a tolerance is ±5% (uniform) or ±5% normal (the tolerance is 3σ)"

// tolerance evaluates a tolerance expression to a fraction in (0, 1).
func (e *elab) tolerance(sc *scope, x *Expr) float64 {
	v, ok := e.compiler(sc).expr(x)
	if !ok {
		return 0
	}
	if v.d.known && v.d.unit != "" && v.d.unit != UnitPercent {
		e.errorf(x.Pos, "write a percentage such as 1%", "a tolerance is relative; unit %s is not allowed", v.d.unit)
		return 0
	}
	t := v.fn(e.nom)
	if !(t > 0 && t < 1) {
		e.errorf(x.Pos, "write a percentage such as 1% (a plain number is a fraction)",
			"tolerance must be above 0 and below 100%% (at −100%% a part would vanish), got %s", valueText(t*100, "%"))
		return 0
	}
	return t
}

// bareName returns the identifier if x is nothing but one name.
func bareName(x *Expr) string {
	if x == nil || len(x.Rest) > 0 || len(x.Left.Rest) > 0 {
		return ""
	}
	u := x.Left.Left
	if u.Power == nil || u.Power.Exp != nil || u.Power.Base.Ref == nil || u.Power.Base.Ref.Open != "" {
		return ""
	}
	return u.Power.Base.Ref.Name
}

// node resolves a terminal to a node name, registering the node.
func (e *elab) node(sc *scope, r *NodeRef) string {
	name := r.Name
	switch {
	case name == Ground || name == "0":
		return Ground
	case name[0] >= '0' && name[0] <= '9' && !syntax.IsDigits(name):
		e.errorf(r.Pos, "", "node %q: node names are identifiers or non-negative integers", name)
	case strings.Contains(name, "."):
		e.errorf(r.Pos, "", "node %q: node names may not contain \".\"", name)
	}
	if outer, ok := sc.ports[name]; ok {
		return outer
	}
	return sc.prefix + name
}

// partNodes returns an empty slice of capacity k for a part's Nodes, cut
// from a shared slab (one allocation per 4096 terminals, not one per
// part); the capacity is exact, so an append to it copies.
func (e *elab) partNodes(k int) []string {
	if len(e.nodeSlab) < k {
		e.nodeSlab = make([]string, max(4096, k))
	}
	out := e.nodeSlab[:0:k]
	e.nodeSlab = e.nodeSlab[k:]
	return out
}

// touch counts one terminal on a node.
func (e *elab) touch(node, part string, p lexer.Position) {
	i, ok := e.nodeIndex[node]
	if !ok {
		i = len(e.c.Nodes)
		e.nodeIndex[node] = i
		e.c.Nodes = append(e.c.Nodes, node)
		e.touches = append(e.touches, nodeTouch{})
	}
	t := &e.touches[i]
	if t.n == 0 {
		t.part, t.off = part, int32(p.Offset)
	}
	t.n++
}

// resolvePending resolves the references to other elements, through an
// index of the parts by name made only when there are any.
func (e *elab) resolvePending() {
	if len(e.pending) == 0 {
		return
	}
	partIndex := make(map[string]int, len(e.c.Parts))
	for i, p := range e.c.Parts {
		partIndex[p.Name] = i
	}
	for _, r := range e.pending {
		p := &e.c.Parts[r.part]
		j, ok := partIndex[r.target]
		if !ok {
			var names []string
			for n := range partIndex {
				names = append(names, n)
			}
			e.errorf(r.pos, suggest(r.target, names), "%s %s: no element %q", p.Kind, p.Name, r.target)
			continue
		}
		t := &e.c.Parts[j]
		if r.slot < 0 {
			switch {
			case t.Kind == Coupling:
				e.errorf(r.pos, "", "%s %s: i(%s) names a coupling, which carries no current", p.Kind, p.Name, t.Name)
			case j == r.part:
				e.errorf(r.pos, "", "%s %s: i(%s) names the source itself", p.Kind, p.Name, t.Name)
			default:
				p.Control = t.Name
			}
			continue
		}
		if t.Kind != Inductor {
			e.errorf(r.pos, "", "coupling %s: %s is a %s, not an inductor", p.Name, t.Name, t.Kind)
			continue
		}
		p.Coupled[r.slot] = t.Name
		if r.slot == 1 && p.Coupled[0] == t.Name {
			e.errorf(r.pos, "", "coupling %s couples %s with itself", p.Name, t.Name)
		}
	}
}

func (e *elab) checkTopology() {
	if len(e.c.Parts) == 0 {
		e.diags = append(e.diags, &Diagnostic{Pos: e.f.posAt(0), Msg: "the circuit has no elements", Line: e.f.lineText(0)})
		return
	}
	grounded := e.touches[0].n > 0
	for _, p := range e.c.Parts {
		if p.Kind == OpAmp {
			grounded = true // the output is referred to ground
		}
	}
	if !grounded {
		first := e.c.Parts[0]
		e.diags = append(e.diags, &Diagnostic{Pos: first.Pos, Msg: "no element touches the reference node gnd", Hint: "connect the circuit to gnd (or 0)", Line: e.f.lineText(first.Pos.Offset)})
	}
	for i := 1; i < len(e.c.Nodes); i++ {
		if t := e.touches[i]; t.n == 1 {
			e.diags = append(e.diags, e.f.diagAt(int(t.off), SevWarning, fmt.Sprintf("node %q is connected to only one terminal (of %s)", e.c.Nodes[i], t.part), ""))
		}
	}
}
