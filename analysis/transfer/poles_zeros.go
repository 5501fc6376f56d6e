package transfer

import (
	"errors"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"
)

// This file finds the finite generalised eigenvalues of a real regular
// pencil A + s·E, i.e. the roots of det(A + s·E), without forming the
// determinant polynomial.
//
// Method:
//
//  1. Deflate the infinite eigenvalues exactly (staircase reduction, as in
//     Van Dooren, "The computation of Kronecker's canonical form of a
//     singular pencil", Linear Algebra Appl. 27, 1979): with V1 an
//     orthonormal basis of null(E) and U from a QR factorisation of A·V1,
//     Uᵀ(E + tA)V = [[t·R, ·], [0, E₂ + tA₂]], so det(A + sE) equals a
//     non-zero constant times det(A₂ + sE₂) and the block t·R carries only
//     infinite eigenvalues. Repeat on (A₂, E₂) until E₂ is non-singular.
//     Rank decisions are on blocks of E, whose non-zero singular values are
//     capacitances and inductances (after scaling) and whose zero ones are
//     rounding, so the decision is clear even for high-index pencils (the
//     border row of the zero pencil gives an index equal to the relative
//     degree of H). Zero columns of E are split off first without an SVD.
//  2. Shift-and-invert on the reduced pencil: with X = A₂ + σE₂ and
//     M = X⁻¹E₂, det(A₂ + sE₂) = det(X)·det(I + (s−σ)M), so every finite
//     eigenvalue λ gives an eigenvalue μ = −1/(λ−σ) of M (gonum's Eigen).
//  3. Polish each root by Newton steps on det(A + sE) itself, using the
//     log-derivative trace((A+sE)⁻¹E) deflated by the other roots, which
//     gives full relative accuracy independent of σ and of the spread.

// errBadShift says that A + σE is too ill-conditioned for the shift σ.
var errBadShift = errors.New("shift too close to a root")

// errSingularPencil says that det(A + sE) ≡ 0.
var errSingularPencil = errors.New("singular pencil")

// Rank and conditioning thresholds, all relative and dimensionless.
const (
	// eRankTol: singular values of a block of E below eRankTol·‖E‖₂ are
	// zero. Energy-store values spread over many decades stay far above it.
	eRankTol = 1e-11
	// aRankTol: a diagonal of R (QR of A·V1) below aRankTol·‖A‖ means the
	// pencil is singular.
	aRankTol = 1e-13
	// maxShiftCond: largest accepted 1-norm condition number of A₂ + σE₂.
	maxShiftCond = 1e13
	// clusterTol: two roots closer than clusterTol·|λ| are one double
	// root; larger groups get the wider multipleRootTol(m) (a perturbed
	// Jordan block of size m splits by ε^{1/m}). A group is replaced by its
	// mean, which is accurate to O(ε).
	clusterTol = 1e-5
	// clusterAbs: in scaled units (multiples of the characteristic
	// frequency), roots closer than clusterAbs are one multiple root too;
	// this catches a multiple root at s = 0, split by ±√ε.
	clusterAbs = 1e-7
)

// reducedPencil is a pencil A + sE with E non-singular having the same
// finite eigenvalues as the pencil it was deflated from.
type reducedPencil struct {
	a, e *mat.Dense // r×r; nil when r = 0
}

// deflateInfinite removes the infinite eigenvalues of the regular pencil
// (a, e) (step 1 above). It returns errSingularPencil if det ≡ 0 is found.
func deflateInfinite(a, e *mat.Dense) (reducedPencil, error) {
	return deflateInfiniteTol(a, e, aRankTol)
}

