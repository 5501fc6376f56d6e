package mna

import "math"

// sparseLU is the LU factorisation of Y = G + sC for large systems, in
// compressed columns, after Gilbert and Peierls ("Sparse partial pivoting
// in time proportional to arithmetic operations", SIAM J. Sci. Stat.
// Comput. 9 (1988)): columns are eliminated in the shared fill-reducing
// order (luOrder), each by a sparse triangular solve with the columns of
// L made so far, whose non-zero pattern a depth-first search finds.
//
// Threshold partial pivoting: in column k (unknown perm[k]) the diagonal
// row is kept while its magnitude is at least pivotKeep times the
// largest candidate's, else the largest is taken; magnitudes are those
// before row equilibration, as in the dense path, and whether a pivot
// has vanished is decided by pivotVanished (solve.go): a candidate small
// beside the column's largest entry is only suspect, and full judges it
// by the componentwise test (dropRounding); refactor hands a suspect
// pivot to full (see Numerical conventions in DEVELOPERS.md).
//
// The first factorisation (full) fixes the pivot rows and the patterns of
// L and U; every later frequency only refactors: the same operations on
// new values, with no search. When a fixed pivot falls below the
// threshold against its column, or vanishes, the factorisation is redone
// in full at that frequency (re-pivoting, with a fresh symbolic step),
// and that pattern is kept for the next points. refactors and repivots
// count both kinds.
//
// Invariants after a successful factor: for step k, prow[k] is the
// original row of the pivot (pinv its inverse); L's column k (unit
// diagonal implied) holds original rows lIdx[lp[k]:lp[k+1]] with values
// lVal; U's column k holds the steps uIdx[up[k]:up[k+1]] (< k, in the
// order of the elimination, a topological order) with values uVal, and
// dinv[k] = 1/U_kk. The factored matrix is the equilibrated A = R·Y·K
// (rs, cs by unknown).
type sparseLU struct {
	o *luOrder
	p *pencil
	n int

	// The full factorisation's working state, by original row (rs, rinv,
	// x) or unknown (cs, colmax).
	ax             []complex128 // entries of A in the pencil's pattern
	rs, cs, rinv   []float64
	colmax         []float64 // per column (unknown): largest |A_ij|
	x              []complex128
	prow, pinv     []int
	lp, up         []int
	lIdx, uIdx     []int
	lVal, uVal     []complex128
	dinv           []complex128
	stack, pstack  []int
	mark           []int
	stamp          int
	topo           []int
	rowMark        []int
	posRow, rowPos []int // the dense path's row exchanges, replayed: row at position k and back
	diagRow        []int // per step: the row the dense path sees on its diagonal
	havePattern    bool
	// sawSuspect: full met a suspect pivot (pivotVanished); dropAll:
	// full zeroes every rounding residue of every column (dropRounding).
	sawSuspect, dropAll bool
	refactors           int
	repivots            int

	// The same factorisation in elimination steps, made by steps after
	// each full factor: every vector below is indexed by step k (the
	// row pivoted at k, the column perm[k]), so refactor and the solves
	// walk memory in the order of the elimination with no permutation
	// inside their loops.
	lPos     []int     // per L entry: the step of its row, pinv[lIdx]
	aPos     []int     // per pencil entry: the step of its row
	diagStep []int     // per step: the step of diagRow
	srs      []float64 // per step: the row scale of prow[k]
	srinv    []float64 // 1/srs
	scs      []float64 // per step: the column scale of perm[k]
	scolmax  []float64 // per step: largest |A_ij| of column perm[k]
	xs       []complex128
	w, w2    []complex128

	// transfer's record of the entries it flushed (see transfer).
	flushes   []flush
	sens      []float64 // per step: the adjoint magnitude weighing a back-solve flush
	w3        []complex128
	xm        []float64 // dropRounding's magnitudes by original row, allocated on first use
	flushSkip int       // points left to solve without flushing
	// flushKept and flushRedone count the points whose flushed solve was
	// kept (an underflow) and redone.
	flushKept, flushRedone int

	// twin holds the second point of a pair (sparse_lu_pair.go), nil
	// until the first pair.
	twin *sparseLU
}

