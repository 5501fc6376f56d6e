package stability

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// semisimpleAxis reports whether every repeated natural frequency s0 on the
// jω axis among axis (roots with real part exactly 0, as Classify leaves
// them) is semisimple for the pencil a + s·e: as many independent modes as
// its multiplicity k, nullity(a + s0·e) = k. Such a root gives bounded
// responses (constants or sinusoids, no t·e^(s0·t) terms), so the circuit is
// marginal, not unstable (common practice: a repeated eigenvalue grows only
// through a Jordan chain). A capacitive divider, C1 from the source to a
// and C2 from a to gnd with C3 below, has two floating nodes, s = 0 twice
// with G zero on both: two constant charges, nothing grows. An m-fold
// root from a Jordan chain (N identical integrators in cascade) has
// nullity 1 and stays unstable.
//
// The nullity is a rank test on the equilibrated pencil (equilibrate,
// singular values below aRankTol of the largest are zero), so it does not
// depend on the units of the values. For s0 = jω the complex matrix
// A + jωE is tested as the real [[A, −ωE], [ωE, A]], whose nullity is twice
// the complex one.
func semisimpleAxis(a, e *mat.Dense, axis []complex128) bool {
	groups := axisGroups(axis)
	as, es, w0 := equilibrate(a, e)
	n, _ := as.Dims()
	for _, g := range groups {
		if g.mult < 2 || imag(g.root) < 0 {
			continue // simple, or the conjugate of a group tested
		}
		w := imag(g.root) / w0
		var m *mat.Dense
		scale := 1
		if w == 0 {
			m = as
		} else {
			m = mat.NewDense(2*n, 2*n, nil)
			for i := 0; i < n; i++ {
				for j := 0; j < n; j++ {
					av, ev := as.At(i, j), w*es.At(i, j)
					m.Set(i, j, av)
					m.Set(i+n, j+n, av)
					m.Set(i, j+n, -ev)
					m.Set(i+n, j, ev)
				}
			}
			scale = 2
		}
		var sv mat.SVD
		if !sv.Factorize(m, mat.SVDNone) {
			return false
		}
		vals := sv.Values(nil)
		if len(vals) == 0 || vals[0] == 0 {
			return false
		}
		null := 0
		for _, v := range vals {
			if v <= aRankTol*vals[0] {
				null++
			}
		}
		if null < scale*g.mult {
			return false
		}
	}
	return true
}

// axisGroup is a distinct root on the jω axis and its multiplicity.
type axisGroup struct {
	root complex128
	mult int
}

// axisGroups groups the axis roots that Classify counts as one repeated
// frequency (within repeatTol of the larger magnitude; two exact zeros are
// one).
func axisGroups(axis []complex128) []axisGroup {
	rs := slices.Clone(axis)
	slices.SortFunc(rs, func(x, y complex128) int { return cmp.Compare(imag(x), imag(y)) })
	var out []axisGroup
	for _, r := range rs {
		if k := len(out) - 1; k >= 0 && cmplx.Abs(r-out[k].root) <= repeatTol*math.Max(cmplx.Abs(r), cmplx.Abs(out[k].root)) {
			out[k].mult++
			continue
		}
		out = append(out, axisGroup{root: r, mult: 1})
	}
	return out
}
