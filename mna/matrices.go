package mna

import (
	"fmt"
	"math/cmplx"

	"nodal/netlist"
)

// Matrices are the MNA matrices of one circuit, independent of any input
// or output: Y(s) = G + sC over the unknowns x (node voltages, reference
// removed, in the circuit's node order, then the branch currents), with
// every independent source zeroed (voltage sources shorted, current
// sources opened). Build them once per circuit with BuildMatrices; Excite
// derives right-hand sides from them and never changes them.
//
// Invariants: G and C are n×n compressed-column matrices (1×1 zero when
// n = 0), n = len(Unknowns); Unknowns[i] names row/column i as "v(NODE)"
// or "i(PART)".
type Matrices struct {
	Unknowns []string
	G, C     *Sparse

	c        *netlist.Circuit
	controls map[string]control // gain element → its control terms
	idx      index
	orders   *orderCache // the shared fill-reducing order, made on first solve
}

// Size returns n, the number of unknowns.
func (m *Matrices) Size() int { return len(m.Unknowns) }

// NodeIndex returns the row of node's voltage in x, or -1 for Ground or an
// unknown name.
func (m *Matrices) NodeIndex(node string) int {
	if i, ok := m.idx.nodeIndex[node]; ok {
		return i
	}
	return -1
}

// BranchIndex returns the row of the branch current of part in x, or -1
// when the part has no branch current.
func (m *Matrices) BranchIndex(part string) int {
	if i, ok := m.idx.branchIndex[part]; ok {
		return i
	}
	return -1
}

// Excited is one excitation applied to a circuit's matrices:
//
//	(M.G + s·M.C)·x = B·u
//
// M is the circuit's shared Matrices for a Drive or an Injection, and a
// modified copy for the kinds that change stamps (SourceTest of a voltage
// source, BrokenControl); the shared one is never changed. B is real,
// length M.Size().
type Excited struct {
	M  *Matrices
	B  []float64
	Ex Excitation // resolved
	// Amplitude is the complex small-signal amplitude the file gives the
	// driven source (amplitude·e^{j·phase}) for Drive, 1 otherwise.
	Amplitude complex128
}

// Excite resolves ex against the circuit (see Resolve) and returns its
// right-hand side, with modified matrices where the excitation changes
// stamps. Errors: *LookupError for an unknown name.
func (m *Matrices) Excite(ex Excitation) (*Excited, error) {
	ex, err := newNames(m.c).excitation(ex)
	if err != nil {
		return nil, err
	}
	n := m.Size()
	e := &Excited{M: m, B: make([]float64, n), Ex: ex, Amplitude: 1}
	add := func(r int, v float64) {
		if r >= 0 {
			e.B[r] += v
		}
	}
	switch ex.Kind {
	case Drive, SourceTest:
		p, _ := m.c.Part(ex.Source)
		k := m.BranchIndex(p.Name)
		switch {
		case p.Kind == netlist.VoltageSource && ex.Kind == Drive:
			add(k, 1)
			e.Amplitude = complex(p.Value, 0) * cmplx.Exp(complex(0, p.PhaseRad))
		case p.Kind == netlist.VoltageSource:
			// The row v(a) − v(b) = 0 becomes i = −u: the test current u
			// leaves the + terminal into the circuit.
			e.M = m.copyWith(func(g, c []triplet) ([]triplet, []triplet) {
				g, c = dropRow(g, k), dropRow(c, k)
				return append(g, triplet{k, k, 1}), c
			})
			e.M.idx.edges = append([]edge(nil), m.idx.edges...)
			for i := range e.M.idx.edges {
				if e.M.idx.edges[i].part == p.Name {
					e.M.idx.edges[i].kind = edgeCurrent
				}
			}
			add(k, -1)
		case k >= 0:
			add(k, -1) // a sensed current source: its row is i = −u
		default:
			add(m.NodeIndex(p.Nodes[0]), 1)
			add(m.NodeIndex(p.Nodes[1]), -1)
		}
		if p.Kind == netlist.CurrentSource && ex.Kind == Drive {
			e.Amplitude = complex(p.Value, 0) * cmplx.Exp(complex(0, p.PhaseRad))
		}
	case Injection:
		add(m.NodeIndex(ex.Inject), 1)
		add(m.NodeIndex(ex.Ref), -1)
	case BrokenControl:
		ctl := m.controls[ex.Part]
		e.M = m.copyWith(func(g, c []triplet) ([]triplet, []triplet) {
			for i, r := range ctl.rows {
				for j, col := range ctl.cols {
					if r >= 0 && col >= 0 {
						g = append(g, triplet{r, col, -ctl.w[i] * ctl.sig[j]})
					}
				}
			}
			return g, c
		})
		for i, r := range ctl.rows {
			add(r, -ctl.w[i])
		}
		// The broken element is no gain element of the copy (GainEntries,
		// GainParts): its control terms are gone from G.
		e.M.controls = make(map[string]control, len(m.controls)-1)
		for part, c := range m.controls {
			if part != ex.Part {
				e.M.controls[part] = c
			}
		}
	}
	return e, nil
}

// copyWith returns a copy of m whose G and C entries edit has changed
// (it returns the edited triplets; added triplets sum with existing ones).
func (m *Matrices) copyWith(edit func(g, c []triplet) ([]triplet, []triplet)) *Matrices {
	out := *m
	g, c := edit(m.G.triplets(), m.C.triplets())
	out.G, out.C = newSparse(m.Size(), g), newSparse(m.Size(), c)
	out.orders = &orderCache{}
	return &out
}

