package mna

import (
	"fmt"
	"math"
)

// luFactor is an LU factorisation with threshold partial (row) pivoting
// of the complex matrix Y = G + sC, held in preallocated memory so that one
// value can factor and solve at many frequencies without allocating.
//
// It is the dense path, for systems of at most denseMaxUnknowns unknowns
// (sparse_lu.go has the other). The unknowns are eliminated in a
// fill-reducing order fixed once per system (minimum degree on the
// pattern of G and C, shared through luOrder): position k of the working
// matrix is unknown perm[k]. Rows are then exchanged for
// stability: the diagonal pivot is kept while it is at least pivotKeep
// times the largest candidate in its column, else the largest is taken.
//
// Invariants: len(a) == n*n (row-major, in elimination positions); after
// a successful factor, a holds the unit lower triangle L (below the
// diagonal) and U (on and above), and rows were exchanged k ↔ piv[k] in
// order k = 0…n−1, as in LAPACK's getrf. Columns are never exchanged after
// the initial ordering, so a vanished pivot at position k names unknown
// perm[k].
//
// The factor also records, step by step, the non-zero multipliers of L
// (lRow, lVal from lStart[k]) and the non-zero columns of U's rows (uCol
// from uStart[k]), so that solves cost only the non-zeros.
type luFactor struct {
	n      int
	perm   []int // elimination position → unknown index
	a      []complex128
	piv    []int
	dinv   []complex128 // 1/U_kk
	colmax []float64    // per column: the largest |Y_ij| before elimination (after equilibration)
	rs, cs []float64    // row and column equilibration (powers of two), by position
	rinv   []float64    // 1/rs of the rows in their current (exchanged) order, for factor
	w      []complex128 // scratch: a right-hand side in elimination positions
	rows   []int        // scratch: rows below the pivot with a non-zero in its column
	am     []float64    // with factor's track: |A| + |L|·|U| by position, allocated on first use

	pat []patEntry // the non-zeros of G and C, fixed when the factor is made
	p   *pencil
	o   *luOrder

	lStart, uStart []int
	lRow, uCol     []int
	lVal           []complex128
}

// patEntry is one non-zero of G ∪ C: its place in the working matrix
// (position row·n + column), its column position and its index in the
// pencil's union pattern.
type patEntry struct {
	pos, col, e int
}

func newLUFactor(o *luOrder) *luFactor {
	p := o.p
	n := p.n
	f := &luFactor{
		n:      n,
		p:      p,
		o:      o,
		perm:   o.perm,
		a:      make([]complex128, n*n),
		piv:    make([]int, n),
		dinv:   make([]complex128, n),
		colmax: make([]float64, n),
		rs:     make([]float64, n),
		rinv:   make([]float64, n),
		cs:     make([]float64, n),
		w:      make([]complex128, n),
		rows:   make([]int, 0, n),
		lStart: make([]int, n+1),
		uStart: make([]int, n+1),
		lRow:   make([]int, 0, n*n/2+n),
		uCol:   make([]int, 0, n*n/2+n),
		lVal:   make([]complex128, 0, n*n/2+n),
	}
	for j := 0; j < n; j++ {
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			i := p.rowIdx[e]
			f.pat = append(f.pat, patEntry{pos: o.inv[i]*n + o.inv[j], col: o.inv[j], e: e})
		}
	}
	return f
}

// pivotTol is the relative size below which a pivot counts as vanished: a
// pivot smaller than pivotTol·n times the largest entry of its original
// column is at the level of rounding error.
const pivotTol = 4 * 2.220446049250313e-16

// The pivot decision of both LU paths lives in pivotVanished and
// keepDiagonal below (and heldPivotFails of sparse_lu.go, which composes
// them for the refactorisation): every factorisation asks them, none
// repeats their rule.

// keepDiagonal is the threshold rule: the diagonal candidate, of
// magnitude diag before equilibration (negative when the column has
// none), stays the pivot while it is at least pivotKeep times the
// largest candidate's magnitude best; else the largest is taken.
func keepDiagonal(diag, best float64) bool {
	return diag >= 0 && diag >= pivotKeep*best
}

// mag1 is |re|+|im|, a cheap norm within √2 of |z|.
func mag1(z complex128) float64 { return math.Abs(real(z)) + math.Abs(imag(z)) }