// deflateInfiniteTol is deflateInfinite with the rank tolerance aTol of
// A (relative to ‖A‖₁) given.
func deflateInfiniteTol(a, e *mat.Dense, aTol float64) (reducedPencil, error) {
	// Frobenius norm: within √n of ‖E‖₂, and free of an SVD.
	eNorm := mat.Norm(e, 2)
	aNorm := mat.Norm(a, 1)
	if eNorm == 0 {
		return reducedPencil{}, nil
	}
	tol := eRankTol * eNorm
	// First step: the zero columns of E span part of null(E) exactly.
	n, _ := e.Dims()
	nz := nonzeroCols(e)
	v1 := make([]int, 0, n-len(nz))
	isNZ := make([]bool, n)
	for _, j := range nz {
		isNZ[j] = true
	}
	for j := 0; j < n; j++ {
		if !isNZ[j] {
			v1 = append(v1, j)
		}
	}
	av1 := pickCols(a, v1)
	av2, ev2 := pickCols(a, nz), pickCols(e, nz)
	for {
		k := 0
		if av1 != nil {
			k = av1.RawMatrix().Cols
		}
		if k > 0 {
			// U from QR of A·V1; keep rows k.. of Uᵀ·(A, E)·V2.
			var qr mat.QR
			qr.Factorize(av1)
			var rr mat.Dense
			qr.RTo(&rr)
			for i := 0; i < k; i++ {
				if math.Abs(rr.At(i, i)) <= aTol*aNorm {
					return reducedPencil{}, errSingularPencil
				}
			}
			var q mat.Dense
			qr.QTo(&q)
			m, _ := q.Dims()
			if m == k {
				return reducedPencil{}, nil
			}
			u2 := q.Slice(0, m, k, m)
			var a2, e2 mat.Dense
			a2.Mul(u2.T(), av2)
			e2.Mul(u2.T(), ev2)
			av2, ev2 = &a2, &e2
		}
		// Next null space, of the square E₂.
		r, _ := ev2.Dims()
		if r == 0 {
			return reducedPencil{}, nil
		}
		// Fast exit: E₂ clearly non-singular. σmin ≥ ‖E₂‖₁/(√r·cond₁), so a
		// condition estimate well below 1/eRankTol settles the rank.
		var lu mat.LU
		lu.Factorize(ev2)
		if c := lu.Cond(); c*math.Sqrt(float64(r))*eRankTol*eNorm < mat.Norm(ev2, 1)/10 {
			return reducedPencil{a: mat.DenseCopyOf(av2), e: mat.DenseCopyOf(ev2)}, nil
		}
		var sv mat.SVD
		if !sv.Factorize(ev2, mat.SVDFullV) {
			return reducedPencil{}, errors.New("singular value iteration did not converge")
		}
		vals := sv.Values(nil)
		nzk := 0
		for _, v := range vals {
			if v > tol {
				nzk++
			}
		}
		if nzk == r {
			return reducedPencil{a: mat.DenseCopyOf(av2), e: mat.DenseCopyOf(ev2)}, nil
		}
		var v mat.Dense
		sv.VTo(&v)
		vNull, vRange := v.Slice(0, r, nzk, r), v.Slice(0, r, 0, nzk)
		var an mat.Dense
		an.Mul(av2, vNull)
		av1 = &an
		if nzk == 0 {
			continue // E₂ is zero: the QR step checks A₂ and finishes
		}
		var ar, er mat.Dense
		ar.Mul(av2, vRange)
		er.Mul(ev2, vRange)
		av2, ev2 = &ar, &er
	}
}

// pickCols returns the columns idx of m as a new matrix (nil if none).
func pickCols(m *mat.Dense, idx []int) *mat.Dense {
	if len(idx) == 0 {
		return nil
	}
	r, _ := m.Dims()
	out := mat.NewDense(r, len(idx), nil)
	for j, c := range idx {
		for i := 0; i < r; i++ {
			out.Set(i, j, m.At(i, c))
		}
	}
	return out
}

// eigenvaluesShifted returns the eigenvalues of the reduced pencil by
// shift-and-invert with the real shift sigma, or errBadShift.
func (p reducedPencil) eigenvaluesShifted(sigma float64, level shiftLevel) ([]complex128, error) {
	if p.a == nil {
		return nil, nil
	}
	r, _ := p.a.Dims()
	x := mat.NewDense(r, r, nil)
	x.Scale(sigma, p.e)
	x.Add(x, p.a)
	var lu mat.LU
	lu.Factorize(x)
	if !shiftAccepted(&lu, level) {
		return nil, errBadShift
	}
	var m mat.Dense
	if err := lu.SolveTo(&m, false, p.e); solveFailed(err) {
		return nil, errBadShift
	}
	mu, err := eigenvalues(&m)
	if err != nil {
		return nil, err
	}
	roots := make([]complex128, 0, len(mu))
	for _, u := range mu {
		if u != 0 {
			roots = append(roots, complex(sigma, 0)-1/u)
		}
	}
	return roots, nil
}

