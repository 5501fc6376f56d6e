package transfer

import (
	"math/cmplx"

	"gonum.org/v1/gonum/mat"
)

// PencilBlock is one diagonal block of the block triangular form of a
// pencil: the rows and the columns (unknowns) it holds, as indices of the
// whole pencil.
type PencilBlock struct {
	Rows, Cols []int
}

// BlockTriangular returns the diagonal blocks of the block triangular form
// of the pencil A + s·E by its structure (entries nonzero in A or E): a
// perfect matching of rows to columns, then the strongly connected
// components of the graph row i → row k when row i has an entry in the
// column matched to k (Duff's method, common practice). det(A + s·E) is
// the product of the blocks' determinants, exactly. It returns nil when
// the pattern has no perfect matching (det ≡ 0 structurally; the caller
// then treats the pencil whole and reports it).
func BlockTriangular(a, e *mat.Dense) []PencilBlock {
	n, _ := a.Dims()
	adj := make([][]int, n) // adj[i]: columns with an entry in row i
	for i := range n {
		for j := range n {
			if a.At(i, j) != 0 || e.At(i, j) != 0 {
				adj[i] = append(adj[i], j)
			}
		}
	}
	rowOf := make([]int, n) // rowOf[j]: the row matched to column j, −1 none
	for j := range rowOf {
		rowOf[j] = -1
	}
	var seen []bool
	var augment func(i int) bool
	augment = func(i int) bool {
		for _, j := range adj[i] {
			if seen[j] {
				continue
			}
			seen[j] = true
			if rowOf[j] < 0 || augment(rowOf[j]) {
				rowOf[j] = i
				return true
			}
		}
		return false
	}
	for i := range n {
		seen = make([]bool, n)
		if !augment(i) {
			return nil
		}
	}
	colOf := make([]int, n)
	for j, i := range rowOf {
		colOf[i] = j
	}
	// Tarjan's strongly connected components on rows.
	index := make([]int, n)
	low := make([]int, n)
	onStack := make([]bool, n)
	for i := range index {
		index[i] = -1
	}
	var stack []int
	var blocks []PencilBlock
	next := 0
	var visit func(i int)
	visit = func(i int) {
		index[i], low[i] = next, next
		next++
		stack = append(stack, i)
		onStack[i] = true
		for _, j := range adj[i] {
			k := rowOf[j]
			if index[k] < 0 {
				visit(k)
				low[i] = min(low[i], low[k])
			} else if onStack[k] {
				low[i] = min(low[i], index[k])
			}
		}
		if low[i] == index[i] {
			var b PencilBlock
			for {
				k := stack[len(stack)-1]
				stack = stack[:len(stack)-1]
				onStack[k] = false
				b.Rows = append(b.Rows, k)
				b.Cols = append(b.Cols, colOf[k])
				if k == i {
					break
				}
			}
			blocks = append(blocks, b)
		}
	}
	for i := range n {
		if index[i] < 0 {
			visit(i)
		}
	}
	return blocks
}

// SubMatrix returns the rows × cols part of m as a new dense matrix.
func SubMatrix(m *mat.Dense, rows, cols []int) *mat.Dense {
	s := mat.NewDense(len(rows), len(cols), nil)
	for a, i := range rows {
		for b, j := range cols {
			s.Set(a, b, m.At(i, j))
		}
	}
	return s
}

// pencilRoots returns the finite roots of det(a + s·e) (scaled units),
// from the diagonal blocks of its block triangular form, each found on
// its own (blockRoots): a chain of stages that do not load one another
// gives each stage's roots to rounding, instead of one defective N-fold
// root that the eigen-solver splits by about (gᴺε)^(1/N) for stages of
// gain g (0.7 of the root for fifteen stages of gain 10, where no merge
// can recover it). Roots of different blocks equal within
// blockMergeTol are made equal, so identical stages give one multiple
// root. The border of a zero pencil joins the blocks on the path from
// input to output into one; the blocks off it (modes the input does not
// reach or the output does not see) stay separate, and their roots,
// computed from the same sub-pencil as the poles', cancel exactly. polish
// asks for Newton steps on a block larger than polishMaxOrder (smaller
// ones are always polished); aTol is the rank tolerance of
// deflateInfiniteTol.
func pencilRoots(a, e *mat.Dense, polish bool, aTol float64) ([]complex128, error) {
	blocks := BlockTriangular(a, e)
	n, _ := a.Dims()
	if len(blocks) < 2 {
		return blockRoots(a, e, polish || n <= polishMaxOrder, aTol)
	}
	var all []complex128
	for _, b := range blocks {
		r, err := blockRoots(SubMatrix(a, b.Rows, b.Cols), SubMatrix(e, b.Rows, b.Cols), polish || len(b.Rows) <= polishMaxOrder, aTol)
		if err != nil {
			return nil, err
		}
		all = append(all, r...)
	}
	mergeAcrossBlocks(all)
	return all, nil
}

// blockRoots returns the finite roots of one pencil: the eigen-solver's
// values, the root at s = 0 made exact (deflateOrigin), the others then
// polished (which merges split multiple roots) or, unpolished, merged and
// checked against the pencil (mergeRoots); merging and polishing leave
// an exact 0 as it is.
func blockRoots(a, e *mat.Dense, polish bool, aTol float64) ([]complex128, error) {
	roots, err := finiteEigenvaluesTol(a, e, shiftFactors[:], aTol)
	if err != nil {
		return nil, err
	}
	roots = deflateOrigin(a, e, roots)
	if polish {
		polishRoots(a, e, roots)
	} else {
		mergeRoots(a, e, roots)
	}
	return roots, nil
}

// blockMergeTol: roots of different diagonal blocks closer than this,
// relative, are one multiple root (identical stages: their roots differ
// by rounding only).
const blockMergeTol = 1e-10

// mergeAcrossBlocks sets every root within blockMergeTol of an earlier
// one to that root (a complex one with its conjugate partner, so the
// exact conjugate symmetry is kept).
func mergeAcrossBlocks(r []complex128) {
	for i := range r {
		if imag(r[i]) < 0 {
			continue
		}
		for j := i + 1; j < len(r); j++ {
			if imag(r[j]) < 0 || r[j] == r[i] || (imag(r[j]) > 0) != (imag(r[i]) > 0) || !near(r[i], r[j], blockMergeTol) {
				continue
			}
			if imag(r[j]) > 0 {
				k := conjIndex(r, make([]bool, len(r)), j)
				if k < 0 {
					continue
				}
				r[k] = cmplx.Conj(r[i])
			}
			r[j] = r[i]
		}
	}
}