func newSparseLU(o *luOrder) *sparseLU {
	p := o.p
	n := p.n
	return &sparseLU{
		o: o, p: p, n: n,
		ax: make([]complex128, len(p.rowIdx)),
		rs: make([]float64, n), cs: make([]float64, n), rinv: make([]float64, n),
		colmax: make([]float64, n),
		x:      make([]complex128, n),
		prow:   make([]int, n), pinv: make([]int, n),
		lp: make([]int, n+1), up: make([]int, n+1),
		dinv:  make([]complex128, n),
		stack: make([]int, n), pstack: make([]int, n),
		mark:    make([]int, n),
		topo:    make([]int, 0, n),
		rowMark: make([]int, n),
		posRow:  make([]int, n), rowPos: make([]int, n), diagRow: make([]int, n),
		aPos:     make([]int, len(p.rowIdx)),
		diagStep: make([]int, n),
		srs:      make([]float64, n), srinv: make([]float64, n), scs: make([]float64, n),
		scolmax: make([]float64, n),
		xs:      make([]complex128, n),
		w:       make([]complex128, n), w2: make([]complex128, n),
		flushes: make([]flush, 0, 16), sens: make([]float64, n), w3: make([]complex128, n),
	}
}

// clone copies the pivots and patterns (never shared: a re-pivot
// rewrites them) and allocates fresh values.
func (f *sparseLU) clone() factorizer {
	g := newSparseLU(f.o)
	if !f.havePattern {
		return g
	}
	copy(g.prow, f.prow)
	copy(g.pinv, f.pinv)
	copy(g.diagRow, f.diagRow)
	copy(g.diagStep, f.diagStep)
	copy(g.aPos, f.aPos)
	copy(g.lp, f.lp)
	copy(g.up, f.up)
	g.lIdx = append([]int(nil), f.lIdx...)
	g.lPos = append([]int(nil), f.lPos...)
	g.uIdx = append([]int(nil), f.uIdx...)
	g.lVal = make([]complex128, len(f.lVal))
	g.uVal = make([]complex128, len(f.uVal))
	g.havePattern = true
	return g
}

// assemble fills ax with R·(G + sC)·K, the row then column power-of-two
// equilibration of the dense path (luFactor.assemble), in O(nnz).
func (f *sparseLU) assemble(s complex128) {
	p := f.p
	clear(f.rs)
	for j := 0; j < f.n; j++ {
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			z := p.at(e, s)
			f.ax[e] = z
			if m := mag1(z); m > f.rs[p.rowIdx[e]] {
				f.rs[p.rowIdx[e]] = m
			}
		}
	}
	for i, m := range f.rs {
		f.rs[i] = pow2Inv(m)
		f.rinv[i] = 1 / f.rs[i]
	}
	for j := 0; j < f.n; j++ {
		var cmax float64
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			z := f.ax[e] * complex(f.rs[p.rowIdx[e]], 0)
			f.ax[e] = z
			if v := mag1(z); v > cmax {
				cmax = v
			}
		}
		c := pow2Inv(cmax)
		f.cs[j] = c
		var m float64
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			f.ax[e] *= complex(c, 0)
			if v := mag1(f.ax[e]); v > m {
				m = v
			}
		}
		f.colmax[j] = m
	}
}

// factorAt assembles and factors Y(s): a refactorisation on the held
// pattern when there is one and its pivots pass, else a full one. It
// returns the unknown whose pivot vanished, or −1.
func (f *sparseLU) factorAt(s complex128) int {
	if f.havePattern {
		if f.refactor(s) {
			f.refactors++
			return -1
		}
		f.repivots++
	}
	f.assemble(s)
	f.sawSuspect = false
	u := f.full()
	if u < 0 && f.sawSuspect {
		// A suspect pivot was met: factor again with every rounding
		// residue dropped, as the dense path does with tracking.
		f.dropAll = true
		u = f.full()
		f.dropAll = false
	}
	f.havePattern = u < 0
	if f.havePattern {
		f.steps()
	}
	return u
}