// finiteEigenvalues returns the finite roots of det(a + s·e), trying the
// given real shifts in turn (scaled units). It returns errSingularPencil
// when det ≡ 0.
func finiteEigenvalues(a, e *mat.Dense, shifts []float64) ([]complex128, error) {
	return finiteEigenvaluesTol(a, e, shifts, aRankTol)
}

// finiteEigenvaluesTol is finiteEigenvalues with the rank tolerance of
// deflateInfiniteTol.
func finiteEigenvaluesTol(a, e *mat.Dense, shifts []float64, aTol float64) ([]complex128, error) {
	p, err := deflateInfiniteTol(a, e, aTol)
	if err != nil {
		return nil, err
	}
	for _, level := range shiftLevels {
		for _, sigma := range shifts {
			roots, err := p.eigenvaluesShifted(sigma, level)
			if errors.Is(err, errBadShift) {
				continue
			}
			return roots, err
		}
	}
	return nil, errSingularPencil
}

// shiftLevel is how ill conditioned a shifted matrix may be and still
// be used: each level is tried on every shift before the next.
type shiftLevel int

const (
	// strictShift: a condition estimate of at most maxShiftCond.
	strictShift shiftLevel = iota
	// relaxedShift: at most relaxedShiftCond.
	relaxedShift
	// anyShift: any finite condition estimate. A chain of gains is as ill
	// conditioned as its gain (twenty stages of gain 100: 10⁴⁰) at every
	// shift and still factors stably with partial pivoting (the sweep's
	// componentwise pivot test, mna's pivotVanished, judges such a
	// matrix regular).
	anyShift
)

// shiftLevels are the levels in the order they are tried.
var shiftLevels = [...]shiftLevel{strictShift, relaxedShift, anyShift}

// shiftAccepted reports whether the factored shifted matrix x may be
// used at the given level (see shiftLevel). A circuit with a wide gain
// spread (fifteen gain stages, 10¹⁵ from input to output) has matrices
// that ill conditioned at every shift and still factors stably, as the
// sweep's pivot rule says; the check of the extracted H against direct
// solves (verifyExtraction) judges the result, and a circuit singular at
// every check frequency is ErrSingularSystem there.
func shiftAccepted(lu *mat.LU, level shiftLevel) bool {
	c := lu.Cond()
	if math.IsInf(c, 0) || math.IsNaN(c) {
		return false
	}
	switch level {
	case strictShift:
		return c <= maxShiftCond
	case relaxedShift:
		return c <= relaxedShiftCond
	}
	return true
}

// relaxedShiftCond: the largest condition estimate of a shifted matrix
// accepted when no shift is below maxShiftCond.
const relaxedShiftCond = 1e20

// solveFailed reports whether an LU solve failed; a mat.Condition is
// gonum's warning of a large condition number, which shiftAccepted has
// already judged, and the solution is computed.
func solveFailed(err error) bool {
	var c mat.Condition
	return err != nil && !errors.As(err, &c)
}

// errNonFinite says a matrix handed to the eigenvalue routine holds NaN
// or ±Inf; it is refused before the call, which might not return on it.
var errNonFinite = errors.New("non-finite matrix entry before an eigenvalue computation")

// eigenvalues returns the eigenvalues of the square matrix m; it refuses
// non-finite entries (errNonFinite) before calling the iteration.
func eigenvalues(m *mat.Dense) ([]complex128, error) {
	raw := m.RawMatrix()
	for i := 0; i < raw.Rows; i++ {
		for _, v := range raw.Data[i*raw.Stride : i*raw.Stride+raw.Cols] {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, errNonFinite
			}
		}
	}
	var eig mat.Eigen
	if ok := eig.Factorize(m, mat.EigenNone); !ok {
		return nil, errors.New("eigenvalue iteration did not converge")
	}
	return eig.Values(nil), nil
}

