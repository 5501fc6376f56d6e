package mna

import (
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestSparseSub: Sub takes the rows × cols part, in the order given, as
// the dense matrix would (definition of a submatrix), and drops nothing
// else.
func TestSparseSub(t *testing.T) {
	a := mat.NewDense(4, 4, []float64{
		1, 0, 2, 0,
		0, 3, 0, 4,
		5, 0, 6, 0,
		0, 7, 0, 8,
	})
	s := SparseOf(a)
	tests := []struct {
		rows, cols []int
	}{
		{[]int{0, 2}, []int{0, 2}},
		{[]int{3, 1}, []int{1, 3}},
		{[]int{0, 1, 2}, []int{2, 1, 0}},
		{[]int{2}, []int{3}},
	}
	for _, tt := range tests {
		sub := s.Sub(tt.rows, tt.cols)
		if n, _ := sub.Dims(); n != len(tt.rows) {
			t.Fatalf("rows %v cols %v: size %d", tt.rows, tt.cols, n)
		}
		count := 0
		for i, r := range tt.rows {
			for j, c := range tt.cols {
				if got, want := sub.At(i, j), a.At(r, c); got != want {
					t.Fatalf("rows %v cols %v: (%d, %d) = %g, want %g", tt.rows, tt.cols, i, j, got, want)
				}
				if a.At(r, c) != 0 {
					count++
				}
			}
		}
		if sub.NNZ() != count {
			t.Fatalf("rows %v cols %v: %d entries, want %d", tt.rows, tt.cols, sub.NNZ(), count)
		}
	}
}
