package reduce

import (
	"math"
	"strings"

	"nodal/mna"
)

// sparseCols is a real n×n matrix in compressed columns, copied from an
// mna.Sparse once so that the products in the inner loop of the basis
// need no callback.
type sparseCols struct {
	n      int
	colPtr []int
	rowIdx []int
	val    []float64
}

// newSparseCols copies m (entries visited column by column by Each).
func newSparseCols(m *mna.Sparse, n int) sparseCols {
	s := sparseCols{n: n, colPtr: make([]int, n+1)}
	type entry struct {
		i, j int
		v    float64
	}
	var es []entry
	m.Each(func(i, j int, v float64) { es = append(es, entry{i, j, v}) })
	for _, e := range es {
		s.colPtr[e.j+1]++
	}
	for j := 0; j < n; j++ {
		s.colPtr[j+1] += s.colPtr[j]
	}
	s.rowIdx = make([]int, len(es))
	s.val = make([]float64, len(es))
	next := append([]int(nil), s.colPtr[:n]...)
	for _, e := range es {
		k := next[e.j]
		s.rowIdx[k], s.val[k] = e.i, e.v
		next[e.j]++
	}
	return s
}

// mul writes y = m·x (len n each, distinct).
func (m sparseCols) mul(x, y []float64) {
	clear(y)
	for j := 0; j < m.n; j++ {
		if xj := x[j]; xj != 0 {
			for e := m.colPtr[j]; e < m.colPtr[j+1]; e++ {
				y[m.rowIdx[e]] += m.val[e] * xj
			}
		}
	}
}

// mulComplex writes y = m·x for a complex x.
func (m sparseCols) mulComplex(x, y []complex128) {
	clear(y)
	for j := 0; j < m.n; j++ {
		if xj := x[j]; xj != 0 {
			for e := m.colPtr[j]; e < m.colPtr[j+1]; e++ {
				y[m.rowIdx[e]] += complex(m.val[e], 0) * xj
			}
		}
	}
}

// basis is the orthonormal projection basis V (n×k, real, columns v)
// with the projected pencil kept up to date as columns are added:
// gr[i][j] = vᵢᵀ·D·G·vⱼ, cr likewise, br[i] = vᵢᵀ·D·B, lr[i] = vᵢᵀL.
//
// Invariants: the columns are orthonormal to rounding (Gram-Schmidt
// twice); len(gr) == len(cr) == len(br) == len(lr) == len(v), each row of
// gr and cr of length len(v).
type basis struct {
	n    int
	g, c sparseCols
	b, l []float64
	// d is the row sign D (±1) of the projection: the pencil projected is
	// D·(G + sC) with D·B, the branch rows (i(PART) unknowns) negated, so
	// that an RC or RLC network's D·G + (D·G)ᵀ and D·C are positive
	// semi-definite and the congruence keeps its reduced model passive
	// (PRIMA's form). The Krylov space, (G + sC)⁻¹ applied to B and C·v,
	// is the same either way.
	d      []float64
	v      [][]float64
	gv, cv [][]float64 // D·G·vⱼ and D·C·vⱼ
	gr, cr [][]float64
	br, lr []float64
}

func newBasis(sys *mna.System) *basis {
	n := sys.Size()
	d := make([]float64, n)
	db := make([]float64, n)
	for i, u := range sys.Unknowns {
		d[i] = 1
		if strings.HasPrefix(u, "i(") {
			d[i] = -1
		}
		db[i] = d[i] * sys.B[i]
	}
	return &basis{n: n, g: newSparseCols(sys.G, n), c: newSparseCols(sys.C, n), b: db, l: sys.L, d: d}
}

// deflateTol is the fraction of a candidate vector's norm below which
// what is left after orthogonalisation is rounding: the direction is
// already in the basis (the Krylov space is exhausted there).
const deflateTol = 1e-10

// orthogonalise removes from w its components along the basis, twice
// (classical Gram-Schmidt with reorthogonalisation), and returns the
// norm of what is left and of w before.
func (bs *basis) orthogonalise(w []float64) (left, before float64) {
	before = norm(w)
	for pass := 0; pass < 2; pass++ {
		for _, v := range bs.v {
			d := dot(v, w)
			for i := range w {
				w[i] -= d * v[i]
			}
		}
	}
	return norm(w), before
}

// add orthogonalises w (overwritten) against the basis and appends it,
// normalised; it reports false (and adds nothing) when w lies in the
// basis to rounding of ref (the norm of the vector w came from, or 0 for
// w itself) or is not finite.
func (bs *basis) add(w []float64, ref float64) bool {
	left, before := bs.orthogonalise(w)
	ref = math.Max(ref, before)
	if !(ref > 0) || math.IsInf(ref, 0) || !(left > deflateTol*ref) {
		return false
	}
	for i := range w {
		w[i] /= left
	}
	k := len(bs.v)
	gv, cv := make([]float64, bs.n), make([]float64, bs.n)
	bs.g.mul(w, gv)
	bs.c.mul(w, cv)
	for i, di := range bs.d {
		gv[i] *= di
		cv[i] *= di
	}
	bs.v, bs.gv, bs.cv = append(bs.v, w), append(bs.gv, gv), append(bs.cv, cv)
	for i := 0; i < k; i++ {
		bs.gr[i] = append(bs.gr[i], dot(bs.v[i], gv))
		bs.cr[i] = append(bs.cr[i], dot(bs.v[i], cv))
	}
	rg, rc := make([]float64, k+1), make([]float64, k+1)
	for j := 0; j <= k; j++ {
		rg[j] = dot(w, bs.gv[j])
		rc[j] = dot(w, bs.cv[j])
	}
	bs.gr, bs.cr = append(bs.gr, rg), append(bs.cr, rc)
	bs.br, bs.lr = append(bs.br, dot(w, bs.b)), append(bs.lr, dot(w, bs.l))
	return true
}

// addComplex adds the real and imaginary parts of w (each orthogonalised
// in turn) and returns how many columns were added. w is left as its part
// orthogonal to the basis before the call, the vector a Krylov sequence
// continues from.
func (bs *basis) addComplex(w []complex128) int {
	re, im := make([]float64, bs.n), make([]float64, bs.n)
	for i, z := range w {
		re[i], im[i] = real(z), imag(z)
	}
	ref := math.Hypot(norm(re), norm(im))
	bs.orthogonalise(re)
	bs.orthogonalise(im)
	for i := range w {
		w[i] = complex(re[i], im[i])
	}
	added := 0
	for _, part := range [][]float64{re, im} {
		if bs.add(append([]float64(nil), part...), ref) {
			added++
		}
	}
	return added
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i, x := range a {
		s += x * b[i]
	}
	return s
}

func norm(a []float64) float64 {
	// Scaled to keep squares of tiny or huge entries in range.
	m := 0.0
	for _, x := range a {
		m = math.Max(m, math.Abs(x))
	}
	if m == 0 || math.IsInf(m, 0) || math.IsNaN(m) {
		return m
	}
	s := 0.0
	for _, x := range a {
		s += (x / m) * (x / m)
	}
	return m * math.Sqrt(s)
}
