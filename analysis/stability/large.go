package stability

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// The stability of a circuit past MaxUnknowns, with no n×n array:
//
//  1. A circuit of passive parts only gets the passive certificate
//     (passive.go); when it proves every natural frequency in the open
//     left half-plane, that is the answer (Stable, nothing computed).
//  2. Otherwise the pencil is split into the diagonal blocks of its block
//     triangular form by its sparse pattern (transfer.BlockTriangularPattern;
//     det(G + sC) is the product of the blocks' determinants, exactly).
//     Every block of at most MaxUnknowns unknowns is solved by the dense
//     method (wholeEigenvalues): its natural frequencies are all known.
//  3. A larger block whose entries are all stamps of passive parts (the
//     whole circuit passive, or a principal block that holds no control
//     term of a gain element and no op-amp row) has its natural
//     frequencies in the closed left half-plane by the same energy
//     argument; nothing more is claimed for it.
//  4. A larger active block is searched by shift-and-invert Arnoldi
//     (arnoldi.go) for natural frequencies in the right half-plane; one
//     found is kept only after its residual check. Finding none proves
//     nothing.
//
// The class is then Unstable when some natural frequency (computed or
// found) is in the right half-plane or repeated on the axis; Unchecked
// when an active large block found none; Passive when a passive large
// block remains; else that of the computed frequencies (all of them).

// largeResult returns the stability of the circuit c with matrices m,
// m.Size() > MaxUnknowns.
func largeResult(c *netlist.Circuit, m *mna.Matrices) (*Result, error) {
	n := m.Size()
	adj := make([][]int, n)
	add := func(i, j int, _ float64) { adj[i] = append(adj[i], j) }
	m.G.Each(add)
	m.C.Each(add)
	blocks := transfer.BlockTriangularPattern(adj)
	if blocks == nil {
		return nil, ErrSingularPencil // no perfect matching: det ≡ 0 by structure
	}
	w0 := normRatio(m.G, m.C)
	verdict, passive := passiveCertificate(c, m)
	if passive && verdict.singular {
		return nil, fmt.Errorf("%w (voltage sources close a loop)", ErrSingularPencil)
	}
	if passive && verdict.strict() {
		// The certificate assumes det(G + sC) ≢ 0. A passive circuit has
		// no natural frequency at s = w0 > 0, so Y(w0) is regular unless
		// det ≡ 0.
		y := mna.NewShiftSolver(&mna.System{Unknowns: m.Unknowns, G: m.G, C: m.C})
		if err := y.Factor(complex(w0, 0)); err != nil {
			return nil, fmt.Errorf("%w (Y(s) is singular at s = %g rad/s, where a passive circuit has no natural frequency)", ErrSingularPencil, w0)
		}
		return &Result{Class: Stable, Reason: ReasonPassive}, nil
	}
	gainIn := gainEntryTest(c, m)
	res := &Result{}
	var roots, found []complex128
	var suspect []transfer.PencilBlock // blocks with an offending frequency
	passiveBlock, unchecked := false, false
	strictBlocks := 0 // large blocks proven strictly stable by blockCertificate
	// Y(0) regular by mna's pivot rule: no block has a root at s = 0.
	regularAt0 := mna.NewSolver(m).Factor(0) == nil
	var blockOf []int // per root of roots: the index in blocks of its block
	for bi, b := range blocks {
		g, cm := m.G.Sub(b.Rows, b.Cols), m.C.Sub(b.Rows, b.Cols)
		if len(b.Rows) <= MaxUnknowns {
			r, _, err := wholeEigenvalues(g.Dense(), cm.Dense(), regularAt0)
			if err != nil {
				return nil, err
			}
			roots = append(roots, r...)
			for range r {
				blockOf = append(blockOf, bi)
			}
			if cl, _ := Classify(slices.Clone(r)); cl != Stable {
				suspect = append(suspect, b)
			}
			continue
		}
		if !passive && passivePrincipal(b, gainIn) {
			in := make([]bool, n)
			for _, r := range b.Rows {
				in[r] = true
			}
			if v, ok := blockCertificate(c, m, in); ok && v.strict() {
				strictBlocks++
				continue // strictly stable, nothing left to say
			}
		}
		res.LargestBlock = max(res.LargestBlock, len(b.Rows))
		if passive || passivePrincipal(b, gainIn) {
			passiveBlock = true
			continue
		}
		s, err := searchUnstable(g, cm, b.Rows)
		if err != nil {
			return nil, err
		}
		found = append(found, s.poles...)
		if len(s.poles) > 0 {
			suspect = append(suspect, b)
		}
		res.Backward = max(res.Backward, s.backward)
		if res.SearchedRad[0] == 0 || s.lo < res.SearchedRad[0] {
			res.SearchedRad[0] = s.lo
		}
		res.SearchedRad[1] = max(res.SearchedRad[1], s.hi)
		if len(s.poles) == 0 {
			unchecked = true
		}
	}
	res.suspects = suspects(m, suspect)
	rootBlocks := slices.Clone(roots) // roots in block order, before Classify sorts them
	cl, off := Classify(roots)
	repeatUndecided := false
	if cl == Unstable && len(off) > 0 && !slices.ContainsFunc(off, func(r complex128) bool { return real(r) != 0 }) {
		if cl = axisRepeatsAcrossBlocks(m, blocks, rootBlocks, blockOf, off); cl == Unchecked {
			repeatUndecided, cl = true, Marginal // what the other blocks' verdicts are weighed against below
		}
	}
	res.Natural = append(roots, found...)
	sortByRealPart(res.Natural)
	computed := !unchecked && !passiveBlock && strictBlocks == 0 && len(found) == 0
	switch {
	case repeatUndecided && len(found) == 0:
		res.Class, res.Offending, res.Reason = Unchecked, off, ReasonRepeatedAxis
		res.AllNatural = computed
	case computed:
		res.Class, res.Offending, res.AllNatural = cl, off, true
	case cl == Unstable || len(found) > 0:
		res.Class, res.Offending = Unstable, append(found, off...)
		sortByRealPart(res.Offending)
		res.Reason = ReasonSomeNatural
		if len(found) > 0 {
			res.Reason = ReasonFound
		}
	case unchecked:
		res.Class, res.Reason = Unchecked, ReasonNotFound
	case passiveBlock:
		res.Class, res.Reason = Passive, ReasonPassiveBlock
		if passive {
			res.Reason = ReasonPassiveLossless
			if verdict.zero {
				res.Reason = ReasonPassiveZero
			}
		}
	default: // every large block proven strictly stable by blockCertificate
		res.Class, res.Offending, res.Reason = cl, off, ReasonPassiveBlocks
	}
	return res, nil
}

