package stability

import (
	"cmp"
	"errors"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"

	"nodal/analysis/transfer"
)

// This file finds the finite generalised eigenvalues of a real square
// pencil A + s·E (the roots of det(A + s·E)) by index reduction followed
// by the QR algorithm; no determinant polynomial is formed.
//
// Method (index reduction by orthogonal compression):
//
//  0. Scale: s = ω0·ŝ and D1·(A + sE)·D2 with ω0, D1, D2 powers of two
//     (exact in floating point) from Ward's least-squares balancing of the
//     entries' exponents, then max-balancing of |A| + |ω0·E| (equilibrate):
//     invariant under any diagonal scaling of the input, so no decision
//     below depends on the units of the circuit's values.
//  1. Compress E by its SVD, E = U·Σ·Vᵀ, rank r (singular values above
//     eRankTol·‖E‖): Uᵀ(A + sE)V has a zero E in its last m = n − r rows
//     and columns. If r = n, the eigenvalues are those of −Σ⁻¹·UᵀAV
//     (gonum's Eigen, which balances again) and we are done.
//  2. Compress the algebraic block A22 (m × m) by its SVD, rank q; the q
//     regular algebraic unknowns are eliminated by a Schur complement.
//     It does not involve s (their rows and columns of E are zero), so
//     det changes by the constant det(S_q) only.
//  3. What remains has A22 = 0: the m' = m − q algebraic rows constrain
//     the dynamic unknowns (A21·x1 = 0) and the m' algebraic unknowns
//     enter only through A12. With N an orthonormal basis of null(A21)
//     and Z one of range(A12)⊥ (both from SVDs),
//     det(A + sE) = const·det(Zᵀ(A11 + sE11)N): these are infinite
//     eigenvalues of index two or more, removed exactly. If A21 or A12
//     lacks full rank m', det(A + sE) ≡ 0 (a singular pencil).
//  4. Repeat from 1 on the smaller pencil.
//
// Every rank decision is on a block of the equilibrated pencil that is
// either a scaled capacitance or inductance (E) or a scaled conductance or
// incidence (A), so the singular values that count are far above the
// rounding-level ones, whatever the units (a 5·10⁻¹³ S conductance beside
// a unit incidence of a source branch is an entry near 1 after scaling).
// The multiplicity of s = 0 is decided by the same reduction run on the
// reversed pencil E + tA (wholeEigenvalues).
// Because infinite eigenvalues are removed before any eigenvalue is
// computed, they cannot show up as large finite ones.

// ErrSingularPencil means det(G + sC) ≡ 0: the circuit equations have no
// unique solution at any frequency, so it has no natural frequencies.
var ErrSingularPencil = errors.New("the circuit equations are singular for every frequency (det(G + sC) ≡ 0)")

// Rank thresholds, relative and dimensionless.
const (
	eRankTol = 1e-11 // a singular value of E below eRankTol·‖E‖ is zero
	aRankTol = 1e-12 // a singular value of an A block below aRankTol·‖A‖ is zero
)

// FiniteEigenvalues returns every finite root of det(a + s·e) (rad/s when
// a is G and e is C of an MNA system) and the characteristic frequency ω0
// (rad/s) of the equilibration of the whole pencil (see equilibrate). a
// and e are not changed. Roots at s = 0 are exactly 0, decided by a rank
// test (see wholeEigenvalues); no other root is ever set to 0. Errors:
// ErrSingularPencil for det ≡ 0, or a non-converging eigenvalue iteration.
//
// Every rank decision is made on an equilibrated pencil, so scaling the
// rows and columns of a + s·e (impedance scaling: every R and L by 10^k,
// every C by 10^−k) changes neither the roots nor any decision.
//
// The pencil is first permuted to block triangular form (transfer.BlockTriangular):
// its roots are those of the diagonal blocks, each equilibrated and solved
// on its own, so a chain of identical stages that do not load one another
// gives each stage's roots to rounding instead of one defective N-fold root
// split by about ε^(1/N) (into the right half-plane at N ≥ 18 for
// inverting stages of gain 10).
func FiniteEigenvalues(a, e *mat.Dense) (roots []complex128, w0 float64, err error) {
	return finiteEigenvalues(a, e, false)
}

