package mna

// Two frequency points in one pass. The refactorisation and the
// triangular solves of a sparse LU are chains of dependent steps (on a
// ladder every pivot waits for the reciprocal of the one before), so a
// single point leaves the processor mostly waiting; refactorPair and
// solveFlushedPair run two points on the same pattern side by side, each
// with exactly the operations of refactor and solveFlushed in their
// order, so the values are bit for bit those of one point at a time. The
// first point lives in f, the second in f's twin, which shares f's
// pivots and patterns and has values of its own.

// pairTwin returns f's twin for the second point of a pair, sharing f's
// pivots and patterns (re-shared at every call: a full factorisation of
// f makes new ones) with values of its own. Only f is ever factored in
// full; the twin is refactored alongside f by refactorPair only.
func (f *sparseLU) pairTwin() *sparseLU {
	n := f.n
	g := f.twin
	if g == nil {
		g = &sparseLU{
			o: f.o, p: f.p, n: n,
			srs: make([]float64, n), srinv: make([]float64, n),
			scs: make([]float64, n), scolmax: make([]float64, n),
			dinv: make([]complex128, n), xs: make([]complex128, n),
			w: make([]complex128, n), w2: make([]complex128, n), w3: make([]complex128, n),
			sens: make([]float64, n), flushes: make([]flush, 0, 16),
		}
		f.twin = g
	}
	g.prow, g.pinv, g.lp, g.up = f.prow, f.pinv, f.lp, f.up
	g.lIdx, g.lPos, g.uIdx, g.aPos, g.diagStep = f.lIdx, f.lPos, f.uIdx, f.aPos, f.diagStep
	g.havePattern = f.havePattern
	g.lVal = resized(g.lVal, len(f.lVal))
	g.uVal = resized(g.uVal, len(f.uVal))
	return g
}

// resized returns v with length m, reusing its memory when it can.
func resized(v []complex128, m int) []complex128 {
	if cap(v) >= m {
		return v[:m]
	}
	return make([]complex128, m)
}

// factorPair refactors Y(sa) into f and Y(sb) into its twin on the held
// pattern. It reports false, with neither factorisation valid, when no
// pattern is held or a held pivot fails its test at either point: the
// caller then factors the two points one at a time (factorAt), which
// re-pivots where needed.
func (f *sparseLU) factorPair(sa, sb complex128) (*sparseLU, bool) {
	if !f.havePattern {
		return nil, false
	}
	g := f.pairTwin()
	if !f.refactorPair(g, sa, sb) {
		return nil, false
	}
	f.refactors += 2
	return g, true
}

