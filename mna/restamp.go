package mna

import (
	"errors"
	"fmt"
	"math/cmplx"
	"sort"

	"nodal/netlist"
)

// ErrNotRestampable means a probe's system cannot be restamped in place:
// its excitation changes stamps (SourceTest of a voltage source,
// BrokenControl) or its observation row depends on part values or on s
// (the current of a resistor or capacitor without a branch, of the driven
// current source), so the System is not the circuit's own G and C. Such a
// probe is rebuilt for every set of values (Build).
var ErrNotRestampable = errors.New("this probe's system cannot be restamped (its excitation or its output row depends on part values)")

// ErrPatternChanged means the circuit given to Restamp does not stamp the
// pattern held: other parts, nodes or kinds, or values that make a stored
// entry of G or C exactly zero (or a dropped one non-zero). Build that
// circuit instead.
var ErrPatternChanged = errors.New("restamp: the circuit does not stamp the held pattern")

// Restamper holds the MNA system of one circuit for one probe and rewrites
// its part values in place (Restamp) for circuits of the same topology, as
// a tolerance run's draws are: the non-zero pattern of G and C, the
// fill-reducing order and the structure check are those of the circuit
// given to NewRestamper, kept; only the values change. The values written
// are bit-for-bit those Build gives the new circuit: the same stamps summed
// in the same order.
//
// A Restamper owns its System and Matrices (Sweepers and Solvers made
// from them see every Restamp, with no new working memory) and is not safe
// for concurrent use: Clone gives each goroutine its own, sharing the
// pattern and the order. Structure and DCSingular are those of the first
// circuit (they depend on the topology only).
type Restamper struct {
	b      *builder
	m      *Matrices
	sys    *System
	g, c   restampTarget
	edges  []edge // scratch for the re-stamped edges (the held ones stay)
	drive  string // the driven source for SourceAmplitude, or ""
	pencil *pencil
	gOf    []int // pencil entry → index in m.G's values, or −1
	cOf    []int // pencil entry → index in m.C's values, or −1
}

// restampTarget maps the stamps of one matrix (G or C) onto its stored
// values: stamp t adds to slot[t], which is an index into the Sparse's
// values, or ≥ NNZ for a place whose stamps summed to exactly zero when
// the pattern was made (it must stay zero).
type restampTarget struct {
	sp   *Sparse
	i, j []int // the place of every stamp, in stamping order
	slot []int
	acc  []float64 // NNZ stored values, then the dropped places
}

// NewRestamper builds the system of c for the probe (in, out) exactly as
// Build does and returns a Restamper holding it. Errors are those of Build
// (the Restamper is nil), or ErrNotRestampable.
func NewRestamper(c *netlist.Circuit, in Input, out Output) (*Restamper, error) {
	in, out, err := Resolve(c, in, out)
	if err != nil {
		return nil, err
	}
	b, err := newBuilder(c)
	if err != nil {
		return nil, err
	}
	if err := b.stampAll(); err != nil {
		return nil, err
	}
	m := b.matrices()
	e, err := m.Excite(in)
	if err != nil {
		return nil, err
	}
	sys, err := e.System(out)
	if err != nil {
		return nil, err
	}
	if e.M != m || sys.G != m.G || sys.C != m.C {
		return nil, ErrNotRestampable
	}
	if ob := sys.Output; ob.Kind == PartCurrent || ob.Kind == SourceCurrent {
		if m.BranchIndex(ob.Part) < 0 {
			return nil, ErrNotRestampable // the row holds 1/R or C of the part
		}
	}
	r := &Restamper{b: b, m: m, sys: sys, g: newRestampTarget(m.G, b.g), c: newRestampTarget(m.C, b.cap)}
	if ex := sys.Input; ex.Kind == Drive {
		r.drive = ex.Source
	}
	o := m.order()
	r.pencil = o.p
	r.gOf, r.cOf = pencilSlots(o.p, m.G), pencilSlots(o.p, m.C)
	return r, nil
}

// stampAll stamps every part of b.c, then the couplings (BuildMatrices).
func (b *builder) stampAll() error {
	for i := range b.c.Parts {
		if err := b.stamp(&b.c.Parts[i]); err != nil {
			return err
		}
	}
	return b.stampCouplings()
}

func newRestampTarget(sp *Sparse, ts []triplet) restampTarget {
	t := restampTarget{sp: sp, i: make([]int, len(ts)), j: make([]int, len(ts)), slot: make([]int, len(ts))}
	dropped := map[[2]int]int{}
	for k, tr := range ts {
		t.i[k], t.j[k] = tr.i, tr.j
		if e, ok := sp.find(tr.i, tr.j); ok {
			t.slot[k] = e
			continue
		}
		id, ok := dropped[[2]int{tr.i, tr.j}]
		if !ok {
			id = sp.NNZ() + len(dropped)
			dropped[[2]int{tr.i, tr.j}] = id
		}
		t.slot[k] = id
	}
	t.acc = make([]float64, sp.NNZ()+len(dropped))
	return t
}

// find returns the index in m's values of entry (i, j), if stored.
func (m *Sparse) find(i, j int) (int, bool) {
	rows := m.rowIdx[m.colPtr[j]:m.colPtr[j+1]]
	k := sort.SearchInts(rows, i)
	if k < len(rows) && rows[k] == i {
		return m.colPtr[j] + k, true
	}
	return -1, false
}

