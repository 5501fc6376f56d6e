package netlist

import (
	"cmp"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// ValueEdit replaces the bytes Span.Start..Span.End of a source file with
// Text.
type ValueEdit struct {
	Span Span
	Text string
}

// ReplaceValues returns a copy of src with every edit applied. Everything
// outside the edited ranges (layout, comments, tolerances and options) is
// kept byte for byte. Edits may come in any order; a range outside src or
// two edits whose ranges overlap (or coincide) are an error.
func ReplaceValues(src []byte, edits []ValueEdit) ([]byte, error) {
	sorted := append([]ValueEdit(nil), edits...)
	sort.SliceStable(sorted, func(i, j int) bool { return sorted[i].Span.Start < sorted[j].Span.Start })
	var out []byte
	at := 0
	for i, e := range sorted {
		s, t := e.Span.Start, e.Span.End
		if s < 0 || t < s || t > len(src) {
			return nil, fmt.Errorf("rewrite: edit %d..%d outside the %d-byte source", s, t, len(src))
		}
		if i > 0 && s < sorted[i-1].Span.End || i > 0 && s == sorted[i-1].Span.Start {
			p := sorted[i-1].Span
			return nil, fmt.Errorf("rewrite: edits %d..%d and %d..%d overlap", p.Start, p.End, s, t)
		}
		out = append(out, src[at:s]...)
		out = append(out, e.Text...)
		at = t
	}
	return append(out, src[at:]...), nil
}

// FormatLiteral writes v (SI units, > 0) as a value literal of the circuit
// language with the given significant digits, an SI prefix and the unit
// symbol: FormatLiteral(4.7e-9, "F", 2) is "4.7nF", FormatLiteral(1e4, "",
// 3) is "10k". Values beyond the prefixes f..T use an exponent ("4.7e-18F").
// Trailing zeros are dropped.
func FormatLiteral(v float64, unit string, digits int) string {
	if digits < 1 {
		digits = 1
	}
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return strconv.FormatFloat(v, 'g', -1, 64) + unit
	}
	// Round to the digits first, so 999.96 becomes 1k and not 1000.
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'e', digits-1, 64), 64)
	exp3 := int(math.Floor(math.Log10(math.Abs(r)) / 3))
	if exp3 < -5 || exp3 > 4 {
		return strconv.FormatFloat(r, 'g', digits, 64) + unit
	}
	m := r / math.Pow(1000, float64(exp3))
	intDigits := int(math.Floor(math.Log10(math.Abs(m)))) + 1
	dec := max(digits-intDigits, 0)
	text := strconv.FormatFloat(m, 'f', dec, 64)
	if strings.Contains(text, ".") {
		text = strings.TrimRight(strings.TrimRight(text, "0"), ".")
	}
	prefix := []string{"f", "p", "n", "u", "m", "", "k", "M", "G", "T"}[exp3+5]
	return text + prefix + unit
}

// literalUnit is the unit written after a rewritten value: none for
// ohms (the file convention "4.7k"), the kind's unit otherwise.
func literalUnit(k Kind) string {
	if u := k.Unit(); u != UnitOhm {
		return u
	}
	return ""
}

// ValuePlan is how new part values are written into a source file.
type ValuePlan struct {
	Edits []ValueEdit // non-overlapping, in source order
	// Notes say what a reader of the new file should know (a let rewritten
	// for several parts, an expression replaced by a literal).
	Notes []string
	// Skipped maps a part name to the reason its value cannot be rewritten.
	Skipped map[string]string
}