// reach returns, in f.topo, the steps whose pivot rows the column
// (unknown) j reaches through L: the non-zero pattern of the pivoted part
// of L⁻¹·A(:, j), in topological order (every step after the steps it
// depends on). Non-recursive depth-first search over the graph of L.
func (f *sparseLU) reach(j int) {
	p := f.p
	f.stamp++
	st := f.stamp
	f.topo = f.topo[:0]
	for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
		k0 := f.pinv[p.rowIdx[e]]
		if k0 < 0 || f.mark[k0] == st {
			continue
		}
		// DFS from step k0; f.mark is by step.
		top := 0
		f.stack[0] = k0
		f.pstack[0] = f.lp[k0]
		f.mark[k0] = st
		for top >= 0 {
			k := f.stack[top]
			pushed := false
			for q := f.pstack[top]; q < f.lp[k+1]; q++ {
				kk := f.pinv[f.lIdx[q]]
				if kk < 0 || f.mark[kk] == st {
					continue
				}
				f.pstack[top] = q + 1
				f.mark[kk] = st
				top++
				f.stack[top] = kk
				f.pstack[top] = f.lp[kk]
				pushed = true
				break
			}
			if !pushed {
				f.topo = append(f.topo, k)
				top--
			}
		}
	}
	// Post-order is reverse topological.
	for a, b := 0, len(f.topo)-1; a < b; a, b = a+1, b-1 {
		f.topo[a], f.topo[b] = f.topo[b], f.topo[a]
	}
}

// full factors A with pivot search, making the patterns of L and U.
func (f *sparseLU) full() int {
	n, p, x := f.n, f.p, f.x
	for i := range f.pinv {
		f.pinv[i] = -1
	}
	// The dense path exchanges whole rows of its working matrix (in
	// elimination positions): replay that, so that "the diagonal" and
	// ties mean the same row here and the two paths pivot alike.
	for k, u := range f.o.perm {
		f.posRow[k], f.rowPos[u] = u, k
	}
	f.lIdx, f.lVal, f.uIdx, f.uVal = f.lIdx[:0], f.lVal[:0], f.uIdx[:0], f.uVal[:0]
	for k := 0; k < n; k++ {
		j := f.o.perm[k]
		f.lp[k], f.up[k] = len(f.lIdx), len(f.uIdx)
		f.reach(j)
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			x[p.rowIdx[e]] = f.ax[e]
		}
		for _, kk := range f.topo {
			r := f.prow[kk]
			xk := x[r]
			x[r] = 0
			f.uIdx = append(f.uIdx, kk)
			f.uVal = append(f.uVal, xk)
			if xk == 0 {
				continue
			}
			for q := f.lp[kk]; q < f.lp[kk+1]; q++ {
				x[f.lIdx[q]] -= f.lVal[q] * xk
			}
		}
		// The candidates: unpivoted rows of A(:, j) and of the columns
		// of L applied, each once; they go on as L's column k.
		l0 := len(f.lIdx)
		f.stamp++
		st := f.stamp
		add := func(i int) {
			if f.pinv[i] < 0 && f.rowMark[i] != st {
				f.rowMark[i] = st
				f.lIdx = append(f.lIdx, i)
			}
		}
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			add(p.rowIdx[e])
		}
		for _, kk := range f.topo {
			for q := f.lp[kk]; q < f.lp[kk+1]; q++ {
				add(f.lIdx[q])
			}
		}
		rows := f.lIdx[l0:]
		dr := f.posRow[k]
		f.diagRow[k] = dr
		piv, best, bestScaled, diag := f.candidates(rows, dr)
		if f.dropAll {
			// As the dense path with tracking (solve.go, factor): every
			// rounding residue is 0 before it can become a multiplier.
			f.dropRounding(j, k, rows, pivotTol*float64(n))
			piv, best, bestScaled, diag = f.candidates(rows, dr)
		}
		suspect := false
		if pivotVanished(bestScaled, f.colmax[j], n, func(tol float64) bool {
			suspect, f.sawSuspect = true, true
			return f.dropRounding(j, k, rows, tol)
		}) {
			for _, i := range rows {
				x[i] = 0
			}
			f.lIdx = f.lIdx[:l0]
			return j
		}
		if suspect {
			piv, best, bestScaled, diag = f.candidates(rows, dr)
		}
		if keepDiagonal(diag, best) {
			piv = dr
		}
		pp := f.rowPos[piv]
		f.posRow[k], f.posRow[pp] = piv, dr
		f.rowPos[piv], f.rowPos[dr] = k, pp
		f.pinv[piv], f.prow[k] = k, piv
		inv := recip(x[piv])
		f.dinv[k] = inv
		w := l0
		for _, i := range rows {
			if i != piv {
				f.lIdx[w] = i
				f.lVal = append(f.lVal, x[i]*inv)
				w++
			}
			x[i] = 0
		}
		f.lIdx = f.lIdx[:w]
	}
	f.lp[n], f.up[n] = len(f.lIdx), len(f.uIdx)
	return -1
}