// nonzeroCols lists the columns of m that have a non-zero entry.
func nonzeroCols(m *mat.Dense) []int {
	r, c := m.Dims()
	var out []int
	for j := 0; j < c; j++ {
		for i := 0; i < r; i++ {
			if m.At(i, j) != 0 {
				out = append(out, j)
				break
			}
		}
	}
	return out
}

// complexLU is a dense LU factorisation with partial pivoting of the
// complex matrix A + s·E, used to polish roots. Invariant after factor:
// lu holds L (unit lower, below the diagonal) and U, row-major n×n, and
// row i of the factored matrix is row piv[i] of A + sE.
type complexLU struct {
	n   int
	lu  []complex128
	piv []int
}

// factor factorises a + s·e and reports whether a pivot was exactly zero.
func (f *complexLU) factor(a, e *mat.Dense, s complex128) (singular bool) {
	n, _ := a.Dims()
	if f.n != n {
		f.n = n
		f.lu = make([]complex128, n*n)
		f.piv = make([]int, n)
	}
	ar, er := a.RawMatrix(), e.RawMatrix()
	for i := 0; i < n; i++ {
		f.piv[i] = i
		for j := 0; j < n; j++ {
			f.lu[i*n+j] = complex(ar.Data[i*ar.Stride+j], 0) + s*complex(er.Data[i*er.Stride+j], 0)
		}
	}
	lu := f.lu
	for k := 0; k < n; k++ {
		p, best := k, cabs1(lu[k*n+k])
		for i := k + 1; i < n; i++ {
			if v := cabs1(lu[i*n+k]); v > best {
				p, best = i, v
			}
		}
		if best == 0 {
			return true
		}
		if p != k {
			for j := 0; j < n; j++ {
				lu[k*n+j], lu[p*n+j] = lu[p*n+j], lu[k*n+j]
			}
			f.piv[k], f.piv[p] = f.piv[p], f.piv[k]
		}
		inv := 1 / lu[k*n+k]
		for i := k + 1; i < n; i++ {
			l := lu[i*n+k] * inv
			if l == 0 {
				continue
			}
			lu[i*n+k] = l
			ri, rk := lu[i*n+k+1:i*n+n], lu[k*n+k+1:k*n+n]
			for j := range ri {
				ri[j] -= l * rk[j]
			}
		}
	}
	return false
}

// solve overwrites b (length n, in the original row order) with the
// solution of (A + sE)·x = b. buf is scratch of length n.
func (f *complexLU) solve(b, buf []complex128) {
	n, lu := f.n, f.lu
	for i := 0; i < n; i++ {
		buf[i] = b[f.piv[i]]
	}
	for i := 0; i < n; i++ {
		v := buf[i]
		for j := 0; j < i; j++ {
			v -= lu[i*n+j] * buf[j]
		}
		buf[i] = v
	}
	for i := n - 1; i >= 0; i-- {
		v := buf[i]
		for j := i + 1; j < n; j++ {
			v -= lu[i*n+j] * buf[j]
		}
		buf[i] = v / lu[i*n+i]
	}
	copy(b, buf)
}

// cabs1 is |Re|+|Im|, the cheap pivot size.
func cabs1(v complex128) float64 { return math.Abs(real(v)) + math.Abs(imag(v)) }

// logDet returns d/ds ln det(A + sE) = trace((A + sE)⁻¹E) for the
// factorised matrix; cols are the non-zero columns of e.
func (f *complexLU) logDerivative(e *mat.Dense, cols []int) complex128 {
	n := f.n
	b := make([]complex128, n)
	buf := make([]complex128, n)
	var tr complex128
	for _, c := range cols {
		for i := 0; i < n; i++ {
			b[i] = complex(e.At(i, c), 0)
		}
		f.solve(b, buf)
		tr += b[c]
	}
	return tr
}