// PlanValues decides how to write new SI values (by hierarchical part
// name) into f, the parsed source of c, with the given significant digits.
// The rules:
//
//  1. A top-level part whose value is a literal gets the new literal.
//  2. A value that is a plain reference to a top-level `let` P
//     (`R1: resistor (a, b) R`, or an instance option `Rfb=Rf` under rule
//  4. rewrites P's value instead, when every use of P anywhere in the
//     file is such a plain reference, all of them get the same new value
//     and P is not overridden (ov). The let keeps its tolerance, so a
//     shared draw stays shared. When the conditions fail, each use gets
//     the literal (rule 3) and the let stays.
//  3. Any other value expression is replaced by the literal; a note says
//     so. An expression that uses exactly one toleranced let P (`2*C`) is
//     replaced by k*P instead (`2.2*C`), so the part keeps following P's
//     shared draw; with several toleranced lets the note says which draws
//     the part no longer follows.
//  4. A part inside a block instance X (one level deep) whose value in
//     the block body is a plain reference to a block parameter K that the
//     instance sets (`LP1: lowpass2 (in, out) R=10k`) rewrites that
//     instance option (by rules 1–3), when every use of K in the block is
//     such a plain part value and they all get the same new value. Every
//     other part of an instance is skipped with the reason.
func PlanValues(f *File, c *Circuit, values map[string]float64, digits int, ov Overrides) *ValuePlan {
	plan := &ValuePlan{Skipped: map[string]string{}}
	idx := indexFile(f)
	toleranced := map[string]bool{}
	for _, v := range c.Variations {
		if v.IsParam {
			toleranced[v.Name] = true
		}
	}
	byName := make(map[string]*Part, len(c.Parts))
	for i := range c.Parts {
		byName[c.Parts[i].Name] = &c.Parts[i]
	}
	names := make([]string, 0, len(values))
	for n := range values {
		names = append(names, n)
	}
	sort.Strings(names)

	lets := map[string]*shareGroup{}  // by let name
	insts := map[string]*shareGroup{} // by "LP1:R" (instance:parameter)
	join := func(m map[string]*shareGroup, key string, span Span, uses int, s shareSite) {
		g := m[key]
		if g == nil {
			g = &shareGroup{span: span, text: s.text, uses: uses, same: true}
			m[key] = g
		}
		g.sites = append(g.sites, s)
		g.same = g.same && g.text == s.text
	}
	letOf := func(x *Expr) string {
		if ref := bareName(x); ref != "" && idx.lets[ref] != nil && !hasOverride(ov, ref) {
			return ref
		}
		return ""
	}
	paramValue, paramUnit := map[string]float64{}, map[string]string{}
	for _, p := range c.Params {
		paramValue[p.Name], paramUnit[p.Name] = p.Value, p.Unit
	}
	literal := func(s shareSite) {
		old := string(f.Source[s.span.Start:s.span.End])
		// An expression that follows one toleranced let P keeps following
		// it: the new value is written as k*P, so the shared draw (parts
		// from one reel) survives the rounding.
		// Only when P is in the part's own unit (C in F for a capacitor),
		// so that k is a plain ratio.
		if shared := usedNames(s.expr, toleranced); !isLiteralExpr(s.expr) && len(shared) == 1 && paramValue[shared[0]] != 0 && s.value != 0 &&
			s.unit != "" && paramUnit[shared[0]] == s.unit {
			k := s.value / paramValue[shared[0]]
			text := strconv.FormatFloat(k, 'g', 12, 64) + "*" + shared[0]
			plan.Edits = append(plan.Edits, ValueEdit{Span: s.span, Text: text})
			plan.Notes = append(plan.Notes, fmt.Sprintf("%s: value %s replaced by %s (= %s), still one draw with %s", s.label, old, text, s.text, shared[0]))
			return
		}
		plan.Edits = append(plan.Edits, ValueEdit{Span: s.span, Text: s.text})
		if !isLiteralExpr(s.expr) {
			plan.Notes = append(plan.Notes, fmt.Sprintf("%s: value %s replaced by %s", s.label, old, s.text)+droppedNote(s.expr, toleranced))
		}
	}

	for _, name := range names {
		p, ok := byName[name]
		if !ok {
			plan.Skipped[name] = "no such part"
			continue
		}
		x := idx.exprAt[p.ValueSpan.Start]
		if p.ValueSpan.End <= p.ValueSpan.Start || x == nil {
			plan.Skipped[name] = "its value is not written in the file"
			continue
		}
		site := shareSite{span: p.ValueSpan, expr: x, parts: []string{name}, label: name, text: FormatLiteral(values[name], literalUnit(p.Kind), digits), value: values[name], unit: p.Kind.Unit()}
		prefix, local, nested := strings.Cut(name, ".")
		if !nested {
			if l := letOf(x); l != "" {
				join(lets, l, spanOf(f, idx.lets[l].Value), idx.globalUses[l], site)
			} else {
				literal(site)
			}
			continue
		}
		inst := idx.elems[prefix]
		var b *BlockStmt
		if inst != nil {
			b = idx.blocks[inst.Kind.Word()]
		}
		switch {
		case inst == nil || b == nil:
			plan.Skipped[name] = "its block instance was not found in the source"
		case strings.Contains(local, "."):
			plan.Skipped[name] = fmt.Sprintf("its value is set inside nested blocks of %s; override it on the instance", b.Name)
		default:
			k := bareName(x)
			opt := instanceOption(inst, k)
			switch {
			case k == "" || !blockHasParam(b, k):
				plan.Skipped[name] = fmt.Sprintf("its value is set inside block %s; override it on the instance", b.Name)
			case opt == nil:
				plan.Skipped[name] = fmt.Sprintf("its value is the default of parameter %s of block %s; give %s= on instance %s to snap it", k, b.Name, k, prefix)
			default:
				join(insts, prefix+":"+k, spanOf(f, opt.Value), idx.blockUses[b.Name][k], site)
			}
		}
	}
	for _, key := range sortedKeys(insts) {
		g := insts[key]
		inst, k, _ := strings.Cut(key, ":")
		what := "option " + k + "= of " + inst
		if why := g.problem(what); why != "" {
			for _, s := range g.sites {
				for _, name := range s.parts {
					plan.Skipped[name] = why + "; override it on the instance"
				}
			}
			continue
		}
		opt := instanceOption(idx.elems[inst], k)
		site := shareSite{span: g.span, expr: opt.Value, parts: g.partNames(), label: what, text: g.text, value: g.sites[0].value, unit: g.sites[0].unit}
		if l := letOf(opt.Value); l != "" {
			join(lets, l, spanOf(f, idx.lets[l].Value), idx.globalUses[l], site)
		} else {
			literal(site)
		}
	}
	for _, name := range sortedKeys(lets) {
		g := lets[name]
		what := "let " + name
		if why := g.problem(what); why != "" {
			plan.Notes = append(plan.Notes, fmt.Sprintf("%s kept: %s", what, why))
			for _, s := range g.sites {
				literal(s)
			}
			continue
		}
		plan.Edits = append(plan.Edits, ValueEdit{Span: g.span, Text: g.text})
		// A let is a design equation held at nominal in tolerance runs, so
		// replacing its expression drops no shared draw.
		plan.Notes = append(plan.Notes, fmt.Sprintf("%s rewritten to %s for %s", what, g.text, strings.Join(g.partNames(), ", ")))
	}
	sort.Slice(plan.Edits, func(i, j int) bool { return plan.Edits[i].Span.Start < plan.Edits[j].Span.Start })
	return plan
}