// candidates scans the candidate rows of the column being eliminated:
// the rule's pivot piv (the largest magnitude before equilibration, ties
// to the lowest position, the dense scan's order) and its magnitude best,
// the largest equilibrated magnitude bestScaled, and the magnitude diag
// of row dr (−1 when dr is not a candidate).
func (f *sparseLU) candidates(rows []int, dr int) (piv int, best, bestScaled, diag float64) {
	piv, diag = -1, -1
	for _, i := range rows {
		m := mag1(f.x[i])
		if m > bestScaled {
			bestScaled = m
		}
		if u := m * f.rinv[i]; piv < 0 || u > best || (u == best && f.rowPos[i] < f.rowPos[piv]) {
			piv, best = i, u
		}
		if i == dr {
			diag = m * f.rinv[i]
		}
	}
	return piv, best, bestScaled, diag
}

// dropRounding zeroes the candidates x[i] (i in rows) of column j,
// eliminated at step k, that are rounding error by pivotVanished's
// componentwise test: |x_i| ≤ tol·(|A_ij| + Σ_kk |L_i,kk|·|U_kk,j|), the
// sum over the U entries of this column, made just before. It reports
// whether none is left.
func (f *sparseLU) dropRounding(j, k int, rows []int, tol float64) bool {
	if len(f.xm) != f.n {
		f.xm = make([]float64, f.n)
	}
	p, xm := f.p, f.xm
	for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
		xm[p.rowIdx[e]] += mag1(f.ax[e])
	}
	for q := f.up[k]; q < len(f.uIdx); q++ {
		kk, um := f.uIdx[q], mag1(f.uVal[q])
		for t := f.lp[kk]; t < f.lp[kk+1]; t++ {
			xm[f.lIdx[t]] += mag1(f.lVal[t]) * um
		}
	}
	left := false
	for _, i := range rows {
		if m := mag1(f.x[i]); m <= tol*xm[i] {
			f.x[i] = 0
		} else if m > 0 {
			left = true
		}
	}
	for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
		xm[p.rowIdx[e]] = 0
	}
	for q := f.up[k]; q < len(f.uIdx); q++ {
		kk := f.uIdx[q]
		for t := f.lp[kk]; t < f.lp[kk+1]; t++ {
			xm[f.lIdx[t]] = 0
		}
	}
	return !left
}

// steps derives the step-indexed form of a full factorisation: the steps
// of L's rows and of the pencil's rows, and the scales by step.
func (f *sparseLU) steps() {
	p := f.p
	f.lPos = append(f.lPos[:0], f.lIdx...)
	for t, i := range f.lPos {
		f.lPos[t] = f.pinv[i]
	}
	for e, i := range p.rowIdx {
		f.aPos[e] = f.pinv[i]
	}
	for k := 0; k < f.n; k++ {
		r, u := f.prow[k], f.o.perm[k]
		f.diagStep[k] = f.pinv[f.diagRow[k]]
		f.srs[k], f.srinv[k] = f.rs[r], f.rinv[r]
		f.scs[k], f.scolmax[k] = f.cs[u], f.colmax[u]
	}
}