// pencilSlots maps every entry of the pencil's union pattern to its index
// in sp's values, −1 where sp has no entry.
func pencilSlots(p *pencil, sp *Sparse) []int {
	out := make([]int, len(p.rowIdx))
	for j := 0; j < p.n; j++ {
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			k, _ := sp.find(p.rowIdx[e], j)
			out[e] = k
		}
	}
	return out
}

// System returns the held system (its values those of the last Restamp).
func (r *Restamper) System() *System { return r.sys }

// Matrices returns the held circuit matrices (the System's G and C).
func (r *Restamper) Matrices() *Matrices { return r.m }

// Restamp writes the part values of v into the held pattern. v must have
// the parts of the first circuit, in the same order, on the same nodes, of
// the same kinds (Circuit.Vary of it, for instance); only values may
// differ. Errors: *PartError for a value that cannot be stamped (as Build
// gives), ErrPatternChanged when v's stamps leave the pattern. After an
// error the held values are unspecified: Restamp again before solving.
func (r *Restamper) Restamp(v *netlist.Circuit) error {
	b := r.b
	if len(v.Parts) != len(b.c.Parts) {
		return fmt.Errorf("%w: %d parts, not %d", ErrPatternChanged, len(v.Parts), len(b.c.Parts))
	}
	held := b.edges
	b.c, b.g, b.cap, b.edges = v, b.g[:0], b.cap[:0], r.edges[:0]
	clear(b.controls)
	err := b.stampAll()
	r.edges, b.edges = b.edges, held
	if err != nil {
		return err
	}
	if err := r.g.scatter(b.g); err != nil {
		return err
	}
	if err := r.c.scatter(b.cap); err != nil {
		return err
	}
	p := r.pencil
	for e := range p.gv {
		p.gv[e], p.cv[e] = valueAt(r.m.G, r.gOf[e]), valueAt(r.m.C, r.cOf[e])
	}
	r.m.c = v
	if r.drive != "" {
		if s, ok := v.Part(r.drive); ok {
			r.sys.SourceAmplitude = complex(s.Value, 0) * cmplx.Exp(complex(0, s.PhaseRad))
		}
	}
	return nil
}

// valueAt returns sp's value k, 0 for k < 0.
func valueAt(sp *Sparse, k int) float64 {
	if k < 0 {
		return 0
	}
	return sp.val[k]
}

// scatter sums the stamps ts into the stored values, in stamping order
// (so each sum is rounded as newSparse rounds it), checking that every
// stamp lands where the pattern has it and that no stored value becomes
// zero nor a dropped place non-zero.
func (t *restampTarget) scatter(ts []triplet) error {
	if len(ts) != len(t.slot) {
		return fmt.Errorf("%w: %d stamps, not %d", ErrPatternChanged, len(ts), len(t.slot))
	}
	clear(t.acc)
	for k, tr := range ts {
		if tr.i != t.i[k] || tr.j != t.j[k] {
			return fmt.Errorf("%w: stamp %d at (%d, %d), not (%d, %d)", ErrPatternChanged, k, tr.i, tr.j, t.i[k], t.j[k])
		}
		t.acc[t.slot[k]] += tr.v
	}
	nnz := t.sp.NNZ()
	for k, v := range t.acc {
		if (v == 0) != (k >= nnz) {
			return fmt.Errorf("%w: an entry of G or C became %g", ErrPatternChanged, v)
		}
	}
	copy(t.sp.val, t.acc[:nnz])
	return nil
}

// Clone returns a Restamper with a copy of r's values for another
// goroutine; the pattern, the order and the index maps are shared
// (read-only). r must not be in use during Clone.
func (r *Restamper) Clone() *Restamper {
	b := *r.b
	b.g = append([]triplet(nil), r.b.g...)
	b.cap = append([]triplet(nil), r.b.cap...)
	b.controls = make(map[string]control, len(r.b.controls))
	for k, v := range r.b.controls {
		b.controls[k] = v
	}
	g, c := r.m.G.copyValues(), r.m.C.copyValues()
	p := *r.pencil
	p.g, p.c = g, c
	p.gv, p.cv = append([]float64(nil), r.pencil.gv...), append([]float64(nil), r.pencil.cv...)
	src := r.m.order()
	oc := &orderCache{}
	oc.once.Do(func() { oc.o = &luOrder{p: &p, perm: src.perm, inv: src.inv} })
	m := *r.m
	m.G, m.C, m.orders, m.controls = g, c, oc, b.controls
	sys := *r.sys
	sys.G, sys.C, sys.orders = g, c, oc
	out := *r
	out.b, out.m, out.sys, out.pencil = &b, &m, &sys, &p
	out.g, out.c = r.g.cloneFor(g), r.c.cloneFor(c)
	out.edges = nil
	return &out
}

// copyValues returns a Sparse sharing m's pattern with its own values.
func (m *Sparse) copyValues() *Sparse {
	out := *m
	out.val = append([]float64(nil), m.val...)
	return &out
}

// cloneFor returns t for the copy sp of its matrix, with its own sums.
func (t restampTarget) cloneFor(sp *Sparse) restampTarget {
	t.sp = sp
	t.acc = make([]float64, len(t.acc))
	return t
}
