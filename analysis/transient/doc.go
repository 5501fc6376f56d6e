// Package transient integrates the full MNA descriptor system
//
//	C·x′(t) + G·x(t) = B·u(t),  y = L·x,  x(0⁻) = 0,
//
// for a unit step or a unit impulse u, on the sparse matrices of an
// mna.System, and checks a step or impulse response computed some other
// way (the matrix exponential of a reduced model, analysis/timeresp)
// against it at its sample times. It never forms an n×n array: every
// step is a solve with the sparse factorisation of G + σ·C at a real σ
// (mna.ShiftSolver), so its cost per step is that of one sparse solve.
//
// The method is TR-BDF2 (Bank, Coughran, Fichtner, Grosse, Rose and
// Smith, "Transient simulation of silicon devices and circuits", IEEE
// Trans. CAD 4 (1985)), with γ = 2 − √2 so that both stages share one
// matrix C + (γ/2)·h·G; it is L-stable, so the stiff modes of a large
// network (time constants many decades below the span) are damped, not
// rung. The first step is backward Euler, which needs only C·x₀ and so
// starts correctly from the discontinuity at t = 0 (an impulse is
// ∫δ = 1 in that step, then one more backward Euler step restores the
// algebraic equations). The mesh is graded geometrically from t = 0 up
// to a uniform step that lands on every checked sample time; the whole
// integration is done twice, on the mesh and on the mesh with every step
// halved, and Richardson extrapolation (order 2) gives the value and an
// estimate of its error.
package transient