// polishRoots improves roots of det(a + s·e) in place by deflated Newton
// steps. Roots in a cluster (see mergeClusters) are replaced by the cluster
// mean and not polished; a real root stays real; for a conjugate pair only
// the member with positive imaginary part is iterated and mirrored.
func polishRoots(a, e *mat.Dense, roots []complex128) {
	cols := nonzeroCols(e)
	var f complexLU
	mergeChecked(a, e, cols, &f, roots)
	for i := range roots {
		if imag(roots[i]) < 0 || roots[i] == 0 || inCluster(roots, i) {
			continue // an exact 0 is the rank test's (deflateOrigin)
		}
		partner := -1
		if imag(roots[i]) > 0 {
			for j, r := range roots {
				if r == cmplx.Conj(roots[i]) {
					partner = j
					break
				}
			}
			if partner < 0 {
				continue // unpaired complex root: leave it alone
			}
		}
		s := roots[i]
		for it := 0; it < 3; it++ {
			if f.factor(a, e, s) {
				break // s is an exact root
			}
			g := f.logDerivative(e, cols)
			for j, r := range roots {
				switch j {
				case i:
				case partner:
					g -= 1 / (s - cmplx.Conj(s))
				default:
					g -= 1 / (s - r)
				}
			}
			d := 1 / g
			if partner < 0 {
				d = complex(real(d), 0)
			}
			scale := cmplx.Abs(s)
			if scale == 0 {
				scale = 1
			}
			if cmplx.IsNaN(d) || cmplx.IsInf(d) || cmplx.Abs(d) > 1e-3*scale {
				break // not in the basin: keep the eigen-solver's value
			}
			s -= d
			if cmplx.Abs(d) <= 1e-9*scale {
				break // quadratic convergence: the next step is below 1e-18
			}
		}
		if partner >= 0 && imag(s) <= 0 {
			continue // a pair must stay a pair
		}
		roots[i] = s
		if partner >= 0 {
			roots[partner] = cmplx.Conj(s)
		}
	}
}

// mergeChecked merges the groups of roots that are one multiple root
// split by rounding (mergeClusters) and then checks every merged group
// of three or more against det(a + s·e) itself (splitFalseClusters), so a
// merge decided from the eigen-solver's values alone never stands
// unchecked. cols are the non-zero columns of e; f is scratch.
func mergeChecked(a, e *mat.Dense, cols []int, f *complexLU, roots []complex128) {
	raw := append([]complex128(nil), roots...)
	mergeClusters(roots)
	splitFalseClusters(a, e, cols, f, roots, raw)
}

// mergeRoots is mergeChecked for a pencil whose roots are not polished.
func mergeRoots(a, e *mat.Dense, roots []complex128) {
	var f complexLU
	mergeChecked(a, e, nonzeroCols(e), &f, roots)
}

// inCluster reports whether another root lies within clusterTol of roots[i]
// (its own conjugate excluded). After mergeClusters the members of a
// cluster are equal, so this finds them.
func inCluster(roots []complex128, i int) bool {
	for j, r := range roots {
		if j == i || (imag(roots[i]) != 0 && r == cmplx.Conj(roots[i])) {
			continue
		}
		if near(r, roots[i], clusterTol) {
			return true
		}
	}
	return false
}

// near reports whether two roots are within tol relative (or clusterAbs
// absolute) of each other.
func near(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= math.Max(tol*math.Max(cmplx.Abs(a), cmplx.Abs(b)), clusterAbs)
}

// multipleRootTol is the relative spread (diameter over magnitude) up to
// which m roots are taken as one m-fold root: a relative perturbation δ of
// the pencil splits an m-fold root by about δ^(1/m), so the bound is
// (1e6·ε)^(1/m), allowing a condition of 1e6 (a triple pole of a
// seven-unknown circuit was seen split by 1.5e-4, i.e. δ ≈ 1.5e4·ε), and
// never below clusterTol: 1.5e-5 for m = 2, 6e-4 for m = 3, 3.9e-3 for
// m = 4. Distinct roots closer than this cannot be told from a multiple
// root in float64.
func multipleRootTol(m int) float64 {
	return math.Max(clusterTol, math.Pow(1e6*0x1p-52, 1/float64(m)))
}