// assemble sets a = R·(G + sC)·K from the pencil, visiting only the
// pattern fixed when the factor was made. R and K are diagonal powers of
// two that bring every row, then every column, to a largest entry in
// [1, 2): the singularity judgement of factor is then relative to the
// matrix's own scale at this s, so extreme but valid values (10⁻¹⁵ Ω with
// 10¹² F) are not mistaken for a singular matrix. Powers of two change no
// digit of the solution.
func (f *luFactor) assemble(s complex128) {
	n := f.n
	clear(f.a)
	clear(f.colmax)
	rmax := f.rs
	clear(rmax)
	for _, e := range f.pat {
		z := f.p.at(e.e, s)
		f.a[e.pos] = z
		if m := mag1(z); m > rmax[e.pos/n] {
			rmax[e.pos/n] = m
		}
	}
	for i, m := range rmax {
		f.rs[i] = pow2Inv(m)
		f.rinv[i] = 1 / f.rs[i]
	}
	cmax := f.cs
	clear(cmax)
	for _, e := range f.pat {
		z := f.a[e.pos] * complex(f.rs[e.pos/n], 0)
		f.a[e.pos] = z
		if m := mag1(z); m > cmax[e.col] {
			cmax[e.col] = m
		}
	}
	for j, m := range cmax {
		f.cs[j] = pow2Inv(m)
	}
	for _, e := range f.pat {
		z := f.a[e.pos] * complex(f.cs[e.col], 0)
		f.a[e.pos] = z
		if m := mag1(z); m > f.colmax[e.col] {
			f.colmax[e.col] = m
		}
	}
}

// pow2Inv returns the power of two 2^−e with m·2^−e in [0.5, 1), or 1
// for m = 0 (an empty row or column: factor reports it), negative, Inf or
// NaN; +Inf when that power is past float64's range (m below about
// 2^−1023).
//
// Written for the inliner, on the bits: for m normal with biased
// exponent E ≤ 2044 the power is 2^(1022−(E−1023)), biased 2045 − E; a
// subnormal m, or one from 2^1022 up, is first brought by 2^±54 into that
// range and the power scaled back, exactly (a product of powers of two).
func pow2Inv(m float64) float64 {
	if !(m > 0 && m <= math.MaxFloat64) {
		return 1
	}
	scale := 1.0
	if m < 0x1p-1022 {
		m, scale = m*0x1p54, 0x1p54
	} else if m >= 0x1p1022 {
		m, scale = m*0x1p-54, 0x1p-54
	}
	return math.Float64frombits((2045-math.Float64bits(m)>>52)<<52) * scale
}

// pivotVanished is the one rule by which both LU paths decide that the
// elimination of a column left no pivot, so that Y(s) is numerically
// singular there (a pole on the jω axis for a sweep). best is the largest
// candidate magnitude of the column after elimination and colmax its
// largest entry before it, both equilibrated; n is the system's size.
//
// A candidate above pivotTol·n·colmax is a pivot. A smaller one is only
// suspect: a chain of gains makes exact pivots many decades below their
// column's entries (twenty stages of gain 100: 10⁻⁴⁰), and so do values
// of 10⁻¹⁵ Ω beside 10¹² F. rounding then decides, scale-invariantly:
// it zeroes every candidate whose magnitude is at most tol times the
// magnitudes of the terms it was computed from, |A_ij| + Σ_k |L_ik|·|U_kj|
// (the componentwise bound on the rounding error of Gaussian elimination,
// |ΔA| ≤ γ_n·|L̂|·|Û|: Higham, Accuracy and Stability of Numerical
// Algorithms, 2nd ed., 2002, Theorem 9.3), chooses the pivot again among
// the others, and reports whether none is left. A nil rounding (a
// refactorisation, which cannot choose again) counts a suspect pivot as
// vanished, so that a full factorisation with pivot search redoes the
// point.
func pivotVanished(best, colmax float64, n int, rounding func(tol float64) bool) bool {
	tol := pivotTol * float64(n)
	switch {
	case best == 0:
		return true
	case best > tol*colmax:
		return false
	case rounding == nil:
		return true
	}
	return rounding(tol)
}