// refactor assembles A = R·Y(s)·K and redoes the elimination of full on
// it with the held pivots and patterns, in elimination steps. The values
// and every decision are those of assemble followed by full: the row
// scales come from one pass over the pencil, the column scale of each
// column as it is scattered (a power of two changes no digit, so the
// column's largest entry scaled is its scaled largest entry). It reports
// false, leaving the factorisation invalid, when a pivot falls below
// pivotKeep times its column's largest candidate or vanishes: full must
// then run.
func (f *sparseLU) refactor(s complex128) bool {
	n, p, x := f.n, f.p, f.xs
	perm, aPos, srs, srinv := f.o.perm, f.aPos, f.srs, f.srinv
	lp, up, lPos, uIdx := f.lp, f.up, f.lPos, f.uIdx
	lVal, uVal := f.lVal, f.uVal
	gv, cv := p.gv, p.cv
	sr, si := real(s), imag(s)
	f.stepRowScales(s)
	for k := 0; k < n; k++ {
		j := perm[k]
		e0, e1 := p.colPtr[j], p.colPtr[j+1]
		var cmax float64
		for e := e0; e < e1; e++ {
			i := aPos[e]
			c, r := cv[e], srs[i]
			z := complex((gv[e]+sr*c)*r, (si*c)*r)
			x[i] = z
			if m := mag1(z); m > cmax {
				cmax = m
			}
		}
		cs := pow2Inv(cmax)
		if cs != 1 {
			for e := e0; e < e1; e++ {
				x[aPos[e]] *= complex(cs, 0)
			}
		}
		f.scs[k], f.scolmax[k] = cs, cmax*cs
		for q := up[k]; q < up[k+1]; q++ {
			kk := uIdx[q]
			xk := x[kk]
			x[kk] = 0
			uVal[q] = xk
			if xk == 0 {
				continue
			}
			ls, lv := lPos[lp[kk]:lp[kk+1]], lVal[lp[kk]:lp[kk+1]]
			for t, i := range ls {
				x[i] -= lv[t] * xk
			}
		}
		pv := x[k]
		x[k] = 0
		pm := mag1(pv)
		pu := pm * srinv[k]
		other, bestScaled := 0.0, pm // other: the largest candidate but the pivot
		ds := f.diagStep[k]
		diag := -1.0
		if ds == k {
			diag = pu
		}
		ls := lPos[lp[k]:lp[k+1]]
		for _, i := range ls {
			m := mag1(x[i])
			if m > bestScaled {
				bestScaled = m
			}
			if v := m * srinv[i]; v > other {
				other = v
			}
			if i == ds {
				diag = m * srinv[i]
			}
		}
		if heldPivotFails(pm, pu, other, diag, bestScaled, f.scolmax[k], n, ds == k) {
			for _, i := range ls {
				x[i] = 0
			}
			return false
		}
		inv := recip(pv)
		f.dinv[k] = inv
		lv := lVal[lp[k]:lp[k+1]]
		for t, i := range ls {
			lv[t] = x[i] * inv
			x[i] = 0
		}
	}
	return true
}

// stepRowScales sets the row scales of Y(s) by step (srs, and srinv its
// inverse) for refactor: one pass over the pencil in the held pattern.
func (f *sparseLU) stepRowScales(s complex128) {
	gv, cv, srs := f.p.gv, f.p.cv, f.srs
	sr, si := real(s), imag(s)
	clear(srs)
	for e, k := range f.aPos {
		c := cv[e]
		if m := math.Abs(gv[e]+sr*c) + math.Abs(si*c); m > srs[k] {
			srs[k] = m
		}
	}
	for k, m := range srs {
		srs[k] = pow2Inv(m)
		f.srinv[k] = 1 / srs[k]
	}
}

// heldPivotFails is the refactorisation's pivot decision at one step:
// whether the pivot held from the last full factorisation must be given
// up, because it is not the one full would choose now (the diagonal
// while keepDiagonal passes it, else the strictly largest candidate) or
// the column's pivot has vanished (pivotVanished). pm is the held
// pivot's equilibrated magnitude and pu its magnitude before
// equilibration; other is the largest other candidate's magnitude before
// equilibration, diag the diagonal candidate's (negative when the column
// has none) and bestScaled the largest equilibrated candidate; colmax is
// the column's largest entry, n the system's size, and diagHeld says
// whether the held pivot is the diagonal.
func heldPivotFails(pm, pu, other, diag, bestScaled, colmax float64, n int, diagHeld bool) bool {
	keep := keepDiagonal(diag, max(pu, other))
	ok := (keep && diagHeld) || (!keep && pu > other)
	return pm == 0 || pivotVanished(bestScaled, colmax, n, nil) || !ok
}

// recip is 1/z by Smith's method, the operations of Go's complex
// division of 1 by a finite non-zero z written out (no call, no checks
// for infinities), so its value is that of 1/z (a zero part may differ
// in sign where the ratio underflows: −ratio here, 0 − ratio there).
//
// Written for the inliner: |a| < |b| is compared on the bits without the
// sign (the same order for every value but NaN, which gives NaN on both
// branches).
func recip(z complex128) complex128 {
	a, b := real(z), imag(z)
	if math.Float64bits(a)<<1 < math.Float64bits(b)<<1 {
		ratio := a / b
		denom := b + ratio*a
		return complex(ratio/denom, -1/denom)
	}
	ratio := b / a
	denom := a + ratio*b
	return complex(1/denom, -ratio/denom)
}

// solveSteps overwrites w, a right-hand side of A(:, perm) in steps
// (entry k for the row pivoted at step k), with U⁻¹·L⁻¹·w.
func (f *sparseLU) solveSteps(w []complex128) { f.solveFlushed(w, 0) }

