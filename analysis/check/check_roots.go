package check

import (
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// polyRoots returns the roots of the ascending polynomial c (index k is
// the coefficient of s^k) as the eigenvalues of its companion matrix
// (Golub & Van Loan, Matrix Computations, §7.4.6). Trailing zero
// coefficients are ignored; leading zeros give exact roots at 0. The
// variable is scaled by the geometric mean root magnitude first, so
// coefficients spread over many decades stay well conditioned. Roots are
// ordered by magnitude, then imaginary part (conjugate pairs adjacent,
// positive imaginary part first); nearly real roots (|Im| ≤ 1e-12·|root|)
// are made real.
func polyRoots(c []float64) []complex128 {
	n := len(c) - 1
	for n > 0 && c[n] == 0 {
		n--
	}
	lo := 0
	for lo < n && c[lo] == 0 {
		lo++
	}
	roots := make([]complex128, lo, n)
	m := n - lo
	if m == 0 {
		return roots
	}
	p := c[lo : n+1]
	w := math.Pow(math.Abs(p[0]/p[m]), 1/float64(m)) // s = w·x
	if w == 0 || math.IsInf(w, 0) || math.IsNaN(w) {
		w = 1
	}
	// Monic polynomial in x: x^m + q[m-1] x^(m-1) + ... + q[0].
	q := make([]float64, m)
	for k := 0; k < m; k++ {
		q[k] = p[k] / p[m] * math.Pow(w, float64(k-m))
	}
	a := mat.NewDense(m, m, nil)
	for j := 0; j < m; j++ {
		a.Set(0, j, -q[m-1-j])
	}
	for i := 1; i < m; i++ {
		a.Set(i, i-1, 1)
	}
	var eig mat.Eigen
	if !eig.Factorize(a, mat.EigenNone) {
		return append(roots, cmplx.NaN())
	}
	for _, x := range eig.Values(nil) {
		r := x * complex(w, 0)
		if math.Abs(imag(r)) <= 1e-12*cmplx.Abs(r) {
			r = complex(real(r), 0)
		}
		roots = append(roots, r)
	}
	sort.SliceStable(roots, func(i, j int) bool {
		ai, aj := cmplx.Abs(roots[i]), cmplx.Abs(roots[j])
		if math.Abs(ai-aj) > 1e-9*math.Max(ai, aj) {
			return ai < aj
		}
		if real(roots[i]) != real(roots[j]) && math.Abs(real(roots[i])-real(roots[j])) > 1e-9*math.Max(ai, aj) {
			return real(roots[i]) < real(roots[j])
		}
		return imag(roots[i]) > imag(roots[j])
	})
	return roots
}

// polyFromRoots returns lead·Π(s − roots[i]) as ascending real
// coefficients (imaginary parts, which cancel for conjugate pairs, are
// dropped).
func polyFromRoots(roots []complex128, lead float64) []float64 {
	p := []complex128{1}
	for _, r := range roots {
		next := make([]complex128, len(p)+1)
		for k, c := range p {
			next[k+1] += c
			next[k] -= c * r
		}
		p = next
	}
	out := make([]float64, len(p))
	for k, c := range p {
		out[k] = lead * real(c)
	}
	return out
}