// dropRow returns ts without the entries of row k.
func dropRow(ts []triplet, k int) []triplet {
	out := ts[:0]
	for _, t := range ts {
		if t.i != k {
			out = append(out, t)
		}
	}
	return out
}

// Row is an output row: y = (G + s·C)·x + Feed·u, s in rad/s. G and C are
// real, length n; C is non-zero only for the current of a capacitor
// without a branch, Feed only for the current of the driven current
// source itself (or of a broken current-output gain element).
type Row struct {
	G, C []float64
	Feed float64
}

// At returns y = (G + s·C)·x + Feed·u at s for the solution x of u = 1.
func (r Row) At(s complex128, x []complex128) complex128 {
	y := complex(r.Feed, 0)
	for i, xi := range x {
		if v := complex(r.G[i], 0) + s*complex(r.C[i], 0); v != 0 {
			y += v * xi
		}
	}
	return y
}

// Observe resolves ob against the circuit and this excitation (see
// Resolve) and returns its output row with the resolved observation.
func (e *Excited) Observe(ob Observation) (Row, Observation, error) {
	m := e.M
	ob, err := newNames(m.c).observation(e.Ex, ob)
	if err != nil {
		return Row{}, ob, err
	}
	n := m.Size()
	r := Row{G: make([]float64, n), C: make([]float64, n)}
	add := func(v []float64, i int, x float64) {
		if i >= 0 {
			v[i] += x
		}
	}
	switch ob.Kind {
	case NodeVoltage:
		add(r.G, m.NodeIndex(ob.Node), 1)
		add(r.G, m.NodeIndex(ob.Ref), -1)
	case PartCurrent, SourceCurrent:
		if err := e.currentRow(&r, ob.Part); err != nil {
			return Row{}, ob, err
		}
		if ob.Kind == SourceCurrent {
			for i := range r.G {
				r.G[i], r.C[i] = -r.G[i], -r.C[i]
			}
			r.Feed = -r.Feed
		}
	}
	return r, ob, nil
}

// currentRow writes the current through part (into its first terminal,
// out of its second) as a row.
func (e *Excited) currentRow(r *Row, part string) error {
	m := e.M
	if k := m.BranchIndex(part); k >= 0 {
		r.G[k] = 1
		return nil
	}
	p, _ := m.c.Part(part)
	a, b := -1, -1
	if len(p.Nodes) == 2 {
		a, b = m.NodeIndex(p.Nodes[0]), m.NodeIndex(p.Nodes[1])
	}
	across := func(v []float64, x float64) {
		if a >= 0 {
			v[a] += x
		}
		if b >= 0 {
			v[b] -= x
		}
	}
	broken := e.Ex.Kind == BrokenControl && e.Ex.Part == part
	switch p.Kind {
	case netlist.Resistor:
		across(r.G, 1/p.Value)
	case netlist.Capacitor:
		across(r.C, p.Value)
	case netlist.CurrentSource:
		if (e.Ex.Kind == Drive || e.Ex.Kind == SourceTest) && e.Ex.Source == part {
			r.Feed = -1 // it pushes u out of its first terminal
		}
	case netlist.VCCS, netlist.CCCS:
		// It pushes k·q into its first terminal's node: i = −k·q, q its
		// control (the test signal t when broken).
		if broken {
			r.Feed = -p.Value
			return nil
		}
		ctl := m.controls[part]
		for j, c := range ctl.cols {
			if c >= 0 {
				r.G[c] -= p.Value * ctl.sig[j]
			}
		}
	default:
		return fmt.Errorf("output: part %q (%s) has no current of its own", part, p.Kind)
	}
	return nil
}

// System resolves ob and returns the single-input single-output system of
// this excitation and ob, checked by Structure (the system is returned
// with a *StructureError too). When the row needs s or a feed-through
// (the current of a capacitor, of the driven current source) the system
// gains one unknown "y" with the row y − Row(s)·x = Feed·u, so that its L
// is constant.
func (e *Excited) System(ob Observation) (*System, error) {
	row, ob, err := e.Observe(ob)
	if err != nil {
		return nil, err
	}
	m := e.M
	sys := &System{Unknowns: m.Unknowns, G: m.G, C: m.C, B: e.B, L: row.G,
		Input: e.Ex, Output: ob, SourceAmplitude: e.Amplitude, idx: m.idx, orders: m.orders}
	if n := m.Size(); n > 0 && (!allZero(row.C) || row.Feed != 0) {
		g, c := m.G.triplets(), m.C.triplets()
		for j := 0; j < n; j++ {
			if row.G[j] != 0 {
				g = append(g, triplet{n, j, -row.G[j]})
			}
			if row.C[j] != 0 {
				c = append(c, triplet{n, j, -row.C[j]})
			}
		}
		g = append(g, triplet{n, n, 1})
		sys.Unknowns = append(append([]string(nil), m.Unknowns...), "y")
		sys.G, sys.C = newSparse(n+1, g), newSparse(n+1, c)
		sys.orders = &orderCache{}
		sys.B = append(append([]float64(nil), e.B...), row.Feed)
		sys.L = make([]float64, n+1)
		sys.L[n] = 1
	}
	if err := sys.Structure(); err != nil {
		return sys, err
	}
	return sys, nil
}
