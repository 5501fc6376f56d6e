package transfer

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// LogBalance returns the integer exponents of the least-squares balancing
// of Ward ("Balancing the generalized eigenvalue problem", SIAM J. Sci.
// Stat. Comput. 2, 1981) of the square pencil a + s·e: row exponents r,
// column exponents c and, with withFreq, a frequency exponent w that
// minimise
//
//	Σ_{a_ij ≠ 0} (log₂|a_ij| + r_i + c_j)² + Σ_{e_ij ≠ 0} (log₂|e_ij| + r_i + c_j + w)²
//
// (w = 0 without withFreq, or when a or e is zero), rounded to integers,
// so that 2^r_i·a_ij·2^c_j and 2^(r_i+c_j+w)·e_ij are as near 1 as a
// diagonal scaling allows. The minimiser is unique up to r + t, c − t,
// which leaves the scaled pencil unchanged: scaling the rows and columns
// of the input (impedance scaling of a circuit: every R and L by 10^k,
// every C by 10^−k) shifts r and c and leaves the scaled pencil the same
// up to the rounding of the exponents, so rank decisions made on it do
// not depend on the units of the values. 2^w is the pencil's own
// frequency scale (1/RC for one RC section).
func LogBalance(a, e *mat.Dense, withFreq bool) (r, c []int, w int) {
	n, _ := a.Dims()
	type entry struct {
		i, j int
		l    float64 // log₂ |value|
		dyn  bool    // an entry of e
	}
	var ents []entry
	var na, ne int
	for _, m := range []struct {
		x   *mat.Dense
		dyn bool
	}{{a, false}, {e, true}} {
		raw := m.x.RawMatrix()
		for i := 0; i < n; i++ {
			for j, v := range raw.Data[i*raw.Stride : i*raw.Stride+n] {
				if v != 0 && !math.IsInf(v, 0) && !math.IsNaN(v) {
					ents = append(ents, entry{i, j, math.Log2(math.Abs(v)), m.dyn})
					if m.dyn {
						ne++
					} else {
						na++
					}
				}
			}
		}
	}
	withW := withFreq && na > 0 && ne > 0
	// Unknowns x = (r_0 … r_{n−1}, c_0 … c_{n−1}, w); the normal equations
	// JᵀJ·x = −Jᵀℓ (J has a row per entry with ones at r_i, c_j and, for
	// an entry of e, w) are solved by conjugate gradients, matrix-free.
	dim := 2*n + 1
	apply := func(x, out []float64) {
		clear(out)
		for _, t := range ents {
			y := x[t.i] + x[n+t.j]
			if t.dyn && withW {
				y += x[2*n]
			}
			out[t.i] += y
			out[n+t.j] += y
			if t.dyn && withW {
				out[2*n] += y
			}
		}
	}
	b := make([]float64, dim)
	for _, t := range ents {
		b[t.i] -= t.l
		b[n+t.j] -= t.l
		if t.dyn && withW {
			b[2*n] -= t.l
		}
	}
	x := conjugateGradient(apply, b, 1e-10, 10*dim)
	r, c = make([]int, n), make([]int, n)
	for i := 0; i < n; i++ {
		r[i], c[i] = int(math.Round(x[i])), int(math.Round(x[n+i]))
	}
	if withW {
		w = int(math.Round(x[2*n]))
	}
	return r, c, w
}

// conjugateGradient solves the symmetric positive semidefinite system
// apply(x) = b from x = 0 (for a consistent b, the solution of least
// norm) until the residual is below tol·‖b‖ or after maxIter steps
// (Hestenes and Stiefel, J. Res. Nat. Bur. Standards 49, 1952).
func conjugateGradient(apply func(x, out []float64), b []float64, tol float64, maxIter int) []float64 {
	x := make([]float64, len(b))
	r := slices.Clone(b)
	p := slices.Clone(b)
	ap := make([]float64, len(b))
	rr := floats.Dot(r, r)
	stop := tol * tol * rr
	for it := 0; it < maxIter && rr > stop; it++ {
		apply(p, ap)
		pap := floats.Dot(p, ap)
		if pap <= 0 {
			break
		}
		alpha := rr / pap
		floats.AddScaled(x, alpha, p)
		floats.AddScaled(r, -alpha, ap)
		next := floats.Dot(r, r)
		floats.AddScaledTo(p, r, next/rr, p)
		rr = next
	}
	return x
}