// solve overwrites x (indexed by unknown) with Y⁻¹x: with A = R·Y·K and
// A(:, perm) = Pᵀ·L·U, x ← K·perm·U⁻¹·L⁻¹·P·R·x.
func (f *sparseLU) solve(x []complex128) {
	w := f.w
	for i, v := range x {
		k := f.pinv[i]
		w[k] = v * complex(f.srs[k], 0)
	}
	f.solveSteps(w)
	for k, u := range f.o.perm {
		x[u] = w[k] * complex(f.scs[k], 0)
	}
}

// solveTransposed overwrites x (indexed by unknown) with Y⁻ᵀx, the plain
// transpose: Y⁻ᵀ = R·A⁻ᵀ·K and Aᵀ = perm·Uᵀ·Lᵀ·P, so Uᵀ is solved
// forward (U by columns is Uᵀ by rows), then Lᵀ backward.
func (f *sparseLU) solveTransposed(x []complex128) {
	n, y := f.n, f.w
	for k, u := range f.o.perm {
		y[k] = x[u] * complex(f.scs[k], 0)
	}
	for k := 0; k < n; k++ {
		v := y[k]
		uv := f.uVal[f.up[k]:f.up[k+1]]
		for q, i := range f.uIdx[f.up[k]:f.up[k+1]] {
			v -= uv[q] * y[i]
		}
		y[k] = v * f.dinv[k]
	}
	for k := n - 1; k >= 0; k-- {
		v := y[k]
		lv := f.lVal[f.lp[k]:f.lp[k+1]]
		for t, i := range f.lPos[f.lp[k]:f.lp[k+1]] {
			v -= lv[t] * y[i]
		}
		y[k] = v
	}
	for k := 0; k < n; k++ {
		x[f.prow[k]] = y[k] * complex(f.srs[k], 0)
	}
}

// flushBelow is the magnitude (|re| + |im|) below which transfer, in
// its first attempt, sets an entry of a triangular solve to zero instead
// of carrying it on: 2⁻¹⁰²², the smallest normal float64. Arithmetic on
// subnormal numbers is tens of times slower on x86, and a long ladder
// far above its corner fills most of its solution with them.
const flushBelow = 0x1p-1022

// underflowSure is the bound below which |H| is certainly under
// float64's normal range: 2⁻¹⁰²⁴, a quarter of flushBelow, so that what
// the first-order bound of transfer leaves out (products of two
// sub-normal-sized changes) cannot lift |H| to 2⁻¹⁰²².
const underflowSure = 0x1p-1024

// flushRetry is the number of points transfer solves without flushing
// after a point whose flushed solve had to be redone (a sweep near the
// edge of the range would otherwise pay twice at every point).
const flushRetry = 8

// maxFlushes caps the flushes transfer records for its bound; past it
// the point is redone without flushing.
const maxFlushes = 1024

// flush is one entry a flushed solve set to zero: its step and the
// magnitude of the change it makes to the solve's right-hand side.
type flush struct {
	k    int
	m    float64
	back bool // in the back solve (else the forward one)
}

// transfer returns h = l·Y⁻¹·b and dh = −l·Y⁻¹·C·Y⁻¹·b (b, l real, by
// unknown) from the held factorisation with two solves in elimination
// steps: y = A⁻¹·R·b (the solution, K·y, stays in f.w; see unknowns),
// then z = A⁻¹·(R·C·K)·y, formed in steps, so no vector is permuted:
// h = (K·lᵀ)ᵀ·y and dh = −(K·lᵀ)ᵀ·z.
//
// Subnormal entries: the first solve for y flushes every entry below
// flushBelow to zero. Each flush is a change of that solve's right-hand
// side (at step k of the forward solve by the entry ũ_k dropped; of the
// back solve by U_kk·ỹ_k, the entry before its division), so it changes
// h by exactly that change times the adjoint's entry there (a_k·ũ_k with
// a = A⁻ᵀ·K·lᵀ; v_k·U_kk·ỹ_k with v = U⁻ᵀ·K·lᵀ, the adjoint's
// intermediate). When nothing was flushed the point goes on as without
// flushing. When something was, the adjoint is solved (flushed too) and
// the flushed y kept only if |h| plus the sum of those changes'
// magnitudes is below underflowSure: the exact |H| is then below
// float64's normal range too, a point that analysis reports as an
// underflow whatever its digits, and dh (which has none either) is
// taken as −aᵀ·(R·C·K)·y without a further solve. Otherwise the point is
// solved again without flushing (gradual underflow, every digit), as it
// always is at s = 0.
func (f *sparseLU) transfer(b, l []float64, s complex128) (h, dh complex128) {
	f.rhsSteps(b)
	f.solveFlushed(f.w, f.flushTiny(s))
	if h, dh, ok := f.settleFlushes(b, l); ok {
		return h, dh
	}
	h = f.dotSteps(l, f.w)
	f.cSteps()
	f.solveFlushed(f.w2, 0)
	return h, -f.dotSteps(l, f.w2)
}

