package mna

import (
	"fmt"
	"math"
)

// luFactor is an LU factorisation with partial (row) pivoting of the
// complex matrix Y = G + sC, held in preallocated memory so that one value
// can factor and solve at many frequencies without allocating.
//
// Invariants: len(a) == n*n (row-major); after a successful factor, a holds
// the unit lower triangle L (below the diagonal) and U (on and above), and
// rows were exchanged k ↔ piv[k] in order k = 0…n−1, as in LAPACK's getrf.
// Columns are never exchanged, so column k is always unknown k: a vanished
// pivot names its unknown.
type luFactor struct {
	n      int
	a      []complex128
	piv    []int
	nz     []int     // scratch: the non-zero columns right of the pivot
	colmax []float64 // per column: the largest |Y_ij| before elimination
}

func newLUFactor(n int) *luFactor {
	return &luFactor{
		n:      n,
		a:      make([]complex128, n*n),
		piv:    make([]int, n),
		nz:     make([]int, n),
		colmax: make([]float64, n),
	}
}

// pivotTol is the relative size below which a pivot counts as vanished: a
// pivot smaller than pivotTol·n times the largest entry of its original
// column is at the level of rounding error.
const pivotTol = 4 * 2.220446049250313e-16

// mag1 is |re|+|im|, a cheap norm within √2 of |z|.
func mag1(z complex128) float64 { return math.Abs(real(z)) + math.Abs(imag(z)) }

// assemble sets a = G + sC from the system's matrices.
func (f *luFactor) assemble(sys *System, s complex128) {
	n := f.n
	g, c := sys.G.RawMatrix(), sys.C.RawMatrix()
	sr, si := real(s), imag(s)
	for j := range f.colmax {
		f.colmax[j] = 0
	}
	for i := 0; i < n; i++ {
		gr := g.Data[i*g.Stride : i*g.Stride+n]
		cr := c.Data[i*c.Stride : i*c.Stride+n]
		ar := f.a[i*n : i*n+n]
		for j := range ar {
			z := complex(gr[j]+sr*cr[j], si*cr[j])
			ar[j] = z
			if m := mag1(z); m > f.colmax[j] {
				f.colmax[j] = m
			}
		}
	}
}

// factor runs Gaussian elimination with partial pivoting in place. It
// skips zero multipliers and zero entries of the pivot row, so a sparse
// MNA matrix costs far less than n³. On a vanished pivot it returns the
// index of its column (unknown), else -1.
func (f *luFactor) factor() int {
	n, a := f.n, f.a
	tol := pivotTol * float64(n)
	for k := 0; k < n; k++ {
		p, best := k, mag1(a[k*n+k])
		for i := k + 1; i < n; i++ {
			if m := mag1(a[i*n+k]); m > best {
				p, best = i, m
			}
		}
		if best == 0 || best <= tol*f.colmax[k] {
			return k
		}
		f.piv[k] = p
		if p != k {
			rk, rp := a[k*n:k*n+n], a[p*n:p*n+n]
			for j := range rk {
				rk[j], rp[j] = rp[j], rk[j]
			}
		}
		rowk := a[k*n : k*n+n]
		nz := f.nz[:0]
		for j := k + 1; j < n; j++ {
			if rowk[j] != 0 {
				nz = append(nz, j)
			}
		}
		inv := 1 / rowk[k]
		for i := k + 1; i < n; i++ {
			ri := a[i*n : i*n+n]
			l := ri[k]
			if l == 0 {
				continue
			}
			l *= inv
			ri[k] = l
			for _, j := range nz {
				ri[j] -= l * rowk[j]
			}
		}
	}
	return -1
}

// solve overwrites x with Y⁻¹x using the factorisation.
func (f *luFactor) solve(x []complex128) {
	n, a := f.n, f.a
	for k := 0; k < n; k++ {
		if p := f.piv[k]; p != k {
			x[k], x[p] = x[p], x[k]
		}
	}
	for k := 0; k < n; k++ {
		xk := x[k]
		if xk == 0 {
			continue
		}
		for i := k + 1; i < n; i++ {
			if l := a[i*n+k]; l != 0 {
				x[i] -= l * xk
			}
		}
	}
	for k := n - 1; k >= 0; k-- {
		x[k] /= a[k*n+k]
		xk := x[k]
		if xk == 0 {
			continue
		}
		for i := 0; i < k; i++ {
			if u := a[i*n+k]; u != 0 {
				x[i] -= u * xk
			}
		}
	}
}

