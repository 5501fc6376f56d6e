package analysis

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
// Method (shift-and-invert with exact deflation of the infinite
// eigenvalues):
//
//	det(A + sE) = det(X)·det(I + (s−σ)M),  X = A + σE,  M = X⁻¹E,
//
// so every finite eigenvalue λ gives an eigenvalue μ = −1/(λ−σ) of M, and
// the infinite eigenvalues give μ = 0. Those zero eigenvalues are removed
// before the eigen-solver sees M, because a nilpotent Jordan block of size
// k (higher-index circuits: capacitor–source loops, inductor cut-sets, the
// border row of the zero pencil) perturbed by rounding shows up as |μ| ~
// ε^{1/k} and would masquerade as a huge finite root. Deflation is by
// orthogonal compression: first onto the row space of E (null(M) ⊇
// null(E) exactly), then repeatedly onto the complement of null(M₂) found
// by an SVD rank decision, which keeps M block upper triangular with the
// nilpotent part split off. Each root is finally polished by Newton steps
// on det(A + sE) itself (log-derivative trace((A+sE)⁻¹E), deflated by the
// other roots), which gives full relative accuracy independent of σ.

// errBadShift says that A + σE is too ill-conditioned for the shift σ.
var errBadShift = errors.New("shift too close to a root")

// Rank and conditioning thresholds, all relative and dimensionless.
const (
	// eRankTol: singular values of E below eRankTol·max are zero. Energy
	// store values spread over many decades stay far above it.
	eRankTol = 1e-12
	// mZeroTol: singular values of the compressed M below mZeroTol·‖X⁻¹‖‖E‖
	// belong to infinite eigenvalues.
	mZeroTol = 1e-11
	// mFastTol: if every eigenvalue of M is above mFastTol·‖X⁻¹‖‖E‖ no
	// infinite eigenvalue is left and no SVD is needed.
	mFastTol = 1e-7
	// maxShiftCond: largest accepted 1-norm condition number of A + σE.
	maxShiftCond = 1e13
	// clusterTol: roots closer than clusterTol·|λ| are one multiple root
	// (a perturbed Jordan block of size k splits by ε^{1/k}); they are
	// replaced by their mean, which is accurate to O(ε).
	clusterTol = 1e-5
)

// finiteEigenvalues returns the finite roots of det(a + s·e) using the real
// shift sigma. It returns errBadShift when a + sigma·e is (nearly)
// singular. cols lists the columns of e that are not identically zero.
func finiteEigenvalues(a, e *mat.Dense, sigma float64) ([]complex128, error) {
	n, _ := a.Dims()
	cols := nonzeroCols(e)
	if len(cols) == 0 {
		return nil, nil
	}
	rows := nonzeroRows(e)
	// Row space of E restricted to its non-zero columns.
	sub := mat.NewDense(len(rows), len(cols), nil)
	for i, r := range rows {
		for j, c := range cols {
			sub.Set(i, j, e.At(r, c))
		}
	}
	w, r := rangeBasis(sub, eRankTol, 0)
	if r == 0 {
		return nil, nil
	}
	// Ew = E[:, cols]·W, n×r.
	ecols := mat.NewDense(n, len(cols), nil)
	for j, c := range cols {
		for i := 0; i < n; i++ {
			ecols.Set(i, j, e.At(i, c))
		}
	}
	var ew mat.Dense
	ew.Mul(ecols, w)

	x := mat.NewDense(n, n, nil)
	x.Scale(sigma, e)
	x.Add(x, a)
	var lu mat.LU
	lu.Factorize(x)
	cond := lu.Cond()
	if math.IsInf(cond, 0) || math.IsNaN(cond) || cond > maxShiftCond {
		return nil, errBadShift
	}
	var y mat.Dense
	if err := lu.SolveTo(&y, false, &ew); err != nil {
		return nil, errBadShift
	}
	// M = Wᵀ·Y[cols, :], r×r.
	ycols := mat.NewDense(len(cols), r, nil)
	for i, c := range cols {
		for j := 0; j < r; j++ {
			ycols.Set(i, j, y.At(c, j))
		}
	}
	m := mat.NewDense(r, r, nil)
	m.Mul(w.T(), ycols)
	// ‖X⁻¹‖₁ ≈ cond/‖X‖₁: the scale against which μ counts as zero.
	ref := cond / mat.Norm(x, 1) * mat.Norm(e, 1)

	mu, err := deflatedEigen(m, ref)
	if err != nil {
		return nil, err
	}
	roots := make([]complex128, 0, len(mu))
	for _, u := range mu {
		roots = append(roots, complex(sigma, 0)-1/u)
	}
	return roots, nil
}

