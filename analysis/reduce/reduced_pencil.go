package reduce

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/mat"

	"nodal/analysis/transfer"
)

// infiniteCut is the ratio to the largest shift-inverted eigenvalue μ
// below which |μ| is taken for 0: an eigenvalue λ = σ − 1/μ of the
// pencil at infinity (or more than 10¹² times farther from the shift
// than the nearest one, where it shapes nothing in a range around σ).
const infiniteCut = 1e-12

// pencilRoots returns the finite generalised eigenvalues λ of
// (A + λE)·x = 0, found by shift and invert at the real σ: the
// eigenvalues μ of (A + σE)⁻¹E give λ = σ − 1/μ, the μ ≈ 0 being the
// eigenvalues at infinity. Conjugate pairs are exact conjugates, the one
// with positive imaginary part first; roots are ordered by magnitude.
func pencilRoots(a, e *mat.Dense, sigma float64) ([]complex128, error) {
	k, _ := a.Dims()
	if k == 0 {
		return nil, nil
	}
	var m mat.Dense
	m.Scale(sigma, e)
	m.Add(&m, a)
	var lu mat.LU
	lu.Factorize(&m)
	if c := lu.Cond(); math.IsInf(c, 0) || c > 1e15 {
		return nil, errSingularShift
	}
	var t mat.Dense
	if err := lu.SolveTo(&t, false, e); err != nil {
		return nil, errSingularShift
	}
	var eig mat.Eigen
	if !eig.Factorize(&t, mat.EigenNone) {
		return nil, errors.New("reduce: the eigenvalues of the reduced pencil did not converge")
	}
	mu := eig.Values(nil)
	top := 0.0
	for _, u := range mu {
		top = math.Max(top, cmplx.Abs(u))
	}
	var roots []complex128
	for i := 0; i < len(mu); i++ {
		u := mu[i]
		if !(cmplx.Abs(u) > infiniteCut*top) {
			continue
		}
		l := complex(sigma, 0) - 1/u
		if imag(u) != 0 && i+1 < len(mu) && mu[i+1] == cmplx.Conj(u) {
			i++
			if imag(l) < 0 {
				l = cmplx.Conj(l)
			}
			roots = append(roots, l, cmplx.Conj(l))
			continue
		}
		roots = append(roots, complex(real(l), 0))
	}
	return sortRoots(roots), nil
}

// errSingularShift says that A + σE is singular to working precision.
var errSingularShift = errors.New("reduce: the reduced pencil is singular at the shift")

// sortRoots orders roots (real ones and conjugate pairs, positive
// imaginary part first) by magnitude, keeping each pair together.
func sortRoots(roots []complex128) []complex128 {
	type unit struct {
		r    complex128
		pair bool
	}
	var us []unit
	for i := 0; i < len(roots); i++ {
		if imag(roots[i]) > 0 && i+1 < len(roots) {
			us = append(us, unit{roots[i], true})
			i++
			continue
		}
		us = append(us, unit{roots[i], false})
	}
	sort.SliceStable(us, func(a, b int) bool {
		ma, mb := cmplx.Abs(us[a].r), cmplx.Abs(us[b].r)
		if ma != mb {
			return ma < mb
		}
		return !us[a].pair && us[b].pair
	})
	out := make([]complex128, 0, len(roots))
	for _, u := range us {
		out = append(out, u.r)
		if u.pair {
			out = append(out, cmplx.Conj(u.r))
		}
	}
	return out
}

// reducedModel is the reduced pencil of a basis as dense matrices.
type reducedModel struct {
	g, c   *mat.Dense
	b, l   []float64
	border *mat.Dense // [[Gr, Br], [Lrᵀ, 0]]
	cb     *mat.Dense // [[Cr, 0], [0, 0]]
}

func (bs *basis) reduced() *reducedModel {
	k := len(bs.v)
	r := &reducedModel{g: mat.NewDense(k, k, nil), c: mat.NewDense(k, k, nil), b: append([]float64(nil), bs.br...), l: append([]float64(nil), bs.lr...),
		border: mat.NewDense(k+1, k+1, nil), cb: mat.NewDense(k+1, k+1, nil)}
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			r.g.Set(i, j, bs.gr[i][j])
			r.c.Set(i, j, bs.cr[i][j])
			r.border.Set(i, j, bs.gr[i][j])
			r.cb.Set(i, j, bs.cr[i][j])
		}
		r.border.Set(i, k, bs.br[i])
		r.border.Set(k, i, bs.lr[i])
	}
	return r
}

// eval returns Hr(s) = Lrᵀ(Gr + sCr)⁻¹Br from the real 2k×2k form of the
// complex system.
func (r *reducedModel) eval(s complex128) (complex128, error) {
	k := len(r.b)
	a := mat.NewDense(2*k, 2*k, nil)
	for i := 0; i < k; i++ {
		for j := 0; j < k; j++ {
			g, c := r.g.At(i, j), r.c.At(i, j)
			re, im := g+real(s)*c, imag(s)*c
			a.Set(i, j, re)
			a.Set(i+k, j+k, re)
			a.Set(i, j+k, -im)
			a.Set(i+k, j, im)
		}
	}
	rhs := mat.NewVecDense(2*k, nil)
	for i, v := range r.b {
		rhs.SetVec(i, v)
	}
	var x mat.VecDense
	if err := x.SolveVec(a, rhs); err != nil {
		return 0, fmt.Errorf("reduce: the reduced system is singular at s = %v rad/s: %w", s, err)
	}
	var h complex128
	for i, l := range r.l {
		h += complex(l*x.AtVec(i), l*x.AtVec(i+k))
	}
	return h, nil
}

// transferFunction returns the reduced H(s) in factored form: its poles
// and zeros by shift and invert at sigma (rad/s, real), the constant
// from Hr at sGain, scaled by scaleRad (rad/s) so that no product
// overflows. The printed roots and gain are what is verified.
func (r *reducedModel) transferFunction(sigma, scaleRad float64, sGain complex128) (*transfer.TransferFunction, error) {
	var poles, zeros []complex128
	var err error
	for _, f := range []float64{1, 1.7182818, 0.5772157, 3.1415927} {
		if poles, err = pencilRoots(r.g, r.c, sigma*f); err != nil {
			continue
		}
		if zeros, err = pencilRoots(r.border, r.cb, sigma*f); err == nil {
			break
		}
	}
	if err != nil {
		return nil, err
	}
	h, err := r.eval(sGain)
	if err != nil {
		return nil, err
	}
	unit := (&transfer.TransferFunction{Zeros: zeros, Poles: poles, ScaledGain: 1, ScaleRad: scaleRad}).EvalFactored(sGain)
	if unit == 0 || cmplx.IsInf(unit) || cmplx.IsNaN(unit) {
		return nil, fmt.Errorf("reduce: the factored form cannot be scaled at s = %v rad/s", sGain)
	}
	k := real(h / unit)
	lg := math.Log(math.Abs(k)) + float64(len(poles)-len(zeros))*math.Log(scaleRad)
	gain := math.Copysign(math.Exp(lg), k)
	if k == 0 {
		gain = 0
	}
	tf := transfer.FromRoots(gain, zeros, poles)
	tf.ScaledGain, tf.ScaleRad = k, scaleRad
	return tf, nil
}