// finiteEigenvalues is FiniteEigenvalues; regularAt0 says that a is known
// to be regular (Y(0) = G factors by mna's scale-invariant pivot rule):
// then no root is at s = 0 and the rank test is not asked (see
// wholeEigenvalues).
func finiteEigenvalues(a, e *mat.Dense, regularAt0 bool) (roots []complex128, w0 float64, err error) {
	n, _ := a.Dims()
	if r, c := e.Dims(); r != n || c != n {
		return nil, 0, errors.New("natural frequencies: G and C differ in size")
	}
	blocks := transfer.BlockTriangular(a, e)
	if len(blocks) < 2 {
		return wholeEigenvalues(a, e, regularAt0)
	}
	_, _, w0 = equilibrate(a, e)
	for _, b := range blocks {
		sa := transfer.SubMatrix(a, b.Rows, b.Cols)
		se := transfer.SubMatrix(e, b.Rows, b.Cols)
		r, _, err := wholeEigenvalues(sa, se, regularAt0)
		if err != nil {
			return nil, 0, err
		}
		roots = append(roots, r...)
	}
	return roots, w0, nil
}

// wholeEigenvalues is FiniteEigenvalues on the pencil as one block: the
// roots of the equilibrated pencil (in units of its ω0), with the
// multiplicity m of s = 0 from a rank test, the number of infinite
// eigenvalues of the reversed pencil e + t·a (t = 1/s) that its index
// reduction removes (m = n − deg det(e + t·a)). The m smallest roots are
// set to 0 when the eigenvalue iteration also put them below
// transfer.OriginGuard(m) (in units of ω0), as the transfer function's
// roots at s = 0 are decided; a rank test alone never moves a root, and
// no tolerance on |s| does either, so a tiny genuine root (a 10 TΩ leak
// across an integrator's 10 nF) stays.
//
// With regularAt0 (a regular by mna's pivot rule, which refutes any root
// at s = 0) the rank test is skipped, and the roots far below ω0 are
// taken from shift-and-invert at σ = 0 (the reversed pencil) instead,
// which gives them to full relative accuracy (transfer.SlowRoots; this
// file's reduce decides the rank of a by SVD, which would drop a slow
// pole 10⁻¹⁴ of ω0 as rounding): a slow pole
// 10⁻¹⁹ of the fastest scale keeps its sign.
func wholeEigenvalues(a, e *mat.Dense, regularAt0 bool) ([]complex128, float64, error) {
	as, es, w0 := equilibrate(a, e)
	an, en := mat.Norm(as, 2), mat.Norm(es, 2)
	if en == 0 {
		if an == 0 || !fullRank(as, aRankTol*an) {
			return nil, 0, ErrSingularPencil
		}
		return nil, w0, nil
	}
	roots, _, err := reduce(as, es, false)
	if err != nil {
		return nil, 0, err
	}
	if regularAt0 {
		roots = transfer.SlowRoots(as, es, roots)
		for i := range roots {
			roots[i] *= complex(w0, 0)
		}
		return roots, w0, nil
	}
	snapOrigin(roots, func() int {
		n, _ := as.Dims()
		if clearlyRegular(as) {
			return 0
		}
		_, finite, err := reduce(es, as, true)
		if err != nil {
			return 0
		}
		return n - finite
	})
	for i := range roots {
		roots[i] *= complex(w0, 0)
	}
	return roots, w0, nil
}

// clearlyRegular reports whether the condition estimate of the square m
// shows its smallest singular value far above eRankTol·‖m‖₂
// (σmin ≥ ‖m‖₁/(√n·cond₁)), so that reduce would find it of full rank
// without an SVD.
func clearlyRegular(m *mat.Dense) bool {
	n, _ := m.Dims()
	var lu mat.LU
	lu.Factorize(m)
	c := lu.Cond()
	return !math.IsInf(c, 0) && !math.IsNaN(c) && c*math.Sqrt(float64(n))*eRankTol*mat.Norm(m, 2)*10 < mat.Norm(m, 1)
}

