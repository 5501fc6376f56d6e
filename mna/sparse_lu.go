package mna

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
// before row equilibration, as in the dense path, and a pivot has
// vanished when the largest equilibrated candidate is at most
// pivotTol·n times the column's largest entry (see Numerical
// conventions in DEVELOPERS.md).
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
	y              []complex128
	rowMark        []int
	posRow, rowPos []int // the dense path's row exchanges, replayed: row at position k and back
	diagRow        []int // per step: the row the dense path sees on its diagonal
	havePattern    bool
	refactors      int
	repivots       int
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
		y:       make([]complex128, n),
		rowMark: make([]int, n),
		posRow:  make([]int, n), rowPos: make([]int, n), diagRow: make([]int, n),
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
	copy(g.lp, f.lp)
	copy(g.up, f.up)
	g.lIdx = append([]int(nil), f.lIdx...)
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
	f.assemble(s)
	if f.havePattern {
		if f.refactor() {
			f.refactors++
			return -1
		}
		f.repivots++
	}
	u := f.full()
	f.havePattern = u < 0
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
	tol := pivotTol * float64(n)
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
		piv, best, bestScaled, diag := -1, 0.0, 0.0, -1.0
		for _, i := range rows {
			m := mag1(x[i])
			if v := m; v > bestScaled {
				bestScaled = v
			}
			// Largest first, ties to the lowest position (the dense
			// scan's order).
			if u := m * f.rinv[i]; piv < 0 || u > best || (u == best && f.rowPos[i] < f.rowPos[piv]) {
				piv, best = i, u
			}
			if i == dr {
				diag = m * f.rinv[i]
			}
		}
		if bestScaled == 0 || bestScaled <= tol*f.colmax[j] {
			for _, i := range rows {
				x[i] = 0
			}
			f.lIdx = f.lIdx[:l0]
			return j
		}
		if diag >= 0 && diag >= pivotKeep*best {
			piv = dr
		}
		pp := f.rowPos[piv]
		f.posRow[k], f.posRow[pp] = piv, dr
		f.rowPos[piv], f.rowPos[dr] = k, pp
		f.pinv[piv], f.prow[k] = k, piv
		inv := 1 / x[piv]
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

// refactor redoes the elimination of full on new values with the held
// pivots and patterns. It reports false, leaving the factorisation
// invalid, when a pivot falls below pivotKeep times its column's largest
// candidate or vanishes: full must then run.
func (f *sparseLU) refactor() bool {
	n, p, x := f.n, f.p, f.x
	tol := pivotTol * float64(n)
	for k := 0; k < n; k++ {
		j := f.o.perm[k]
		for e := p.colPtr[j]; e < p.colPtr[j+1]; e++ {
			x[p.rowIdx[e]] = f.ax[e]
		}
		for q := f.up[k]; q < f.up[k+1]; q++ {
			kk := f.uIdx[q]
			r := f.prow[kk]
			xk := x[r]
			x[r] = 0
			f.uVal[q] = xk
			if xk == 0 {
				continue
			}
			for t := f.lp[kk]; t < f.lp[kk+1]; t++ {
				x[f.lIdx[t]] -= f.lVal[t] * xk
			}
		}
		pr := f.prow[k]
		pv := x[pr]
		x[pr] = 0
		pm := mag1(pv)
		pu := pm * f.rinv[pr]
		other, bestScaled := 0.0, pm // other: the largest candidate but the pivot
		diag := -1.0
		if f.diagRow[k] == pr {
			diag = pu
		}
		for t := f.lp[k]; t < f.lp[k+1]; t++ {
			i := f.lIdx[t]
			m := mag1(x[i])
			if v := m; v > bestScaled {
				bestScaled = v
			}
			if v := m * f.rinv[i]; v > other {
				other = v
			}
			if i == f.diagRow[k] {
				diag = m * f.rinv[i]
			}
		}
		best := pu
		if other > best {
			best = other
		}
		// The held pivot must be the one full would choose: the diagonal
		// while it passes the threshold, else the strictly largest.
		keep := diag >= 0 && diag >= pivotKeep*best
		ok := (keep && f.diagRow[k] == pr) || (!keep && pu > other)
		if pm == 0 || bestScaled <= tol*f.colmax[j] || !ok {
			for t := f.lp[k]; t < f.lp[k+1]; t++ {
				x[f.lIdx[t]] = 0
			}
			return false
		}
		inv := 1 / pv
		f.dinv[k] = inv
		for t := f.lp[k]; t < f.lp[k+1]; t++ {
			i := f.lIdx[t]
			f.lVal[t] = x[i] * inv
			x[i] = 0
		}
	}
	return true
}

// solve overwrites x (indexed by unknown) with Y⁻¹x: with A = R·Y·K and
// A(:, perm) = Pᵀ·L·U, x ← K·perm·U⁻¹·L⁻¹·P·R·x.
func (f *sparseLU) solve(x []complex128) {
	n, y := f.n, f.y
	for i := range x {
		x[i] *= complex(f.rs[i], 0)
	}
	for k := 0; k < n; k++ {
		yk := x[f.prow[k]]
		y[k] = yk
		if yk == 0 {
			continue
		}
		for t := f.lp[k]; t < f.lp[k+1]; t++ {
			x[f.lIdx[t]] -= f.lVal[t] * yk
		}
	}
	for k := n - 1; k >= 0; k-- {
		zk := y[k] * f.dinv[k]
		y[k] = zk
		if zk == 0 {
			continue
		}
		for q := f.up[k]; q < f.up[k+1]; q++ {
			y[f.uIdx[q]] -= f.uVal[q] * zk
		}
	}
	for k, u := range f.o.perm {
		x[u] = y[k] * complex(f.cs[u], 0)
	}
}

// solveTransposed overwrites x (indexed by unknown) with Y⁻ᵀx, the plain
// transpose: Y⁻ᵀ = R·A⁻ᵀ·K and Aᵀ = perm·Uᵀ·Lᵀ·P, so Uᵀ is solved
// forward (U by columns is Uᵀ by rows), then Lᵀ backward.
func (f *sparseLU) solveTransposed(x []complex128) {
	n, y := f.n, f.y
	for k, u := range f.o.perm {
		y[k] = x[u] * complex(f.cs[u], 0)
	}
	for k := 0; k < n; k++ {
		v := y[k]
		for q := f.up[k]; q < f.up[k+1]; q++ {
			v -= f.uVal[q] * y[f.uIdx[q]]
		}
		y[k] = v * f.dinv[k]
	}
	for k := n - 1; k >= 0; k-- {
		v := y[k]
		for t := f.lp[k]; t < f.lp[k+1]; t++ {
			v -= f.lVal[t] * y[f.pinv[f.lIdx[t]]]
		}
		y[k] = v
	}
	for k := 0; k < n; k++ {
		r := f.prow[k]
		x[r] = y[k] * complex(f.rs[r], 0)
	}
}