// shareSite is one place that refers to a shared let or block parameter:
// the expression a literal would replace, the parts whose value it sets
// and their new value text.
type shareSite struct {
	span  Span
	expr  *Expr
	parts []string
	label string // the part name, or "option R= of LP1"
	text  string
	value float64 // the new value in SI units
	unit  string  // the unit of the part's value ("F", "Ω", ...)
}

// shareGroup collects the sites of one let or instance option.
type shareGroup struct {
	span  Span // the let's or the option's value expression
	text  string
	uses  int // references to the name in its scope
	sites []shareSite
	same  bool // every site has the same text
}

// problem says why the shared value cannot be rewritten; "" when it can.
func (g *shareGroup) problem(what string) string {
	switch {
	case !g.same:
		return fmt.Sprintf("the parts using %s (%s) round to different values", what, strings.Join(g.partNames(), ", "))
	case g.uses != len(g.sites):
		return fmt.Sprintf("%s is also used elsewhere", what)
	}
	return ""
}

func (g *shareGroup) partNames() []string {
	var out []string
	for _, s := range g.sites {
		out = append(out, s.parts...)
	}
	return out
}

func sortedKeys(m map[string]*shareGroup) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

func hasOverride(ov Overrides, name string) bool {
	_, ok := ov[name]
	return ok
}

// fileIndex locates the statements and expressions of a parsed file.
type fileIndex struct {
	exprAt     map[int]*Expr // element value expressions by start offset
	lets       map[string]*LetStmt
	elems      map[string]*ElementStmt // top-level elements and instances
	blocks     map[string]*BlockStmt
	globalUses map[string]int            // references to each name anywhere in the file
	blockUses  map[string]map[string]int // per block: references inside its defaults and body
}