// snapOrigin sets to 0 the m smallest roots (scaled units), m from
// multiplicity, when they all lie below transfer.OriginGuard(m). The rank
// test is run only when some root could pass that guard.
func snapOrigin(roots []complex128, multiplicity func() int) {
	if len(roots) == 0 {
		return
	}
	idx := make([]int, len(roots))
	for i := range idx {
		idx[i] = i
	}
	slices.SortStableFunc(idx, func(x, y int) int { return cmp.Compare(cmplx.Abs(roots[x]), cmplx.Abs(roots[y])) })
	if cmplx.Abs(roots[idx[0]]) > transfer.OriginGuard(len(roots)) {
		return // OriginGuard grows with m: no m can pass
	}
	m := multiplicity()
	if m <= 0 || m > len(roots) || cmplx.Abs(roots[idx[m-1]]) > transfer.OriginGuard(m) {
		return
	}
	for _, i := range idx[:m] {
		roots[i] = 0
	}
}

// equilibrate returns D1·a·D2, ω0·D1·e·D2 and ω0 (rad/s per scaled unit),
// with D1, D2 diagonal and ω0 powers of two (exact in floating point),
// chosen first by Ward's least-squares balancing (transfer.LogBalance,
// with the frequency scale), so that every non-zero entry of both
// matrices is as near 1 as a diagonal scaling allows, then by
// max-balancing sweeps (balanced). A diagonal scaling of the input
// (impedance scaling) leaves the result unchanged up to the rounding of
// the exponents to integers; ω0 is the pencil's own frequency scale
// (1/RC for one RC section), not that of its largest entry. When a or e
// is zero, ω0 = 1.
func equilibrate(a, e *mat.Dense) (as, es *mat.Dense, w0 float64) {
	n, _ := a.Dims()
	r, c, w := transfer.LogBalance(a, e, true)
	as, es = mat.DenseCopyOf(a), mat.DenseCopyOf(e)
	w0 = math.Ldexp(1, w)
	ra, re := as.RawMatrix(), es.RawMatrix()
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			k := i*ra.Stride + j
			ra.Data[k] = math.Ldexp(ra.Data[k], r[i]+c[j])
			re.Data[k] = math.Ldexp(re.Data[k], r[i]+c[j]) * w0
		}
	}
	balanced(as, es)
	return as, es, w0
}

// balanced scales, in place, the rows and columns of a and e (already
// equilibrated, e carrying ω0) by powers of two that bring the maxima of
// |a| + |e| along each line near 1.
func balanced(as, es *mat.Dense) {
	n, _ := as.Dims()
	// Rows then columns, eight sweeps, each line scaled by the power of
	// two that brings its maximum of |A| + |E| near 1; the entries are
	// reached in place through the raw storage (strides: 1 along a row,
	// Stride down a column).
	ra, re := as.RawMatrix(), es.RawMatrix()
	for sweep := 0; sweep < 8; sweep++ {
		for i := 0; i < 2*n; i++ {
			start, step := (i%n)*ra.Stride, 1
			if i >= n {
				start, step = i%n, ra.Stride
			}
			m := 0.0
			for j, k := 0, start; j < n; j, k = j+1, k+step {
				m = math.Max(m, math.Abs(ra.Data[k])+math.Abs(re.Data[k]))
			}
			if m == 0 {
				continue
			}
			f := math.Ldexp(1, -math.Ilogb(m))
			for j, k := 0, start; j < n; j, k = j+1, k+step {
				ra.Data[k] *= f
				re.Data[k] *= f
			}
		}
	}
}

// fullRank reports whether every singular value of m exceeds tol.
func fullRank(m mat.Matrix, tol float64) bool {
	r, c := m.Dims()
	if r != c {
		return false
	}
	var sv mat.SVD
	if !sv.Factorize(m, mat.SVDNone) {
		return false
	}
	vals := sv.Values(nil)
	return len(vals) == r && vals[len(vals)-1] > tol
}

// svdFull factors m with full U and V and returns the rank at tol.
func svdFull(m mat.Matrix, tol float64) (u, v *mat.Dense, vals []float64, rank int, err error) {
	var sv mat.SVD
	if !sv.Factorize(m, mat.SVDFull) {
		return nil, nil, nil, 0, errors.New("natural frequencies: singular value iteration did not converge")
	}
	u, v = new(mat.Dense), new(mat.Dense)
	sv.UTo(u)
	sv.VTo(v)
	vals = sv.Values(nil)
	for _, x := range vals {
		if x > tol {
			rank++
		}
	}
	return u, v, vals, rank, nil
}

