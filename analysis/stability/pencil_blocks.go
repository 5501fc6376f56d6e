package stability

import "gonum.org/v1/gonum/mat"

// pencilBlock is one diagonal block of the block triangular form of a
// pencil: the rows and the columns (unknowns) it holds.
type pencilBlock struct {
	rows, cols []int
}

// blockTriangular returns the diagonal blocks of the block triangular form
// of the pencil A + s·E by its structure (entries nonzero in A or E): a
// perfect matching of rows to columns, then the strongly connected
// components of the graph row i → row k when row i has an entry in the
// column matched to k (Duff's method, common practice). det(A + s·E) is
// the product of the blocks' determinants, exactly. It returns nil when
// the pattern has no perfect matching (det ≡ 0 structurally; the caller
// then treats the pencil whole and reports it).
func blockTriangular(a, e *mat.Dense) []pencilBlock {
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
	var blocks []pencilBlock
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
			var b pencilBlock
			for {
				k := stack[len(stack)-1]
				stack = stack[:len(stack)-1]
				onStack[k] = false
				b.rows = append(b.rows, k)
				b.cols = append(b.cols, colOf[k])
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

// subMatrix returns the rows × cols part of m as a new dense matrix.
func subMatrix(m *mat.Dense, rows, cols []int) *mat.Dense {
	s := mat.NewDense(len(rows), len(cols), nil)
	for a, i := range rows {
		for b, j := range cols {
			s.Set(a, b, m.At(i, j))
		}
	}
	return s
}