// refactorPair is refactor at sa into f and at sb into g (f's twin) in
// one pass over the pattern, each point's operations and pivot tests
// (heldPivotFails) those of refactor. On a failed test at either point it
// reports false, leaving both invalid and the scratch vectors clear.
func (f *sparseLU) refactorPair(g *sparseLU, sa, sb complex128) bool {
	n, p := f.n, f.p
	xa, xb := f.xs, g.xs
	perm, aPos, lp, up, lPos, uIdx := f.o.perm, f.aPos, f.lp, f.up, f.lPos, f.uIdx
	ra, rb, ria, rib := f.srs, g.srs, f.srinv, g.srinv
	lva, uva, lvb, uvb := f.lVal, f.uVal, g.lVal, g.uVal
	gv, cv := p.gv, p.cv
	ar, ai, br, bi := real(sa), imag(sa), real(sb), imag(sb)
	f.stepRowScales(sa)
	g.stepRowScales(sb)
	for k := 0; k < n; k++ {
		j := perm[k]
		e0, e1 := p.colPtr[j], p.colPtr[j+1]
		var cma, cmb float64
		for e := e0; e < e1; e++ {
			i := aPos[e]
			c, gg := cv[e], gv[e]
			za := complex((gg+ar*c)*ra[i], (ai*c)*ra[i])
			zb := complex((gg+br*c)*rb[i], (bi*c)*rb[i])
			xa[i], xb[i] = za, zb
			if m := mag1(za); m > cma {
				cma = m
			}
			if m := mag1(zb); m > cmb {
				cmb = m
			}
		}
		csa, csb := pow2Inv(cma), pow2Inv(cmb)
		if csa != 1 {
			for e := e0; e < e1; e++ {
				xa[aPos[e]] *= complex(csa, 0)
			}
		}
		if csb != 1 {
			for e := e0; e < e1; e++ {
				xb[aPos[e]] *= complex(csb, 0)
			}
		}
		f.scs[k], f.scolmax[k] = csa, cma*csa
		g.scs[k], g.scolmax[k] = csb, cmb*csb
		for q := up[k]; q < up[k+1]; q++ {
			kk := uIdx[q]
			ya, yb := xa[kk], xb[kk]
			xa[kk], xb[kk] = 0, 0
			uva[q], uvb[q] = ya, yb
			l0, l1 := lp[kk], lp[kk+1]
			subPair(lPos[l0:l1], xa, xb, lva[l0:l1], lvb[l0:l1], ya, yb, ya != 0, yb != 0)
		}
		pa, pb := xa[k], xb[k]
		xa[k], xb[k] = 0, 0
		pma, pmb := mag1(pa), mag1(pb)
		pua, pub := pma*ria[k], pmb*rib[k]
		oa, ob, bsa, bsb := 0.0, 0.0, pma, pmb
		ds := f.diagStep[k]
		da, db := -1.0, -1.0
		if ds == k {
			da, db = pua, pub
		}
		l0, l1 := lp[k], lp[k+1]
		ls := lPos[l0:l1]
		for _, i := range ls {
			ma, mb := mag1(xa[i]), mag1(xb[i])
			if ma > bsa {
				bsa = ma
			}
			if mb > bsb {
				bsb = mb
			}
			if v := ma * ria[i]; v > oa {
				oa = v
			}
			if v := mb * rib[i]; v > ob {
				ob = v
			}
			if i == ds {
				da, db = ma*ria[i], mb*rib[i]
			}
		}
		if heldPivotFails(pma, pua, oa, da, bsa, f.scolmax[k], n, ds == k) ||
			heldPivotFails(pmb, pub, ob, db, bsb, g.scolmax[k], n, ds == k) {
			for _, i := range ls {
				xa[i], xb[i] = 0, 0
			}
			return false
		}
		ia, ib := recip(pa), recip(pb)
		f.dinv[k], g.dinv[k] = ia, ib
		la, lb := lva[l0:l1:l1], lvb[l0:l1:l1]
		for t, i := range ls {
			la[t], lb[t] = xa[i]*ia, xb[i]*ib
			xa[i], xb[i] = 0, 0
		}
	}
	return true
}

// transferPair is transfer at sa on f and at sb on g (f's twin, both
// factored by factorPair): the two points' triangular solves side by
// side (solveFlushedPair), each point's flushes settled on its own.
func (f *sparseLU) transferPair(g *sparseLU, b, l []float64, sa, sb complex128) (ha, dha, hb, dhb complex128) {
	f.rhsSteps(b)
	g.rhsSteps(b)
	f.solveFlushedPair(g, f.w, g.w, f.flushTiny(sa), g.flushTiny(sb))
	var doneA, doneB bool
	if f.weighable() && g.weighable() {
		f.adjointStart(l)
		g.adjointStart(l)
		f.adjointSolvePair(g)
		ha, dha, doneA = f.settleWeighed(b, l, true)
		hb, dhb, doneB = g.settleWeighed(b, l, true)
	} else {
		ha, dha, doneA = f.settleFlushes(b, l)
		hb, dhb, doneB = g.settleFlushes(b, l)
	}
	if !doneA {
		ha = f.dotSteps(l, f.w)
		f.cSteps()
	}
	if !doneB {
		hb = g.dotSteps(l, g.w)
		g.cSteps()
	}
	switch {
	case !doneA && !doneB:
		f.solveFlushedPair(g, f.w2, g.w2, 0, 0)
	case !doneA:
		f.solveFlushed(f.w2, 0)
	case !doneB:
		g.solveFlushed(g.w2, 0)
	}
	if !doneA {
		dha = -f.dotSteps(l, f.w2)
	}
	if !doneB {
		dhb = -g.dotSteps(l, g.w2)
	}
	return ha, dha, hb, dhb
}