// sortByRealPart sorts zs by decreasing real part, then imaginary part
// (the order of Classify).
func sortByRealPart(zs []complex128) {
	slices.SortStableFunc(zs, func(a, b complex128) int {
		switch {
		case real(a) != real(b):
			if real(a) > real(b) {
				return -1
			}
			return 1
		case imag(a) > imag(b):
			return -1
		case imag(a) < imag(b):
			return 1
		}
		return 0
	})
}

// normRatio is ‖G‖_F/‖C‖_F (rad/s), the characteristic frequency of the
// whole pencil that Classify judges "zero" by (as FiniteEigenvalues), 1
// when either is zero.
func normRatio(g, c *mna.Sparse) float64 {
	gn, cn := frobenius(g), frobenius(c)
	if gn == 0 || cn == 0 {
		return 1
	}
	return gn / cn
}

// frobenius is the Frobenius norm of a.
func frobenius(a *mna.Sparse) float64 {
	s := 0.0
	a.Each(func(_, _ int, v float64) { s = math.Hypot(s, v) })
	return s
}

// gainEntries are the entries of a pencil that are not stamps of passive
// parts or zeroed sources: the control terms of the gain elements and the
// op-amps' own rows.
type gainEntries struct {
	terms [][2]int // control terms (row, column)
	opAmp []int    // op-amp branch rows
}

