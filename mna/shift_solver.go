package mna

import "fmt"

// ShiftSolver factors Y(s) = G + sC of one System at a complex frequency
// s (rad/s) and then solves Y(s)·x = b and Y(s)ᵀ·x = b for any complex
// right-hand side b, as many times as asked, from that one factorisation:
// the shift-and-invert operator of a Krylov method (analysis/reduce). Its
// working memory is allocated once by NewShiftSolver; Factor (after the
// first) and the solves do not allocate. A ShiftSolver is not safe for
// concurrent use; give each goroutine its own (they may share the System,
// which a ShiftSolver only reads). Several ShiftSolvers of one System
// hold factorisations at several shifts at once.
type ShiftSolver struct {
	sys *System
	heldFactor
}

// NewShiftSolver allocates the working memory for sys (the dense path for
// small systems, the sparse one above denseMaxUnknowns, as NewSweeper).
// Factor and S are those of Solver.
func NewShiftSolver(sys *System) *ShiftSolver {
	return &ShiftSolver{sys: sys, heldFactor: newHeldFactor(sys.order())}
}

// Solve overwrites x (length Size(), indexed by unknown) with Y(s)⁻¹·x for
// the s of the last Factor.
func (w *ShiftSolver) Solve(x []complex128) error {
	if err := w.check(len(x)); err != nil {
		return err
	}
	w.f.solve(x)
	return nil
}

// SolveTransposed overwrites x with Y(s)⁻ᵀ·x (plain transpose, no
// conjugation) for the s of the last Factor.
func (w *ShiftSolver) SolveTransposed(x []complex128) error {
	if err := w.check(len(x)); err != nil {
		return err
	}
	w.f.solveTransposed(x)
	return nil
}

func (w *ShiftSolver) check(nx int) error {
	if err := w.held(); err != nil {
		return err
	}
	if n := w.sys.Size(); nx != n {
		return fmt.Errorf("solve: x has length %d, the system has %d unknowns", nx, n)
	}
	return nil
}
