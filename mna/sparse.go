package mna

import (
	"sort"

	"gonum.org/v1/gonum/mat"
)

// Sparse is a real square matrix held in compressed sparse columns: the
// form of G and C from the stamps on, so that no n×n array is made for a
// circuit. It implements mat.Matrix (At, Dims, T) so that code written for
// small dense systems (transfer extraction, the equations listing) reads
// it unchanged; At costs a binary search in the column, so a loop over
// every (i, j) is only for small systems. Dense gives a *mat.Dense copy.
//
// Invariants: colPtr has n+1 entries, non-decreasing from 0 to len(rowIdx);
// within column j, rowIdx[colPtr[j]:colPtr[j+1]] is strictly increasing;
// no stored value is 0. A matrix of 0 unknowns is held as 1×1 zero (gonum
// has no 0×0 matrix), as before.
type Sparse struct {
	n      int
	colPtr []int
	rowIdx []int
	val    []float64
}

// triplet is one stamp contribution (i, j, v), summed with the others of
// the same place when a Sparse is made.
type triplet struct {
	i, j int
	v    float64
}

// newSparse sums the triplets (all 0 ≤ i, j < n) into an n×n Sparse in
// O(len(ts) + n), dropping places whose sum is exactly zero.
func newSparse(n int, ts []triplet) *Sparse {
	dim := max(n, 1)
	// Two stable bucket passes: by row, then by column, leave each
	// column's entries in row order.
	count := make([]int, dim+1)
	for _, t := range ts {
		count[t.i+1]++
	}
	for i := 0; i < dim; i++ {
		count[i+1] += count[i]
	}
	byRow := make([]triplet, len(ts))
	for _, t := range ts {
		byRow[count[t.i]] = t
		count[t.i]++
	}
	colPtr := make([]int, dim+1)
	for _, t := range byRow {
		colPtr[t.j+1]++
	}
	for j := 0; j < dim; j++ {
		colPtr[j+1] += colPtr[j]
	}
	next := append([]int(nil), colPtr[:dim]...)
	rows := make([]int, len(ts))
	vals := make([]float64, len(ts))
	for _, t := range byRow {
		rows[next[t.j]], vals[next[t.j]] = t.i, t.v
		next[t.j]++
	}
	// Sum duplicates and drop zeros, compacting in place.
	m := &Sparse{n: dim, colPtr: make([]int, dim+1)}
	w := 0
	for j := 0; j < dim; j++ {
		start := w
		for e := colPtr[j]; e < colPtr[j+1]; e++ {
			if w > start && rows[w-1] == rows[e] {
				vals[w-1] += vals[e]
				continue
			}
			rows[w], vals[w] = rows[e], vals[e]
			w++
		}
		k := start
		for e := start; e < w; e++ {
			if vals[e] != 0 {
				rows[k], vals[k] = rows[e], vals[e]
				k++
			}
		}
		w = k
		m.colPtr[j+1] = w
	}
	m.rowIdx, m.val = rows[:w:w], vals[:w:w]
	return m
}

// SparseOf returns the Sparse copy of a square matrix a (tests and small
// systems; it visits every entry). It panics if a is not square.
func SparseOf(a mat.Matrix) *Sparse {
	r, c := a.Dims()
	if r != c {
		panic("mna: SparseOf of a non-square matrix")
	}
	var ts []triplet
	for j := 0; j < c; j++ {
		for i := 0; i < r; i++ {
			if v := a.At(i, j); v != 0 {
				ts = append(ts, triplet{i, j, v})
			}
		}
	}
	return newSparse(r, ts)
}

// Dims returns the size n×n (1×1 for a system of no unknowns).
func (m *Sparse) Dims() (int, int) { return m.n, m.n }

// At returns the entry (i, j), 0 where none is stored.
func (m *Sparse) At(i, j int) float64 {
	if i < 0 || j < 0 || i >= m.n || j >= m.n {
		panic(mat.ErrIndexOutOfRange)
	}
	rows := m.rowIdx[m.colPtr[j]:m.colPtr[j+1]]
	k := sort.SearchInts(rows, i)
	if k < len(rows) && rows[k] == i {
		return m.val[m.colPtr[j]+k]
	}
	return 0
}

// T returns the transpose (a view).
func (m *Sparse) T() mat.Matrix { return mat.Transpose{Matrix: m} }

// NNZ returns the number of stored (non-zero) entries.
func (m *Sparse) NNZ() int { return len(m.val) }

// Dense returns the dense copy (n² memory: small systems only, such as
// the eigenvalue paths of transfer extraction).
func (m *Sparse) Dense() *mat.Dense {
	d := mat.NewDense(m.n, m.n, nil)
	m.Each(func(i, j int, v float64) { d.Set(i, j, v) })
	return d
}

// Each calls fn for every stored entry, column by column, rows ascending.
func (m *Sparse) Each(fn func(i, j int, v float64)) {
	for j := 0; j < m.n; j++ {
		for e := m.colPtr[j]; e < m.colPtr[j+1]; e++ {
			fn(m.rowIdx[e], j, m.val[e])
		}
	}
}

// triplets returns the stored entries as triplets (for a modified copy).
func (m *Sparse) triplets() []triplet {
	ts := make([]triplet, 0, len(m.val))
	m.Each(func(i, j int, v float64) { ts = append(ts, triplet{i, j, v}) })
	return ts
}

// transpose returns the compressed columns of mᵀ, that is m by rows.
func (m *Sparse) transpose() *Sparse {
	ts := make([]triplet, 0, len(m.val))
	m.Each(func(i, j int, v float64) { ts = append(ts, triplet{j, i, v}) })
	return newSparse(m.n, ts)
}

// mulVecAdd adds m·x to y (len n each, x and y distinct).
func (m *Sparse) mulVecAdd(x, y []float64) {
	for j := 0; j < m.n && j < len(x); j++ {
		if xj := x[j]; xj != 0 {
			for e := m.colPtr[j]; e < m.colPtr[j+1]; e++ {
				y[m.rowIdx[e]] += m.val[e] * xj
			}
		}
	}
}
