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
	return BlockTriangularPattern(adj)
}

// BlockTriangularPattern is BlockTriangular on a pattern given by rows:
// adj[i] lists the columns with an entry in row i of an n×n pencil,
// n = len(adj). Its cost is O(n + entries) for the strongly connected
// components and, for the matching, a cheap pass (each row takes a free
// column of its own) then augmenting paths from the rows left over
// (depth-first, one visit mark per search; O(n·entries) at worst, about
// linear for circuit matrices, whose rows nearly all match at once). The
// searches keep their own stacks, so a chain of 10⁵ unknowns needs no deep
// recursion.
func BlockTriangularPattern(adj [][]int) []PencilBlock {
	n := len(adj)
	rowOf := make([]int, n) // rowOf[j]: the row matched to column j, −1 none
	colOf := make([]int, n)
	for j := range rowOf {
		rowOf[j], colOf[j] = -1, -1
	}
	for i := range n { // cheap pass: the diagonal first, else any free column
		if hasEntry(adj[i], i) && rowOf[i] < 0 {
			rowOf[i], colOf[i] = i, i
		}
	}
	for i := range n {
		if colOf[i] >= 0 {
			continue
		}
		for _, j := range adj[i] {
			if rowOf[j] < 0 {
				rowOf[j], colOf[i] = i, j
				break
			}
		}
	}
	mark := make([]int, n) // mark[j] == search: column j visited in this search
	next := make([]int, n) // next[i]: the position reached in adj[i]
	for j := range mark {
		mark[j] = -1
	}
	var path []int // rows on the current augmenting path
	for i0 := range n {
		if colOf[i0] >= 0 {
			continue
		}
		path = append(path[:0], i0)
		next[i0] = 0
		found := false
		for len(path) > 0 && !found {
			i := path[len(path)-1]
			if next[i] == len(adj[i]) {
				path = path[:len(path)-1]
				continue
			}
			j := adj[i][next[i]]
			next[i]++
			if mark[j] == i0 {
				continue
			}
			mark[j] = i0
			if rowOf[j] < 0 {
				// Augment along the path: each row takes the column it
				// reached, the last one the free column j.
				for k := len(path) - 1; k >= 0; k-- {
					r := path[k]
					prev := colOf[r]
					rowOf[j], colOf[r] = r, j
					j = prev
				}
				found = true
				continue
			}
			r := rowOf[j]
			next[r] = 0
			path = append(path, r)
		}
		if !found {
			return nil
		}
	}
	return strongComponents(adj, rowOf, colOf)
}

// hasEntry reports whether row lists column j.
func hasEntry(row []int, j int) bool {
	for _, c := range row {
		if c == j {
			return true
		}
	}
	return false
}

// strongComponents returns the strongly connected components of the graph
// row i → row rowOf[j] for each column j of adj[i] (Tarjan's algorithm,
// with an explicit stack), each as a block of rows and their matched
// columns, in the order Tarjan's algorithm completes them.
func strongComponents(adj [][]int, rowOf, colOf []int) []PencilBlock {
	n := len(adj)
	index := make([]int, n)
	low := make([]int, n)
	onStack := make([]bool, n)
	pos := make([]int, n) // pos[i]: the position reached in adj[i]
	for i := range index {
		index[i] = -1
	}
	var stack, call []int
	var blocks []PencilBlock
	count := 0
	for root := range n {
		if index[root] >= 0 {
			continue
		}
		call = append(call[:0], root)
		index[root], low[root] = count, count
		count++
		stack = append(stack, root)
		onStack[root] = true
		for len(call) > 0 {
			i := call[len(call)-1]
			if pos[i] < len(adj[i]) {
				k := rowOf[adj[i][pos[i]]]
				pos[i]++
				switch {
				case index[k] < 0:
					index[k], low[k] = count, count
					count++
					stack = append(stack, k)
					onStack[k] = true
					call = append(call, k)
				case onStack[k]:
					low[i] = min(low[i], index[k])
				}
				continue
			}
			call = call[:len(call)-1]
			if len(call) > 0 {
				p := call[len(call)-1]
				low[p] = min(low[p], low[i])
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
func pencilRoots(a, e *mat.Dense, polish bool, aTol float64, regularAt0 bool) ([]complex128, error) {
	blocks := BlockTriangular(a, e)
	n, _ := a.Dims()
	if len(blocks) < 2 {
		return blockRoots(a, e, polish || n <= polishMaxOrder, aTol, regularAt0)
	}
	var all []complex128
	for _, b := range blocks {
		r, err := blockRoots(SubMatrix(a, b.Rows, b.Cols), SubMatrix(e, b.Rows, b.Cols), polish || len(b.Rows) <= polishMaxOrder, aTol, regularAt0)
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
// an exact 0 as it is. regularAt0 says that a (the whole pencil's a, of
// which this is a diagonal block) is regular by mna's scale-invariant
// pivot rule: then no root is at s = 0, the rank test is not asked, and
// the roots far below the scaled unit are taken from shift-and-invert at
// σ = 0 instead (slowRoots), where they are computed to full relative
// accuracy.
func blockRoots(a, e *mat.Dense, polish bool, aTol float64, regularAt0 bool) ([]complex128, error) {
	roots, err := finiteEigenvaluesTol(a, e, shiftFactors[:], aTol)
	if err != nil {
		return nil, err
	}
	if regularAt0 {
		roots = slowRoots(a, e, roots, aTol)
	} else {
		roots = deflateOrigin(a, e, roots)
	}
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
