package analysis

import (
	"math"
	"math/cmplx"
	"sort"
	"testing"

	"gonum.org/v1/gonum/mat"

	"nodal/mna"
)

// directH evaluates H(s) = L·(G+sC)⁻¹·B independently of Extract, by
// solving the equivalent real system [[G+aC, −bC], [bC, G+aC]]·[xr; xi] =
// [B; 0] for s = a + jb with gonum.
func directH(t *testing.T, sys *mna.System, s complex128) complex128 {
	t.Helper()
	n := len(sys.B)
	a, b := real(s), imag(s)
	m := mat.NewDense(2*n, 2*n, nil)
	rhs := mat.NewVecDense(2*n, nil)
	for i := 0; i < n; i++ {
		for j := 0; j < n; j++ {
			re := sys.G.At(i, j) + a*sys.C.At(i, j)
			im := b * sys.C.At(i, j)
			m.Set(i, j, re)
			m.Set(i+n, j+n, re)
			m.Set(i, j+n, -im)
			m.Set(i+n, j, im)
		}
		rhs.SetVec(i, sys.B[i])
	}
	var x mat.VecDense
	if err := x.SolveVec(m, rhs); err != nil {
		t.Fatalf("direct solve at s=%v: %v", s, err)
	}
	var h complex128
	for i := 0; i < n; i++ {
		h += complex(sys.L[i]*x.AtVec(i), sys.L[i]*x.AtVec(i+n))
	}
	return h
}

// relErr is |a−b|/|b| (|a−b| when b = 0).
func relErr(a, b complex128) float64 {
	if b == 0 {
		return cmplx.Abs(a)
	}
	return cmplx.Abs(a-b) / cmplx.Abs(b)
}

// mustExtract runs Extract and fails the test on error.
func mustExtract(t *testing.T, sys *mna.System) *TransferFunction {
	t.Helper()
	tf, err := Extract(sys)
	if err != nil {
		t.Fatalf("Extract: %v", err)
	}
	return tf
}

// checkInvariants verifies the documented TransferFunction invariants and
// agreement of the factored and polynomial forms with a direct solve.
func checkInvariants(t *testing.T, sys *mna.System, tf *TransferFunction, tol float64, omegas ...float64) {
	t.Helper()
	if len(tf.Den)-1 != len(tf.Poles) || len(tf.Num)-1 != len(tf.Zeros) {
		t.Fatalf("degrees: num %d zeros %d den %d poles %d", len(tf.Num), len(tf.Zeros), len(tf.Den), len(tf.Poles))
	}
	for _, d := range tf.Den {
		if d != 0 {
			if d != 1 {
				t.Errorf("lowest non-zero Den coefficient %g, want 1", d)
			}
			break
		}
	}
	for _, roots := range [][]complex128{tf.Poles, tf.Zeros, tf.Cancelled} {
		for i := 0; i < len(roots); i++ {
			if imag(roots[i]) > 0 {
				if i+1 >= len(roots) || roots[i+1] != cmplx.Conj(roots[i]) {
					t.Errorf("root %v not followed by its conjugate in %v", roots[i], roots)
				}
				i++
			} else if imag(roots[i]) < 0 {
				t.Errorf("lower root %v without preceding partner in %v", roots[i], roots)
			}
		}
	}
	for _, w := range omegas {
		s := complex(0, w)
		want := directH(t, sys, s)
		if e := relErr(tf.EvalFactored(s), want); e > tol {
			t.Errorf("factored H(j%g) = %v, direct %v (rel err %.2g)", w, tf.EvalFactored(s), want, e)
		}
		if e := relErr(tf.Eval(s), want); e > tol {
			t.Errorf("polynomial H(j%g) = %v, direct %v (rel err %.2g)", w, tf.Eval(s), want, e)
		}
	}
}

func TestFirstOrderCorner(t *testing.T) {
	// Source: common practice — RC low-pass H = 1/(1+sRC), corner 1/(2πRC).
	const r, c = 1.5e3, 47e-9
	sys := newStamper().V("in", "0").R("in", "out", r).C("out", "0", c).Out("out", "0").System()
	tf := mustExtract(t, sys)
	checkInvariants(t, sys, tf, 1e-12, 10, 1e4, 1e7)
	if len(tf.Poles) != 1 || len(tf.Zeros) != 0 {
		t.Fatalf("poles %v zeros %v", tf.Poles, tf.Zeros)
	}
	if e := relErr(tf.Poles[0], complex(-1/(r*c), 0)); e > 1e-13 {
		t.Errorf("pole %v, want %g (rel %g)", tf.Poles[0], -1/(r*c), e)
	}
	if math.Abs(tf.Num[0]-1) > 1e-13 || math.Abs(tf.Den[1]-r*c) > 1e-13*r*c {
		t.Errorf("num %v den %v, want [1] [1 %g]", tf.Num, tf.Den, r*c)
	}
}

// sortedByImag returns a copy of roots sorted by imaginary part.
func sortedByImag(r []complex128) []complex128 {
	out := append([]complex128(nil), r...)
	sort.Slice(out, func(a, b int) bool { return imag(out[a]) < imag(out[b]) })
	return out
}
