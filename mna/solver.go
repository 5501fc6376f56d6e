package mna

import "fmt"

// Solver factors Y(s) = G + sC of one Matrices once per frequency and then
// serves any number of right-hand sides (Solve), output rows (Row.At) and
// adjoint solves (Adjoint) from that one factorisation. Its working memory
// is allocated once by NewSolver; Factor, Solve and Adjoint do not
// allocate. A Solver is not safe for concurrent use; give each goroutine
// its own (they may share the Matrices, which a Solver only reads).
//
// Excitations that change stamps (SourceTest of a voltage source,
// BrokenControl) come with their own Matrices (Excited.M): make a Solver
// for those.
type Solver struct {
	m *Matrices
	heldFactor
}

// NewSolver allocates the working memory for m.
func NewSolver(m *Matrices) *Solver {
	return &Solver{m: m, heldFactor: newHeldFactor(m.order())}
}

// heldFactor is the one factorisation of Y(s) a Solver or ShiftSolver
// holds: Factor and S, and the check every solve makes before using it.
type heldFactor struct {
	o  *luOrder
	f  factorizer
	s  complex128
	ok bool // a factorisation at s is held
}

func newHeldFactor(o *luOrder) heldFactor {
	return heldFactor{o: o, f: newFactorizer(o, false)}
}

// Factor assembles and factors Y(s) at the complex frequency s (rad/s). A
// numerically singular Y(s) gives a *SingularError and leaves no
// factorisation held.
func (w *heldFactor) Factor(s complex128) error {
	w.ok = false
	if err := factorWith(w.f, w.o.p, s); err != nil {
		return err
	}
	w.s, w.ok = s, true
	return nil
}

// S returns the complex frequency (rad/s) of the last successful Factor.
func (w *heldFactor) S() complex128 { return w.s }

// held reports a missing factorisation.
func (w *heldFactor) held() error {
	if !w.ok {
		return fmt.Errorf("solve: no factorisation (call Factor first, and check its error)")
	}
	return nil
}

// Solve writes x = Y(s)⁻¹·b for the frequency of the last Factor; b (real)
// and x have length Size() of the Matrices. The response of an output row
// r to this excitation is then r.At(w.S(), x).
func (w *Solver) Solve(b []float64, x []complex128) error {
	if err := w.check(len(b), len(x)); err != nil {
		return err
	}
	for i, v := range b {
		x[i] = complex(v, 0)
	}
	w.f.solve(x)
	return nil
}

// Adjoint writes z = Y(s)⁻ᵀ·l, l = r.G + s·r.C the output row at the
// frequency of the last Factor, with one transposed solve. Then for ANY
// right-hand side b (a unit current injected between two nodes, a source
// drive) the transfer to the output r is
//
//	y/u = Σ_i z_i·b_i + r.Feed
//
// so z_a − z_b is the transfer impedance (Ω, for a voltage output) from a
// unit current pushed into node a and out of node b to the output: the
// transfer from every injection point at the cost of one solve, as a
// noise analysis needs. Feed applies only to the excitation r was
// observed under. z is plain (not conjugate) transpose.
func (w *Solver) Adjoint(r Row, z []complex128) error {
	if err := w.check(len(r.G), len(z)); err != nil {
		return err
	}
	for i := range z {
		z[i] = complex(r.G[i], 0) + w.s*complex(r.C[i], 0)
	}
	w.f.solveTransposed(z)
	return nil
}

func (w *Solver) check(nb, nx int) error {
	n := w.m.Size()
	if err := w.held(); err != nil {
		return err
	}
	if nb != n || nx != n {
		return fmt.Errorf("solve: vectors of length %d and %d, the system has %d unknowns", nb, nx, n)
	}
	return nil
}