// gainEntryTest collects the gain entries of c's matrices m.
func gainEntryTest(c *netlist.Circuit, m *mna.Matrices) gainEntries {
	var ge gainEntries
	m.GainEntries(func(_ string, i, j int) { ge.terms = append(ge.terms, [2]int{i, j}) })
	for _, name := range m.GainParts() {
		if p, ok := c.Part(name); ok && p.Kind == netlist.OpAmp {
			if k := m.BranchIndex(name); k >= 0 {
				ge.opAmp = append(ge.opAmp, k)
			}
		}
	}
	return ge
}

// passivePrincipal reports whether block b is a principal block (its rows
// and its columns are the same unknowns) holding no control term of a
// gain element and no op-amp row: its sub-pencil is then the MNA pencil
// of a passive network, the circuit with the other node voltages grounded
// and the other branch currents opened (a gain element's output there is
// its zeroed form), so its natural frequencies lie in the closed left
// half-plane (passive.go).
func passivePrincipal(b transfer.PencilBlock, ge gainEntries) bool {
	in := make(map[int]bool, len(b.Rows))
	for _, r := range b.Rows {
		in[r] = true
	}
	for _, c := range b.Cols {
		if !in[c] {
			return false
		}
	}
	for _, t := range ge.terms {
		if in[t[0]] && in[t[1]] {
			return false
		}
	}
	for _, k := range ge.opAmp {
		if in[k] {
			return false
		}
	}
	return true
}

// suspects returns the gain elements with a control term inside one of
// the blocks: only breaking those can change a block's frequencies
// (removing entries never merges blocks, and an entry between two blocks
// is in none of the diagonal blocks), so involved tries no other.
func suspects(m *mna.Matrices, blocks []transfer.PencilBlock) map[string]bool {
	out := map[string]bool{}
	if len(blocks) == 0 {
		return out
	}
	rowIn, colIn := make([]int, m.Size()), make([]int, m.Size())
	for k, b := range blocks {
		for _, r := range b.Rows {
			rowIn[r] = k + 1
		}
		for _, c := range b.Cols {
			colIn[c] = k + 1
		}
	}
	m.GainEntries(func(part string, i, j int) {
		if rowIn[i] != 0 && rowIn[i] == colIn[j] {
			out[part] = true
		}
	})
	return out
}

// axisRepeatsAcrossBlocks decides the class of a large circuit whose only
// offending natural frequencies, off, are repeated on the jω axis (Classify
// said Unstable): roots are the dense blocks' natural frequencies in block
// order, blockOf the index in blocks of each one's block. The repeated
// roots may sit in different diagonal blocks of the block triangular
// form, where a one-way coupling can still make a Jordan chain (a tank
// driving its twin) or not (two tanks side by side). The blocks from the
// first to the last holding an axis root, with every block between them
// (a chain can only run forward through them), form one principal
// sub-pencil with the same modes at those frequencies (blocks outside the
// range have other spectra and decouple: common practice, the Sylvester
// equation of disjoint spectra), and semisimpleAxis decides on it when it
// has at most MaxUnknowns unknowns: Marginal when every repeated one has
// as many modes as its multiplicity, else Unstable. A larger range is
// Unchecked (the verdict is not decided).
func axisRepeatsAcrossBlocks(m *mna.Matrices, blocks []transfer.PencilBlock, roots []complex128, blockOf []int, off []complex128) Class {
	lo, hi := len(blocks), -1
	for i, r := range roots {
		if real(r) == 0 || math.Abs(real(r)) <= AxisTol*cmplx.Abs(r) {
			for _, o := range off {
				if cmplx.Abs(r-o) <= repeatTol*math.Max(cmplx.Abs(r), cmplx.Abs(o)) {
					lo, hi = min(lo, blockOf[i]), max(hi, blockOf[i])
				}
			}
		}
	}
	if hi < lo {
		return Unstable
	}
	var rows, cols []int
	for _, b := range blocks[lo : hi+1] {
		rows = append(rows, b.Rows...)
		cols = append(cols, b.Cols...)
	}
	if len(rows) > MaxUnknowns {
		return Unchecked
	}
	if semisimpleAxis(m.G.Sub(rows, cols).Dense(), m.C.Sub(rows, cols).Dense(), off) {
		return Marginal
	}
	return Unstable
}