// mergeClusters replaces each group of roots that is one multiple root
// split by rounding by the group mean (made real when its imaginary part
// is within clusterTol of its modulus, as for a real m-fold root split
// into a real root and conjugate pairs). A group is a connected set under
// near with the tolerance of its size: candidates are linked with
// multipleRootTol(len(roots)); a group of k roots whose diameter exceeds
// multipleRootTol(k) is split again with multipleRootTol(k−1), and so on
// down to clusterTol for pairs. Roots exactly 0 are left as they are.
func mergeClusters(roots []complex128) {
	var all []int
	for i, r := range roots {
		if r != 0 { // an exact 0 is the rank test's (deflateOrigin)
			all = append(all, i)
		}
	}
	mergeGroups(roots, all, len(all))
}

// mergeGroups links the roots idx with multipleRootTol(m) and merges or
// re-splits each linked group (see mergeClusters).
func mergeGroups(roots []complex128, idx []int, m int) {
	if m < 2 {
		return
	}
	tol := multipleRootTol(m)
	done := make([]bool, len(idx))
	for a := range idx {
		if done[a] {
			continue
		}
		done[a] = true
		members := []int{idx[a]}
		for k := 0; k < len(members); k++ {
			ri := roots[members[k]]
			for b := range idx {
				if !done[b] && near(roots[idx[b]], ri, tol) {
					done[b] = true
					members = append(members, idx[b])
				}
			}
		}
		k := len(members)
		if k < 2 {
			continue
		}
		if k > m || !(withinDiameter(roots, members, multipleRootTol(k)) || jordanLike(roots, members)) {
			mergeGroups(roots, members, min(k, m)-1)
			continue
		}
		var sum complex128
		for _, j := range members {
			sum += roots[j]
		}
		mean := sum / complex(float64(k), 0)
		if math.Abs(imag(mean)) <= clusterTol*cmplx.Abs(mean) {
			mean = complex(real(mean), 0)
		}
		for _, j := range members {
			roots[j] = mean
		}
	}
}

// jordanLikeTol bounds the normalised power sums of jordanLike: for a
// 22-fold pole split by rounding they were seen below 2e-7 up to q = 12;
// for the 15-fold pole of fifteen high-pass stages of gain 2 (rounding
// amplified along the chain) 3e-9, 1e-7, 2.5e-6, 4e-5, 4e-4 for
// q = 2 … 6.
const jordanLikeTol = 1e-4

// jordanLikeMaxQ is the highest power sum jordanLike tests: enough to
// tell a polygon around its mean from distinct roots (whose sums are of
// the size of Σ|rᵢ − c|^q from q = 2 on), while the higher sums, which
// rounding in the low coefficients of the characteristic polynomial
// fills, are left to the check of the merged group against the pencil
// (splitFalseClusters).
const jordanLikeMaxQ = 4

// jordanLike reports whether the roots idx (k of them, k ≥ 3) are one
// k-fold root split by rounding however wide the split: a perturbation δ
// of a k-fold root (a Jordan block: k identical buffered stages) puts the
// roots at c + δ^(1/k)·e^(2πij/k), a regular polygon around the mean c,
// whose power sums Σ(rᵢ − c)^q vanish for q = 1 … k−1. Distinct roots
// (a ladder's, two pairs of a filter) have power sums of the size of
// Σ|rᵢ − c|^q. Rounding in every coefficient of the characteristic
// polynomial, not only the constant one, makes the sums grow with q
// (relative size δ^((k−q)/k) roughly), so the test asks
// |Σ(rᵢ − c)^q| ≤ jordanLikeTol·Σ|rᵢ − c|^q for q = 2 … min(⌈k/2⌉,
// jordanLikeMaxQ), and every |rᵢ − c| below (1e8·ε)^(1/k)·|c| (a
// condition of 10⁸; 0.45 for k = 22, 2.8e-3 for k = 3); the check of the
// merged group against the pencil (mergeChecked) and of the extracted H
// against direct solves catch a wrong merge.
func jordanLike(roots []complex128, idx []int) bool {
	k := len(idx)
	if k < 3 {
		return false
	}
	var c complex128
	for _, i := range idx {
		c += roots[i]
	}
	c /= complex(float64(k), 0)
	if c == 0 {
		return false
	}
	d := make([]complex128, k)
	pw := make([]complex128, k)
	rmax := math.Pow(1e8*0x1p-52, 1/float64(k))
	for j, i := range idx {
		d[j] = (roots[i] - c) / c
		if cmplx.Abs(d[j]) > rmax {
			return false
		}
		pw[j] = d[j]
	}
	for q := 2; q <= min((k+1)/2, jordanLikeMaxQ); q++ {
		var sum complex128
		abs := 0.0
		for j := range pw {
			pw[j] *= d[j]
			sum += pw[j]
			abs += cmplx.Abs(pw[j])
		}
		if abs == 0 {
			return true
		}
		if cmplx.Abs(sum) > jordanLikeTol*abs {
			return false
		}
	}
	return true
}