// factorAt assembles and factors Y(s), returning a *SingularError naming the
// unknown whose pivot vanished.
func (f *luFactor) factorAt(sys *System, s complex128) error {
	f.assemble(sys, s)
	if k := f.factor(); k >= 0 {
		return &SingularError{S: s, Unknown: sys.Unknowns[k], Index: k}
	}
	return nil
}

// Solve solves (G + sC)·x = B at the complex frequency s (rad/s) into x,
// which must have length Size(). It allocates its working memory; for many
// frequencies use a Sweeper. A numerically singular Y(s) gives a
// *SingularError.
func (s *System) Solve(sv complex128, x []complex128) error {
	n := s.Size()
	if len(x) != n {
		return fmt.Errorf("solve: x has length %d, the system has %d unknowns", len(x), n)
	}
	f := newLUFactor(n)
	if err := f.factorAt(s, sv); err != nil {
		return err
	}
	for i, b := range s.B {
		x[i] = complex(b, 0)
	}
	f.solve(x)
	return nil
}

// SolveAll returns the whole solution x of (G + sC)·x = B at s (rad/s): the
// phasor of every node voltage and branch current, named by Unknowns, per
// unit of the input (multiply by SourceAmplitude for the file's drive).
func (s *System) SolveAll(sv complex128) ([]complex128, error) {
	x := make([]complex128, s.Size())
	if err := s.Solve(sv, x); err != nil {
		return nil, err
	}
	return x, nil
}

// H returns the transfer function y/u = L·(G + sC)⁻¹·B at one complex
// frequency s (rad/s).
func (s *System) H(sv complex128) (complex128, error) {
	x, err := s.SolveAll(sv)
	if err != nil {
		return 0, err
	}
	return dotReal(s.L, x), nil
}

// dotReal returns Σ l_i·x_i.
func dotReal(l []float64, x []complex128) complex128 {
	var h complex128
	for i, li := range l {
		if li != 0 {
			h += complex(li, 0) * x[i]
		}
	}
	return h
}

// Sweeper evaluates H(s) and dH/ds of one System at many frequencies with
// one set of working memory: Eval does not allocate. A Sweeper is not safe
// for concurrent use; give each goroutine its own (they may share the
// System, which Eval only reads). Eval reads G, C, B and L at every call.
type Sweeper struct {
	sys  *System
	f    *luFactor
	x, z []complex128
}

// NewSweeper allocates the working memory for sys.
func NewSweeper(sys *System) *Sweeper {
	n := sys.Size()
	return &Sweeper{sys: sys, f: newLUFactor(n), x: make([]complex128, n), z: make([]complex128, n)}
}

// Eval returns H(s) = L·Y⁻¹·B and its derivative dH/ds = −L·Y⁻¹·C·Y⁻¹·B at
// the complex frequency s (rad/s), with Y = G + sC, from one factorisation
// and two triangular solves. At s = jω the group delay is −Re(dH/ds / H)
// seconds, exactly. A numerically singular Y(s) gives a *SingularError.
func (w *Sweeper) Eval(s complex128) (h, dh complex128, err error) {
	sys, n := w.sys, w.f.n
	if err := w.f.factorAt(sys, s); err != nil {
		return 0, 0, err
	}
	for i, b := range sys.B {
		w.x[i] = complex(b, 0)
	}
	w.f.solve(w.x)
	h = dotReal(sys.L, w.x)
	c := sys.C.RawMatrix()
	for i := 0; i < n; i++ {
		row := c.Data[i*c.Stride : i*c.Stride+n]
		var v complex128
		for j, cij := range row {
			if cij != 0 {
				v += complex(cij, 0) * w.x[j]
			}
		}
		w.z[i] = v
	}
	w.f.solve(w.z)
	dh = -dotReal(sys.L, w.z)
	return h, dh, nil
}

// X returns the solution vector of the last successful Eval (valid until
// the next call; do not modify).
func (w *Sweeper) X() []complex128 { return w.x }