// adjointSolvePair is f.adjointSolve() and g.adjointSolve() (g f's twin)
// in one pass.
func (f *sparseLU) adjointSolvePair(g *sparseLU) {
	n, lp, up, lPos, uIdx := f.n, f.lp, f.up, f.lPos, f.uIdx
	aa, ab := f.w3, g.w3
	lva, uva, lvb, uvb, dia, dib := f.lVal, f.uVal, g.lVal, g.uVal, f.dinv, g.dinv
	for k := 0; k < n; k++ {
		u0, u1 := up[k], up[k+1]
		va, vb := gatherPair(uIdx[u0:u1], uva[u0:u1], uvb[u0:u1], aa, ab, aa[k], ab[k])
		aa[k], ab[k] = flushed(va*dia[k]), flushed(vb*dib[k])
	}
	f.backSens()
	g.backSens()
	for k := n - 1; k >= 0; k-- {
		l0, l1 := lp[k], lp[k+1]
		va, vb := gatherPair(lPos[l0:l1], lva[l0:l1], lvb[l0:l1], aa, ab, aa[k], ab[k])
		aa[k], ab[k] = flushed(va), flushed(vb)
	}
}

// solveFlushedPair is f.solveFlushed(wa, ta) and g.solveFlushed(wb, tb)
// (g f's twin) in one pass, each with its own flushes.
func (f *sparseLU) solveFlushedPair(g *sparseLU, wa, wb []complex128, ta, tb float64) {
	n, lp, up, lPos, uIdx := f.n, f.lp, f.up, f.lPos, f.uIdx
	lva, uva, lvb, uvb, dia, dib := f.lVal, f.uVal, g.lVal, g.uVal, f.dinv, g.dinv
	f.flushes, g.flushes = f.flushes[:0], g.flushes[:0]
	for k := 0; k < n; k++ {
		ya, yb := wa[k], wb[k]
		ma, mb := mag1(ya), mag1(yb)
		skipA, skipB := ma < ta || ma == 0, mb < tb || mb == 0
		if skipA && ma != 0 {
			f.flushes = append(f.flushes, flush{k: k, m: ma})
			wa[k] = 0
		}
		if skipB && mb != 0 {
			g.flushes = append(g.flushes, flush{k: k, m: mb})
			wb[k] = 0
		}
		l0, l1 := lp[k], lp[k+1]
		subPair(lPos[l0:l1], wa, wb, lva[l0:l1], lvb[l0:l1], ya, yb, !skipA, !skipB)
	}
	for k := n - 1; k >= 0; k-- {
		wak, wbk := wa[k], wb[k]
		za, zb := wak*dia[k], wbk*dib[k]
		ma, mb := mag1(za), mag1(zb)
		skipA, skipB := ma < ta || ma == 0, mb < tb || mb == 0
		if skipA {
			if ma != 0 {
				f.flushes = append(f.flushes, flush{k: k, m: mag1(wak), back: true})
			}
			za = 0
		}
		if skipB {
			if mb != 0 {
				g.flushes = append(g.flushes, flush{k: k, m: mag1(wbk), back: true})
			}
			zb = 0
		}
		wa[k], wb[k] = za, zb
		u0, u1 := up[k], up[k+1]
		subPair(uIdx[u0:u1], wa, wb, uva[u0:u1], uvb[u0:u1], za, zb, !skipA, !skipB)
	}
}

// subPair is the column update of both points of a pair: for every t,
// xa[ix[t]] −= va[t]·ya when a, xb[ix[t]] −= vb[t]·yb when b (va and vb
// as long as ix).
func subPair(ix []int, xa, xb, va, vb []complex128, ya, yb complex128, a, b bool) {
	va, vb = va[:len(ix)], vb[:len(ix)]
	switch {
	case a && b:
		for t, i := range ix {
			xa[i] -= va[t] * ya
			xb[i] -= vb[t] * yb
		}
	case a:
		for t, i := range ix {
			xa[i] -= va[t] * ya
		}
	case b:
		for t, i := range ix {
			xb[i] -= vb[t] * yb
		}
	}
}

// flushed is v, or 0 when v is below flushBelow.
func flushed(v complex128) complex128 {
	if mag1(v) < flushBelow {
		return 0
	}
	return v
}

// gatherPair is ya − Σ va[t]·aa[ix[t]] and yb − Σ vb[t]·ab[ix[t]],
// summed in the order of ix (va and vb as long as ix).
func gatherPair(ix []int, va, vb, aa, ab []complex128, ya, yb complex128) (complex128, complex128) {
	va, vb = va[:len(ix)], vb[:len(ix)]
	for t, i := range ix {
		ya -= va[t] * aa[i]
		yb -= vb[t] * ab[i]
	}
	return ya, yb
}