// withinDiameter reports whether every two of the roots idx are near
// with tolerance tol.
func withinDiameter(roots []complex128, idx []int, tol float64) bool {
	for a, i := range idx {
		for _, j := range idx[a+1:] {
			if !near(roots[i], roots[j], tol) {
				return false
			}
		}
	}
	return true
}

// clusterShapeTol: a merged group of k roots is kept as one k-fold root
// when the deflated logarithmic derivative of the determinant near it is
// k/(s − μ) within this relative tolerance (see splitFalseClusters).
const clusterShapeTol = 1e-5

// splitFalseClusters checks every group mergeClusters made against the
// pencil itself: near a genuine k-fold root μ, det(a + s·e) behaves as
// (s − μ)^k, so its logarithmic derivative, less the terms 1/(s − r) of
// the other roots, is k/(s − μ); the eigen-solver's spread of the group
// does not enter, since the derivative comes from a factorisation away
// from the root. A group that fails (one stage's pole 9e-4 from the
// four-fold pole of four identical stages, merged into one five-fold
// root) is split into a (k−1)-fold and a simple root when that structure
// fits (splitOff), or else re-split from its eigen-solver values one
// size down (mergeGroups), its conjugate group with it; the smaller
// groups are checked in turn. Pairs (merged only within 1.5e-5) are
// kept as merged.
func splitFalseClusters(a, e *mat.Dense, cols []int, f *complexLU, roots, raw []complex128) {
	for pass := 0; pass < len(roots); pass++ {
		split := false
		seen := make([]bool, len(roots))
		for i, mu := range roots {
			if seen[i] || imag(mu) < 0 {
				continue
			}
			var members, conj []int
			for j, r := range roots {
				if r == mu {
					members = append(members, j)
					seen[j] = true
				} else if imag(mu) != 0 && r == cmplx.Conj(mu) {
					conj = append(conj, j)
				}
			}
			k := len(members)
			if k < 3 || clusterShaped(a, e, cols, f, roots, raw, members) {
				continue
			}
			if vals, ok := splitOff(a, e, cols, f, roots, raw, members); ok {
				for i, j := range members {
					roots[j] = vals[i]
				}
				split = true
				continue
			}
			for _, g := range [][]int{members, conj} {
				if len(g) == 0 {
					continue
				}
				for _, j := range g {
					roots[j] = raw[j]
				}
				mergeGroups(roots, g, len(g)-1)
			}
			split = true
		}
		if !split {
			return
		}
	}
}

// clusterShaped reports whether the equal roots members behave as one
// multiple root of det(a + s·e) (see splitFalseClusters).
func clusterShaped(a, e *mat.Dense, cols []int, f *complexLU, roots, raw []complex128, members []int) bool {
	mu := roots[members[0]]
	vals := make([]complex128, len(members))
	for i := range vals {
		vals[i] = mu
	}
	return groupFits(a, e, cols, f, roots, raw, members, vals, true)
}