// reduce runs steps 1–4 on the scaled pencil and returns its finite
// eigenvalues in scaled units and their number; with countOnly, only the
// number (the degree of det(a + s·e)), and no eigenvalue is computed.
func reduce(a, e *mat.Dense, countOnly bool) ([]complex128, int, error) {
	eTol := eRankTol * mat.Norm(e, 2)
	aTol := aRankTol * mat.Norm(a, 2)
	for {
		n, _ := a.Dims()
		if n == 0 {
			return nil, 0, nil
		}
		// Step 1.
		u, v, sig, r, err := svdFull(e, eTol)
		if err != nil {
			return nil, 0, err
		}
		if r == 0 {
			if !fullRank(a, aTol) {
				return nil, 0, ErrSingularPencil
			}
			return nil, 0, nil
		}
		var at mat.Dense
		at.Product(u.T(), a, v)
		if r == n {
			if countOnly {
				return nil, n, nil
			}
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					at.Set(i, j, -at.At(i, j)/sig[i])
				}
			}
			var eig mat.Eigen
			if !eig.Factorize(&at, mat.EigenNone) {
				return nil, 0, errors.New("natural frequencies: eigenvalue iteration did not converge")
			}
			return eig.Values(nil), n, nil
		}
		m := n - r
		// Step 2: rotate the algebraic block to diag(S_q, 0).
		p, q, s, rq, err := svdFull(at.Slice(r, n, r, n), aTol)
		if err != nil {
			return nil, 0, err
		}
		rot := mat.NewDense(n, n, nil) // rows: diag(I, Pᵀ)
		col := mat.NewDense(n, n, nil) // cols: diag(I, Q)
		for i := 0; i < r; i++ {
			rot.Set(i, i, 1)
			col.Set(i, i, 1)
		}
		rot.Slice(r, n, r, n).(*mat.Dense).Copy(p.T())
		col.Slice(r, n, r, n).(*mat.Dense).Copy(q)
		var a2 mat.Dense
		a2.Product(rot, &at, col)
		// E in the same coordinates: diag(Σ_r, 0).
		keep := make([]int, 0, n-rq)
		for i := 0; i < n; i++ {
			if i < r || i >= r+rq {
				keep = append(keep, i)
			}
		}
		k := len(keep)
		a3 := mat.NewDense(k, k, nil)
		e3 := mat.NewDense(k, k, nil)
		for ii, i := range keep {
			if ii < r {
				e3.Set(ii, ii, sig[ii])
			}
			for jj, j := range keep {
				v := a2.At(i, j)
				for t := r; t < r+rq; t++ {
					v -= a2.At(i, t) * a2.At(t, j) / s[t-r]
				}
				a3.Set(ii, jj, v)
			}
		}
		mm := m - rq
		if mm == 0 {
			a, e = a3, e3
			continue
		}
		// Step 3: A22 is zero now (exactly, up to rounding).
		if mm > r {
			return nil, 0, ErrSingularPencil
		}
		_, v21, _, rk21, err := svdFull(a3.Slice(r, k, 0, r), aTol)
		if err != nil {
			return nil, 0, err
		}
		u12, _, _, rk12, err := svdFull(a3.Slice(0, r, r, k), aTol)
		if err != nil {
			return nil, 0, err
		}
		if rk21 < mm || rk12 < mm {
			return nil, 0, ErrSingularPencil
		}
		if r == mm {
			return nil, 0, nil // only infinite eigenvalues remain
		}
		nb := v21.Slice(0, r, mm, r) // null(A21)
		zb := u12.Slice(0, r, mm, r) // range(A12)⊥
		var a4, e4 mat.Dense
		a4.Product(zb.T(), a3.Slice(0, r, 0, r), nb)
		e4.Product(zb.T(), e3.Slice(0, r, 0, r), nb)
		a, e = &a4, &e4
	}
}