// flushTiny is the flush bound of transfer's first solve at s: flushBelow,
// or 0 (no flushing) at s = 0 and for the flushRetry points after a
// point whose flushed solve was redone.
func (f *sparseLU) flushTiny(s complex128) float64 {
	if f.flushSkip > 0 || s == 0 {
		f.flushSkip = max(0, f.flushSkip-1)
		return 0
	}
	return flushBelow
}

// settleFlushes decides on the flushes of the solve for y just made in
// f.w from R·b (see transfer): none, or too many to keep, leave f.w the
// exact solution (solved again without flushing when something was
// flushed) and report false; a point certainly below float64's range
// gives its h and dh and true.
func (f *sparseLU) settleFlushes(b, l []float64) (h, dh complex128, done bool) {
	if len(f.flushes) == 0 {
		return 0, 0, false
	}
	weighed := f.weighable()
	if weighed {
		f.adjointStart(l)
		f.adjointSolve()
	}
	return f.settleWeighed(b, l, weighed)
}

// weighable reports whether the flushes of the last solve are to be
// weighed by the adjoint: there are some, and fewer than maxFlushes.
func (f *sparseLU) weighable() bool { return len(f.flushes) > 0 && len(f.flushes) < maxFlushes }

// settleWeighed is settleFlushes after the adjoint was solved into f.w3
// (weighed) or not: the flushed solve is kept when weighed and certainly
// below the range, else solved again without flushing.
func (f *sparseLU) settleWeighed(b, l []float64, weighed bool) (h, dh complex128, done bool) {
	if weighed {
		if h, dh, ok := f.underflowBound(l); ok {
			f.flushKept++
			return h, dh, true
		}
	}
	f.flushRedone++
	f.flushSkip = flushRetry
	f.rhsSteps(b)
	f.solveFlushed(f.w, 0)
	return 0, 0, false
}

// cSteps sets f.w2 to R·C·x in steps, x = K·w the solution of the first
// solve, summed column by column in unknown order as the dense path sums.
func (f *sparseLU) cSteps() {
	p, w, w2, srs, scs := f.p, f.w, f.w2, f.srs, f.scs
	clear(w2)
	for j := 0; j < f.n; j++ {
		k := f.o.inv[j]
		xj := w[k] * complex(scs[k], 0)
		if xj == 0 {
			continue
		}
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			if c := p.cv[e]; c != 0 {
				i := f.aPos[e]
				w2[i] += complex(c*srs[i], 0) * xj
			}
		}
	}
}

// rhsSteps sets f.w to R·b in steps.
func (f *sparseLU) rhsSteps(b []float64) {
	clear(f.w)
	for i, v := range b {
		if v != 0 {
			k := f.pinv[i]
			f.w[k] = complex(v*f.srs[k], 0)
		}
	}
}

// adjointStart sets f.w3 to K·lᵀ in steps, the right-hand side of the
// adjoint a = A⁻ᵀ·K·lᵀ that weighs a flushed solve (see transfer).
func (f *sparseLU) adjointStart(l []float64) {
	a := f.w3
	clear(a)
	for i, li := range l {
		if li != 0 {
			k := f.o.inv[i]
			a[k] = complex(li*f.scs[k], 0)
		}
	}
}

// adjointSolve overwrites f.w3 with A⁻ᵀ·f.w3: Uᵀ forward and Lᵀ
// backward, each entry gathered from the finished ones (U by columns is
// Uᵀ by rows), flushed below flushBelow; between the two it records in
// f.sens the intermediate's magnitude at the steps of the back solve's
// flushes.
func (f *sparseLU) adjointSolve() {
	n, a := f.n, f.w3
	lp, up, lPos, uIdx, lVal, uVal, dinv := f.lp, f.up, f.lPos, f.uIdx, f.lVal, f.uVal, f.dinv
	for k := 0; k < n; k++ {
		v := a[k]
		uv := uVal[up[k]:up[k+1]]
		for q, i := range uIdx[up[k]:up[k+1]] {
			v -= uv[q] * a[i]
		}
		if v *= dinv[k]; mag1(v) < flushBelow {
			v = 0
		}
		a[k] = v
	}
	f.backSens()
	for k := n - 1; k >= 0; k-- {
		v := a[k]
		lv := lVal[lp[k]:lp[k+1]]
		for t, i := range lPos[lp[k]:lp[k+1]] {
			v -= lv[t] * a[i]
		}
		if mag1(v) < flushBelow {
			v = 0
		}
		a[k] = v
	}
}