// groupFits reports whether the roots members, given the values vals,
// match det(a + s·e): the logarithmic derivative at two points 4ρ from
// their mean (ρ the eigen-solver's spread; at least groupFitMinRadius),
// less 1/(s − r) of every root
// (vals for the members), is below clusterShapeTol·k/|s − mean|. A point
// that cannot be evaluated is no evidence against the values.
func groupFits(a, e *mat.Dense, cols []int, f *complexLU, roots, raw []complex128, members []int, vals []complex128, wide bool) bool {
	var mu complex128
	for _, v := range vals {
		mu += v
	}
	k := float64(len(members))
	mu /= complex(k, 0)
	rho := 0.0
	in := make(map[int]bool, len(members))
	for _, j := range members {
		rho = math.Max(rho, cmplx.Abs(raw[j]-mu))
		in[j] = true
	}
	if rho == 0 {
		return true
	}
	// At 4ρ first; then, with wide and when that is closer, at
	// groupFitMinRadius: next to a k-fold root A + sE is conditioned as
	// |μ/(s − μ)|^k, and for a group the eigen-solver split only a little
	// (the triple pole of a block of three unknowns, by 1.6e-5) rounding
	// at 4ρ exceeds the tolerance. The values fit when they fit at either
	// radius. The candidate values of splitOff, themselves estimates from
	// the split values, are tested at 4ρ only, where an estimate a little
	// off still shows.
	radii := []float64{4 * rho}
	if r := groupFitMinRadius(len(members)) * cmplx.Abs(mu); wide && r > 4*rho {
		radii = append(radii, r)
	}
	for _, radius := range radii {
		if fitsAt(a, e, cols, f, roots, in, vals, mu, radius) {
			return true
		}
	}
	return false
}

// fitsAt is the test of groupFits at two points radius from mu.
func fitsAt(a, e *mat.Dense, cols []int, f *complexLU, roots []complex128, in map[int]bool, vals []complex128, mu complex128, radius float64) bool {
	k := float64(len(vals))
	for _, th := range []float64{0.7, 2.1} {
		s := mu + cmplx.Rect(radius, th)
		if f.factor(a, e, s) {
			continue
		}
		g := f.logDerivative(e, cols)
		for j, r := range roots {
			if !in[j] {
				g -= 1 / (s - r)
			}
		}
		for _, v := range vals {
			g -= 1 / (s - v)
		}
		if cmplx.Abs(g)*cmplx.Abs(s-mu)/k > clusterShapeTol {
			return false
		}
	}
	return true
}

// groupFitMinRadius returns the least distance, relative to the group's
// mean, at which groupFits evaluates the pencil for a group of k roots
// when 4ρ is closer:
// 4·multipleRootTol(k) (2.4e-3 for k = 3, where A + sE is conditioned
// near 10⁸ and a false merge of roots 10⁻⁵ apart still shows as
// (10⁻⁵/2.4e-3)² above clusterShapeTol), at most 0.1.
func groupFitMinRadius(k int) float64 {
	return math.Min(4*multipleRootTol(k), 0.1)
}

// splitOff tries, for a real group of k ≥ 3 equal roots that is not one
// k-fold root, the structure of a (k−1)-fold root a and a simple root b
// with the group's mean μ and second central power sum Σ(rᵢ − μ)² of the
// eigen-solver's values (symmetric functions of a split group are
// accurate when its members are not): b − μ = −(k−1)(a − μ) and
// Σ(rᵢ − μ)² = k(k−1)(a − μ)². It returns the members' values when one
// sign fits the pencil (groupFits).
func splitOff(a, e *mat.Dense, cols []int, f *complexLU, roots, raw []complex128, members []int) ([]complex128, bool) {
	k := len(members)
	mu := roots[members[0]]
	if k < 3 || imag(mu) != 0 {
		return nil, false
	}
	var m2 complex128
	for _, j := range members {
		m2 += (raw[j] - mu) * (raw[j] - mu)
	}
	if real(m2) <= 0 {
		return nil, false
	}
	d := math.Sqrt(real(m2) / float64(k*(k-1)))
	for _, sg := range []float64{1, -1} {
		av := complex(real(mu)+sg*d, 0)
		bv := complex(real(mu)-sg*float64(k-1)*d, 0)
		vals := make([]complex128, k)
		for i := range vals {
			vals[i] = av
		}
		vals[k-1] = bv
		if groupFits(a, e, cols, f, roots, raw, members, vals, false) {
			return vals, true
		}
	}
	return nil, false
}