// deflatedEigen returns the non-zero eigenvalues of m, splitting off its
// numerically nilpotent part (singular values below mZeroTol·ref) first.
func deflatedEigen(m *mat.Dense, ref float64) ([]complex128, error) {
	for {
		r, _ := m.Dims()
		if r == 0 {
			return nil, nil
		}
		mu, err := eigenvalues(m)
		if err != nil {
			return nil, err
		}
		small := false
		for _, u := range mu {
			if cmplx.Abs(u) <= mFastTol*ref {
				small = true
				break
			}
		}
		if !small {
			return mu, nil
		}
		// Split off null(m): with Q = [Vnull, Vnz], QᵀmQ is block upper
		// triangular with a zero leading block.
		vnz, k := rangeBasis(m, 0, mZeroTol*ref)
		if k == 0 {
			return nil, nil // m is numerically zero: all eigenvalues infinite
		}
		if k == r {
			return mu, nil // full rank: the small eigenvalues are genuine
		}
		var t, next mat.Dense
		t.Mul(m, vnz)
		next.Mul(vnz.T(), &t)
		m = &next
	}
}

// eigenvalues returns the eigenvalues of the square matrix m.
func eigenvalues(m *mat.Dense) ([]complex128, error) {
	var eig mat.Eigen
	if ok := eig.Factorize(m, mat.EigenNone); !ok {
		return nil, errors.New("eigenvalue iteration did not converge")
	}
	return eig.Values(nil), nil
}

// rangeBasis returns an orthonormal basis (as columns) of the row space of
// m: the right singular vectors whose singular values exceed
// max(relTol·σmax, absTol), and their number.
func rangeBasis(m *mat.Dense, relTol, absTol float64) (*mat.Dense, int) {
	var svd mat.SVD
	_, c := m.Dims()
	if ok := svd.Factorize(m, mat.SVDFullV); !ok {
		return mat.NewDense(c, 1, nil), 0
	}
	sv := svd.Values(nil)
	tol := absTol
	if len(sv) > 0 && relTol*sv[0] > tol {
		tol = relTol * sv[0]
	}
	k := 0
	for _, v := range sv {
		if v > tol {
			k++
		}
	}
	if k == 0 {
		return mat.NewDense(c, 1, nil), 0
	}
	var v mat.Dense
	svd.VTo(&v)
	return mat.DenseCopyOf(v.Slice(0, c, 0, k)), k
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

// nonzeroRows lists the rows of m that have a non-zero entry.
func nonzeroRows(m *mat.Dense) []int {
	r, c := m.Dims()
	var out []int
	for i := 0; i < r; i++ {
		for j := 0; j < c; j++ {
			if m.At(i, j) != 0 {
				out = append(out, i)
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
// steps. Roots in a cluster (see clusterTol) are replaced by the cluster
// mean and not polished; a real root stays real; for a conjugate pair only
// the member with positive imaginary part is iterated and mirrored.
func polishRoots(a, e *mat.Dense, roots []complex128) {
	mergeClusters(roots)
	cols := nonzeroCols(e)
	var f complexLU
	for i := range roots {
		if imag(roots[i]) < 0 || inCluster(roots, i) {
			continue
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
			if cmplx.Abs(d) <= 1e-15*scale {
				break
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

// inCluster reports whether another root lies within clusterTol of roots[i]
// (its own conjugate excluded).
func inCluster(roots []complex128, i int) bool {
	for j, r := range roots {
		if j == i || (imag(roots[i]) != 0 && r == cmplx.Conj(roots[i])) {
			continue
		}
		if cmplx.Abs(r-roots[i]) <= clusterTol*cmplx.Abs(roots[i]) {
			return true
		}
	}
	return false
}

// mergeClusters replaces each group of roots within clusterTol of each
// other by the group mean (made real when the group is closed under
// conjugation and its mean is real to rounding).
func mergeClusters(roots []complex128) {
	n := len(roots)
	group := make([]int, n)
	for i := range group {
		group[i] = -1
	}
	for i := 0; i < n; i++ {
		if group[i] >= 0 {
			continue
		}
		group[i] = i
		members := []int{i}
		for k := 0; k < len(members); k++ {
			ri := roots[members[k]]
			for j := 0; j < n; j++ {
				if group[j] < 0 && cmplx.Abs(roots[j]-ri) <= clusterTol*math.Max(cmplx.Abs(ri), cmplx.Abs(roots[j])) {
					group[j] = i
					members = append(members, j)
				}
			}
		}
		if len(members) < 2 {
			continue
		}
		var sum complex128
		for _, j := range members {
			sum += roots[j]
		}
		mean := sum / complex(float64(len(members)), 0)
		if math.Abs(imag(mean)) <= clusterTol*cmplx.Abs(mean) {
			mean = complex(real(mean), 0)
		}
		for _, j := range members {
			roots[j] = mean
		}
	}
}