// backSens records in f.sens the magnitude of the adjoint's
// intermediate v = U⁻ᵀ·K·lᵀ (in f.w3) at the back solve's flushes.
func (f *sparseLU) backSens() {
	for _, fl := range f.flushes {
		if fl.back {
			f.sens[fl.k] = mag1(f.w3[fl.k]) // v_k
		}
	}
}

// underflowBound reports, from the adjoint in f.w3 (adjointSolve),
// whether |h| + Σ|change|·|adjoint| over the flushes of the solve for y
// in f.w is below underflowSure (see transfer), with h and
// dh = −aᵀ·(R·C·K)·y.
func (f *sparseLU) underflowBound(l []float64) (h, dh complex128, ok bool) {
	n, a, w := f.n, f.w3, f.w
	h = f.dotSteps(l, w)
	// The bound, scaled by 2⁶⁰⁰ (exact: every flushed magnitude is below
	// 2⁻¹⁰²²) so that no product underflows.
	const scale = 0x1p600
	bound := mag1(h) * scale
	for _, fl := range f.flushes {
		sens := f.sens[fl.k]
		if !fl.back {
			sens = mag1(a[fl.k])
		}
		bound += fl.m * scale * sens
	}
	if !(bound <= underflowSure*scale) {
		return 0, 0, false
	}
	p, srs, scs := f.p, f.srs, f.scs
	for k := 0; k < n; k++ {
		yk := w[k]
		if yk == 0 {
			continue
		}
		var acc complex128
		j := f.o.perm[k]
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			if c := p.cv[e]; c != 0 {
				i := f.aPos[e]
				acc += complex(c*srs[i], 0) * a[i]
			}
		}
		dh -= acc * (yk * complex(scs[k], 0))
	}
	return h, dh, true
}

// solveFlushed is solveSteps with every entry below tiny (0: none)
// flushed to zero, the flushes recorded in f.flushes (see transfer).
func (f *sparseLU) solveFlushed(w []complex128, tiny float64) {
	n, lp, up, lPos, uIdx, lVal, uVal, dinv := f.n, f.lp, f.up, f.lPos, f.uIdx, f.lVal, f.uVal, f.dinv
	f.flushes = f.flushes[:0]
	for k := 0; k < n; k++ {
		yk := w[k]
		if m := mag1(yk); m < tiny || m == 0 {
			if m != 0 {
				f.flushes = append(f.flushes, flush{k: k, m: m})
				w[k] = 0
			}
			continue
		}
		lv := lVal[lp[k]:lp[k+1]]
		for t, i := range lPos[lp[k]:lp[k+1]] {
			w[i] -= lv[t] * yk
		}
	}
	for k := n - 1; k >= 0; k-- {
		wk := w[k]
		zk := wk * dinv[k]
		if m := mag1(zk); m < tiny || m == 0 {
			if m != 0 {
				f.flushes = append(f.flushes, flush{k: k, m: mag1(wk), back: true})
			}
			w[k] = 0
			continue
		}
		w[k] = zk
		uv := uVal[up[k]:up[k+1]]
		for q, i := range uIdx[up[k]:up[k+1]] {
			w[i] -= uv[q] * zk
		}
	}
}

// dotSteps is Σ l_i·x_i for the solution x = K·w held in steps.
func (f *sparseLU) dotSteps(l []float64, w []complex128) complex128 {
	var h complex128
	for i, li := range l {
		if li != 0 {
			k := f.o.inv[i] // the step of unknown i's column
			h += complex(li, 0) * (w[k] * complex(f.scs[k], 0))
		}
	}
	return h
}

// unknowns writes the solution of the last transfer, by unknown, into x.
func (f *sparseLU) unknowns(x []complex128) {
	for k, u := range f.o.perm {
		x[u] = f.w[k] * complex(f.scs[k], 0)
	}
}