func indexFile(f *File) *fileIndex {
	idx := &fileIndex{
		exprAt: map[int]*Expr{}, lets: map[string]*LetStmt{}, elems: map[string]*ElementStmt{},
		blocks: map[string]*BlockStmt{}, globalUses: map[string]int{}, blockUses: map[string]map[string]int{},
	}
	count := func(m map[string]int) func(*Expr) {
		return func(x *Expr) { walkRefs(x, func(n string) { m[n]++ }) }
	}
	global := count(idx.globalUses)
	var stmt func(st *Stmt, top bool, in func(*Expr))
	stmt = func(st *Stmt, top bool, in func(*Expr)) {
		switch {
		case st.Let != nil:
			if top {
				idx.lets[st.Let.Name] = st.Let
			}
			in(st.Let.Value)
			global(st.Let.Value)
			itemExprs(st.Let.Items, in, global)
		case st.Element != nil:
			if top {
				idx.elems[st.Element.Name] = st.Element
			}
			for i, it := range st.Element.Items {
				if it.Expr != nil && i == 0 {
					idx.exprAt[it.Expr.Pos.Offset] = it.Expr
				}
			}
			itemExprs(st.Element.Items, in, global)
		case st.Block != nil:
			b := st.Block
			idx.blocks[b.Name] = b
			uses := map[string]int{}
			idx.blockUses[b.Name] = uses
			local := count(uses)
			for _, d := range b.Defaults {
				local(d.Value)
				global(d.Value)
			}
			for _, s := range b.Body {
				stmt(s, false, local)
			}
		}
	}
	for _, st := range f.Stmts {
		stmt(st, true, func(*Expr) {})
	}
	return idx
}

// itemExprs passes every expression of trailing items to each visitor.
func itemExprs(items []*Item, visit ...func(*Expr)) {
	for _, it := range items {
		var x *Expr
		switch {
		case it.Expr != nil:
			x = it.Expr
		case it.Option != nil:
			x = it.Option.Value
		case it.Tol != nil:
			x = it.Tol.Value
		}
		for _, v := range visit {
			v(x)
		}
	}
}

// walkRefs calls visit for every parameter name referenced in x (not the
// names of functions called).
func walkRefs(x *Expr, visit func(string)) {
	if x == nil {
		return
	}
	var term func(*Term)
	var unary func(*Unary)
	unary = func(u *Unary) {
		if u == nil {
			return
		}
		if u.Neg != nil {
			unary(u.Neg)
			return
		}
		if u.Plus != nil {
			unary(u.Plus)
			return
		}
		if u.Power == nil {
			return
		}
		unary(u.Power.Exp)
		b := u.Power.Base
		switch {
		case b == nil:
		case b.Ref != nil && b.Ref.Open == "":
			visit(b.Ref.Name)
		case b.Ref != nil:
			for _, a := range b.Ref.Args {
				walkRefs(a, visit)
			}
		default:
			for _, g := range b.Group {
				walkRefs(g, visit)
			}
		}
	}
	term = func(t *Term) {
		if t == nil {
			return
		}
		unary(t.Left)
		for _, r := range t.Rest {
			unary(r.Unary)
		}
	}
	term(x.Left)
	for _, r := range x.Rest {
		term(r.Term)
	}
}

// droppedNote says which toleranced lets x used, whose shared draw a
// literal in its place no longer follows; "" when none.
func droppedNote(x *Expr, toleranced map[string]bool) string {
	dropped := usedNames(x, toleranced)
	if len(dropped) == 0 {
		return ""
	}
	return fmt.Sprintf("; it no longer follows the shared tolerance of %s", strings.Join(dropped, ", "))
}

// usedNames returns the names of set referenced by x, sorted.
func usedNames(x *Expr, set map[string]bool) []string {
	seen := map[string]bool{}
	var out []string
	walkRefs(x, func(n string) {
		if set[n] && !seen[n] {
			seen[n] = true
			out = append(out, n)
		}
	})
	sort.Strings(out)
	return out
}

// isLiteralExpr reports whether x is one value literal, possibly signed.
func isLiteralExpr(x *Expr) bool {
	if x == nil || len(x.Rest) > 0 || len(x.Left.Rest) > 0 {
		return false
	}
	u := x.Left.Left
	for u.Neg != nil || u.Plus != nil {
		u = cmp.Or(u.Neg, u.Plus)
	}
	return u.Power != nil && u.Power.Exp == nil && u.Power.Base.Number != ""
}

func instanceOption(inst *ElementStmt, key string) *Option {
	for _, it := range inst.Items {
		if it.Option != nil && it.Option.Key == key {
			return it.Option
		}
	}
	return nil
}

func blockHasParam(b *BlockStmt, key string) bool {
	for _, d := range b.Defaults {
		if d.Key == key {
			return true
		}
	}
	return false
}

// spanOf returns the source range of an expression.
func spanOf(f *File, x *Expr) Span {
	start := x.Pos.Offset
	return Span{Start: start, End: tokensEnd(start, x.Tokens)}
}