// factor runs Gaussian elimination with partial pivoting in place. It
// skips zero multipliers and zero entries of the pivot row, so a sparse
// MNA matrix costs far less than n³. On a vanished pivot it returns the
// index of its column (unknown), else -1. With track, it also keeps in
// am the magnitudes |A| + |L|·|U| that pivotVanished's componentwise test
// reads; without, a suspect pivot returns needTrack (factorAt then
// factors again with track).
func (f *luFactor) factor(track bool) int {
	n, a := f.n, f.a
	f.lRow, f.lVal, f.uCol = f.lRow[:0], f.lVal[:0], f.uCol[:0]
	var am []float64
	if track {
		if len(f.am) != n*n {
			f.am = make([]float64, n*n)
		}
		am = f.am
		for i, z := range a {
			am[i] = mag1(z)
		}
	}
	for k := 0; k < n; k++ {
		f.lStart[k], f.uStart[k] = len(f.lRow), len(f.uCol)
		// One pass down column k: the pivot candidate and the rows
		// below the diagonal that need eliminating.
		// The pivot is chosen on the magnitudes before equilibration
		// (each row's entry divided by its scale), so the elimination
		// is exactly that of the unscaled matrix, scaled by powers of
		// two; the vanished-pivot judgement uses the equilibrated
		// magnitudes.
		diag, p, best, bestScaled, rows := f.candidates(k)
		if track {
			// Every candidate that is rounding of the terms it came
			// from is 0, in every column, not only where the pivot is
			// suspect: kept as a multiplier, such a residue carries its
			// rounding into a later pivot whose own magnitudes |L|·|U|
			// are then as tiny as it is (a group of nodes whose
			// conductances sum to zero only up to the rounding of
			// the stamped diagonal g₁ + g₂), and that pivot would pass.
			f.dropRounding(k, pivotTol*float64(n))
			diag, p, best, bestScaled, rows = f.candidates(k)
		}
		suspect := false
		if pivotVanished(bestScaled, f.colmax[k], n, func(tol float64) bool {
			suspect = true
			return !track || f.dropRounding(k, tol)
		}) {
			if suspect && !track {
				return needTrack
			}
			return k
		}
		if suspect {
			diag, p, best, bestScaled, rows = f.candidates(k)
		}
		diag *= f.rinv[k]
		if keepDiagonal(diag, best) {
			p = k
		}
		f.piv[k] = p
		if p != k {
			// Columns left of k hold nothing needed any more (the
			// multipliers are recorded), so swap from k on. The old
			// row k, now at p, needs eliminating when its entry is
			// non-zero; row p, now the pivot row, does not.
			rk, rp := a[k*n+k:k*n+n], a[p*n+k:p*n+n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
			if track {
				mk, mp := am[k*n+k:k*n+n], am[p*n+k:p*n+n]
				for j := range mk {
					mk[j], mp[j] = mp[j], mk[j]
				}
			}
			f.rinv[k], f.rinv[p] = f.rinv[p], f.rinv[k]
			for r, i := range rows {
				if i == p {
					if diag != 0 {
						rows[r] = p
					} else {
						rows = append(rows[:r], rows[r+1:]...)
					}
					break
				}
			}
		}
		rowk := a[k*n : k*n+n]
		u0 := len(f.uCol)
		for j := k + 1; j < n; j++ {
			if rowk[j] != 0 {
				f.uCol = append(f.uCol, j)
			}
		}
		nz := f.uCol[u0:]
		inv := recip(rowk[k])
		f.dinv[k] = inv
		for _, i := range rows {
			ri := a[i*n : i*n+n]
			l := ri[k] * inv
			ri[k] = l
			f.lRow = append(f.lRow, i)
			f.lVal = append(f.lVal, l)
			for _, j := range nz {
				ri[j] -= l * rowk[j]
			}
			if track {
				ml, mi := mag1(l), am[i*n:i*n+n]
				for _, j := range nz {
					mi[j] += ml * mag1(rowk[j])
				}
			}
		}
	}
	f.lStart[n], f.uStart[n] = len(f.lRow), len(f.uCol)
	return -1
}

// candidates scans column k from the diagonal down: the diagonal's
// magnitude, the rule's pivot p (the largest magnitude before
// equilibration) and its magnitude best, the largest equilibrated
// magnitude bestScaled, and the rows below the diagonal with a non-zero.
func (f *luFactor) candidates(k int) (diag float64, p int, best, bestScaled float64, rows []int) {
	n, a := f.n, f.a
	diag = mag1(a[k*n+k])
	p, best, bestScaled = k, diag*f.rinv[k], diag
	rows = f.rows[:0]
	for i := k + 1; i < n; i++ {
		if z := a[i*n+k]; z != 0 {
			rows = append(rows, i)
			m := mag1(z)
			bestScaled = math.Max(bestScaled, m)
			if m*f.rinv[i] > best {
				p, best = i, m*f.rinv[i]
			}
		}
	}
	return diag, p, best, bestScaled, rows
}

// dropRounding zeroes the entries of column k, from the diagonal down,
// that are rounding error by pivotVanished's componentwise test against
// the tracked magnitudes am, and reports whether none is left.
func (f *luFactor) dropRounding(k int, tol float64) bool {
	n, a, am := f.n, f.a, f.am
	left := false
	for i := k; i < n; i++ {
		if z := a[i*n+k]; z != 0 {
			if mag1(z) <= tol*am[i*n+k] {
				a[i*n+k] = 0
			} else {
				left = true
			}
		}
	}
	return !left
}

// needTrack is factor's answer to a suspect pivot met without tracking.
const needTrack = -2

// solve overwrites x (indexed by unknown) with Y⁻¹x using the
// factorisation.
func (f *luFactor) solve(x []complex128) {
	w := f.w
	for k, pk := range f.perm {
		w[k] = x[pk] * complex(f.rs[k], 0)
	}
	f.solvePermuted(w)
	for k, pk := range f.perm {
		x[pk] = w[k] * complex(f.cs[k], 0)
	}
}

// solvePermuted solves in place in elimination positions, replaying the
// row exchanges and eliminations of factor in their order, then back
// substitution along U's recorded non-zeros.
func (f *luFactor) solvePermuted(x []complex128) {
	n, a := f.n, f.a
	for k := 0; k < n; k++ {
		if p := f.piv[k]; p != k {
			x[k], x[p] = x[p], x[k]
		}
		xk := x[k]
		if xk == 0 {
			continue
		}
		for e := f.lStart[k]; e < f.lStart[k+1]; e++ {
			x[f.lRow[e]] -= f.lVal[e] * xk
		}
	}
	for k := n - 1; k >= 0; k-- {
		v := x[k]
		row := a[k*n : k*n+n]
		for _, j := range f.uCol[f.uStart[k]:f.uStart[k+1]] {
			v -= row[j] * x[j]
		}
		x[k] = v * f.dinv[k]
	}
}

// solveTransposed overwrites x (indexed by unknown) with Y⁻ᵀx (the plain
// transpose, no conjugation) using the factorisation. With the
// factorisation Q·Y·Qᵀ = (M_{n−1}P_{n−1}⋯M_0P_0)⁻¹·U (Q the fill-reducing
// order, P_k the row exchanges, M_k the eliminations), Y⁻ᵀ is Uᵀ solved
// first, then M_kᵀ and P_k replayed from k = n−1 down to 0.
//
// The factored matrix is the equilibrated A = R·Y·K (see assemble), so
// Y⁻ᵀ = R·A⁻ᵀ·K: x is scaled by K on the way in and by R on the way out.
func (f *luFactor) solveTransposed(x []complex128) {
	w := f.w
	for k, pk := range f.perm {
		w[k] = x[pk] * complex(f.cs[k], 0)
	}
	n, a := f.n, f.a
	for k := 0; k < n; k++ {
		v := w[k] * f.dinv[k]
		w[k] = v
		if v == 0 {
			continue
		}
		row := a[k*n : k*n+n]
		for _, j := range f.uCol[f.uStart[k]:f.uStart[k+1]] {
			w[j] -= row[j] * v
		}
	}
	for k := n - 1; k >= 0; k-- {
		v := w[k]
		for e := f.lStart[k]; e < f.lStart[k+1]; e++ {
			v -= f.lVal[e] * w[f.lRow[e]]
		}
		w[k] = v
		if p := f.piv[k]; p != k {
			w[k], w[p] = w[p], w[k]
		}
	}
	for k, pk := range f.perm {
		x[pk] = w[k] * complex(f.rs[k], 0)
	}
}

func (f *luFactor) clone() factorizer {
	return newLUFactor(f.o)
}

// factorAt assembles and factors Y(s); a vanished pivot gives the index
// of its unknown, else -1. A suspect pivot (see pivotVanished) has the
// point factored again with the componentwise magnitudes tracked.
func (f *luFactor) factorAt(s complex128) int {
	f.assemble(s)
	k := f.factor(false)
	if k == needTrack {
		f.assemble(s)
		k = f.factor(true)
	}
	if k >= 0 {
		return f.perm[k]
	}
	return -1
}

// factorizer is one of the two LU paths: luFactor (dense working matrix,
// small systems) or sparseLU (compressed columns, large systems).
type factorizer interface {
	// factorAt assembles and factors Y(s); it returns the unknown whose
	// pivot vanished, or −1.
	factorAt(s complex128) int
	solve(x []complex128)
	solveTransposed(x []complex128)
	// clone returns a factorizer of the same order for another
	// goroutine, with a copy of the held pivots and patterns if any.
	clone() factorizer
}

// denseMaxUnknowns is the largest system factored on a dense working
// matrix: at this size and below the dense elimination (no index
// indirection, pattern of the working matrix found by scanning) is faster
// per point than the compressed-column path; above it the sparse path
// wins and its cost grows with the non-zeros, not n². Chosen by
// BenchmarkEvalPathLadder (mna/sparse_lu_test.go): the two cross between
// 14 and 18 unknowns on RC ladders (1.5 µs a point).
const denseMaxUnknowns = 16

// newFactorizer picks the path by size.
func newFactorizer(o *luOrder, forceSparse bool) factorizer {
	if o.p.n <= denseMaxUnknowns && !forceSparse {
		return newLUFactor(o)
	}
	return newSparseLU(o)
}

// factor runs f at s, turning a vanished pivot into a *SingularError.
func factorWith(f factorizer, p *pencil, s complex128) error {
	if u := f.factorAt(s); u >= 0 {
		return &SingularError{S: s, Unknown: p.unknowns[u], Index: u}
	}
	return nil
}

func (s *System) order() *luOrder   { return s.orders.get(s.G, s.C, s.Unknowns) }
func (m *Matrices) order() *luOrder { return m.orders.get(m.G, m.C, m.Unknowns) }

// Solve solves (G + sC)·x = B at the complex frequency s (rad/s) into x,
// which must have length Size(). It allocates its working memory; for many
// frequencies use a Sweeper. A numerically singular Y(s) gives a
// *SingularError.
func (s *System) Solve(sv complex128, x []complex128) error {
	n := s.Size()
	if len(x) != n {
		return fmt.Errorf("solve: x has length %d, the system has %d unknowns", len(x), n)
	}
	o := s.order()
	f := newFactorizer(o, false)
	if err := factorWith(f, o.p, sv); err != nil {
		return err
	}
	for i, b := range s.B {
		x[i] = complex(b, 0)
	}
	f.solve(x)
	return nil
}

// SolveAll returns the whole solution x of (G + sC)·x = B at s (rad/s): the
// phasor of every node voltage and branch current, named by Unknowns, per
// unit of the input (multiply by SourceAmplitude for the file's drive).
func (s *System) SolveAll(sv complex128) ([]complex128, error) {
	x := make([]complex128, s.Size())
	if err := s.Solve(sv, x); err != nil {
		return nil, err
	}
	return x, nil
}

// H returns the transfer function y/u = L·(G + sC)⁻¹·B at one complex
// frequency s (rad/s).
func (s *System) H(sv complex128) (complex128, error) {
	x, err := s.SolveAll(sv)
	if err != nil {
		return 0, err
	}
	return dotReal(s.L, x), nil
}

// dotReal returns Σ l_i·x_i.
func dotReal(l []float64, x []complex128) complex128 {
	var h complex128
	for i, li := range l {
		if li != 0 {
			h += complex(li, 0) * x[i]
		}
	}
	return h
}

// Sweeper evaluates H(s) and dH/ds of one System at many frequencies with
// one set of working memory: Eval does not allocate (after its first
// call, which fixes the factorisation's pattern). A Sweeper is not safe
// for concurrent use; give each goroutine its own (they may share the
// System, which Eval only reads); the fill-reducing order is computed
// once per System and shared by all of them. Eval reads B and L at every
// call; G and C (a Sparse is never changed in place) are taken when the
// Sweeper is made: a System given new matrices needs a new Sweeper.
type Sweeper struct {
	sys  *System
	o    *luOrder
	f    factorizer
	x, z []complex128
	// xHeld: x holds the last Eval's solution (the sparse path keeps it
	// in elimination steps until X asks for it); xTwin: the last call was
	// a pair solved side by side, its second point's solution in the
	// sparse path's twin.
	xHeld, xTwin bool
}

// NewSweeper allocates the working memory for sys, choosing the dense
// path for small systems and the sparse one above denseMaxUnknowns.
func NewSweeper(sys *System) *Sweeper { return newSweeper(sys, false) }

// NewSparseSweeper is NewSweeper on the compressed-column path whatever
// the size (for comparisons and tests of the two paths).
func NewSparseSweeper(sys *System) *Sweeper { return newSweeper(sys, true) }

func newSweeper(sys *System, forceSparse bool) *Sweeper {
	n := sys.Size()
	o := sys.order()
	return &Sweeper{sys: sys, o: o, f: newFactorizer(o, forceSparse), x: make([]complex128, n), z: make([]complex128, n)}
}

// Eval returns H(s) = L·Y⁻¹·B and its derivative dH/ds = −L·Y⁻¹·C·Y⁻¹·B at
// the complex frequency s (rad/s), with Y = G + sC, from one factorisation
// and two triangular solves. At s = jω the group delay is −Re(dH/ds / H)
// seconds, exactly. A numerically singular Y(s) gives a *SingularError.
func (w *Sweeper) Eval(s complex128) (h, dh complex128, err error) {
	sys := w.sys
	w.xHeld, w.xTwin = false, false
	if err := factorWith(w.f, w.o.p, s); err != nil {
		return 0, 0, err
	}
	if sf, ok := w.f.(*sparseLU); ok {
		h, dh = sf.transfer(sys.B, sys.L, s)
		return h, dh, nil
	}
	for i, b := range sys.B {
		w.x[i] = complex(b, 0)
	}
	w.f.solve(w.x)
	w.xHeld = true
	h = dotReal(sys.L, w.x)
	clear(w.z)
	c := w.o.p.c
	for j := 0; j < w.o.p.n; j++ {
		if xj := w.x[j]; xj != 0 {
			for e := c.colPtr[j]; e < c.colPtr[j+1]; e++ {
				w.z[c.rowIdx[e]] += complex(c.val[e], 0) * xj
			}
		}
	}
	w.f.solve(w.z)
	dh = -dotReal(sys.L, w.z)
	return h, dh, nil
}

// EvalPair is Eval at sa, then at sb: each point's H, dH/ds and error
// as Eval gives them, bit for bit wherever |H| is in float64's normal
// range (below it, H is below it too, as with Eval). On the sparse path,
// while the held pivots pass at both points, the two are refactored and
// solved in one pass, their operations side by side (sparse_lu_pair.go),
// a few per cent faster than two Evals on RC ladders of 1,000 and 10,000
// unknowns (BenchmarkEvalPairLadder); otherwise it is two Evals. X then
// gives sb's solution.
func (w *Sweeper) EvalPair(sa, sb complex128) (ha, dha, hb, dhb complex128, errA, errB error) {
	if sf, ok := w.f.(*sparseLU); ok {
		if g, ok := sf.factorPair(sa, sb); ok {
			w.xHeld, w.xTwin = false, true
			ha, dha, hb, dhb = sf.transferPair(g, w.sys.B, w.sys.L, sa, sb)
			return ha, dha, hb, dhb, nil, nil
		}
	}
	ha, dha, errA = w.Eval(sa)
	hb, dhb, errB = w.Eval(sb)
	return ha, dha, hb, dhb, errA, errB
}

// Clone returns a Sweeper of the same System for another goroutine: it
// shares the fill-reducing order and starts from a copy of w's pivots and
// L/U patterns (the symbolic step of w's last full factorisation), so its
// first Eval is already a refactorisation. w must not be in use during
// Clone.
func (w *Sweeper) Clone() *Sweeper {
	n := w.sys.Size()
	return &Sweeper{sys: w.sys, o: w.o, f: w.f.clone(), x: make([]complex128, n), z: make([]complex128, n)}
}

// X returns the solution vector of the last successful Eval (valid until
// the next call; do not modify).
func (w *Sweeper) X() []complex128 {
	if sf, ok := w.f.(*sparseLU); ok && !w.xHeld {
		if w.xTwin {
			sf = sf.twin
		}
		sf.unknowns(w.x)
		w.xHeld = true
	}
	return w.x
}
