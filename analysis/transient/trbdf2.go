package transient

import (
	"context"
	"errors"
	"fmt"
	"math"

	"nodal/mna"
)

// gamma is TR-BDF2's stage fraction 2 − √2, for which both stages share
// the matrix C + d·h·G with d = γ/2 = (1 − γ)/(2 − γ) (Bank et al. 1985).
const gamma = 2 - math.Sqrt2

// dStage is γ/2, the weight of G in both stage matrices.
const dStage = gamma / 2

// gradeLevels is the number of halvings between the uniform step and the
// first step of the mesh (2⁻³⁰ ≈ 10⁻⁹ of it), and gradeRepeat how many
// steps of each size the graded start takes.
const (
	gradeLevels = 30
	gradeRepeat = 4
)

// entry is one stored value of a sparse matrix.
type entry struct {
	i, j int
	v    float64
}

// heldSolver is a factorisation of G + σC and when it was last used.
type heldSolver struct {
	sigma float64
	lu    *mna.ShiftSolver
	used  int
}

// integrator holds the matrices and the last factorisations of G + σC.
type integrator struct {
	sys     *mna.System
	g, c    []entry
	solvers []heldSolver
	tick    int
	work    []complex128
	impulse bool
}

func newIntegrator(sys *mna.System, impulse bool) *integrator {
	it := &integrator{sys: sys, work: make([]complex128, sys.Size()), impulse: impulse}
	sys.G.Each(func(i, j int, v float64) { it.g = append(it.g, entry{i, j, v}) })
	sys.C.Each(func(i, j int, v float64) { it.c = append(it.c, entry{i, j, v}) })
	return it
}

// mulAdd sets y = a·(M·x) + b·y for the entries of M.
func mulAdd(m []entry, x []float64, a float64, y []float64, b float64) {
	if b != 1 {
		for i := range y {
			y[i] *= b
		}
	}
	for _, e := range m {
		y[e.i] += a * e.v * x[e.j]
	}
}

// heldSolvers is how many factorisations the integrator keeps: the
// step sizes come in runs (each graded level, then the uniform step), so
// a few suffice, and the memory stays a few factorisations whatever the
// number of levels.
const heldSolvers = 4

// solve overwrites r with (G + σC)⁻¹·r, refactoring the least recently
// used of the held solvers when none holds σ.
func (it *integrator) solve(sigma float64, r []float64) error {
	it.tick++
	var lu *mna.ShiftSolver
	for i := range it.solvers {
		if it.solvers[i].sigma == sigma {
			it.solvers[i].used = it.tick
			lu = it.solvers[i].lu
		}
	}
	if lu == nil {
		var h *heldSolver
		if len(it.solvers) < heldSolvers {
			it.solvers = append(it.solvers, heldSolver{lu: mna.NewShiftSolver(it.sys)})
			h = &it.solvers[len(it.solvers)-1]
		} else {
			h = &it.solvers[0]
			for i := range it.solvers {
				if it.solvers[i].used < h.used {
					h = &it.solvers[i]
				}
			}
		}
		h.sigma, h.used = math.NaN(), it.tick
		if err := h.lu.Factor(complex(sigma, 0)); err != nil {
			return fmt.Errorf("time-domain integration: G + %g·C: %w", sigma, err)
		}
		h.sigma, lu = sigma, h.lu
	}
	for i, v := range r {
		it.work[i] = complex(v, 0)
	}
	if err := lu.Solve(it.work); err != nil {
		return err
	}
	for i, z := range it.work {
		r[i] = real(z)
	}
	return nil
}

// meshStep is one step of the mesh: its size (s), whether it is a
// backward Euler step, and the target it ends on (−1 for none).
type meshStep struct {
	h      float64
	euler  bool
	target int
}

// mesh returns the steps from t = 0 through the sorted positive times:
// sub equal steps in each gap between consecutive times, the first
// gradeRepeat of them (of the first gap) replaced by a start graded by
// halvings from 2^−gradeLevels of that step. A step's end lands on a time
// up to rounding of the sum, which the last step of each gap absorbs.
func mesh(times []float64, sub int, impulse bool) []meshStep {
	var steps []meshStep
	t := 0.0
	for k, tk := range times {
		h := (tk - t) / float64(sub)
		n := sub
		if k == 0 && sub >= gradeRepeat {
			euler := 1
			if impulse {
				euler = 2
			}
			for lvl := gradeLevels; lvl >= 1; lvl-- {
				a := math.Ldexp(h, -lvl)
				reps := gradeRepeat
				if lvl == gradeLevels {
					reps *= 2
				}
				for r := 0; r < reps; r++ {
					steps = append(steps, meshStep{h: a, euler: euler > 0, target: -1})
					euler--
				}
			}
			n -= gradeRepeat
		}
		for r := 0; r < n; r++ {
			steps = append(steps, meshStep{h: h, euler: len(steps) == 0 || impulse && len(steps) == 1, target: -1})
		}
		// The last step of the gap ends exactly on tk (run absorbs the
		// rounding of the sum of the steps).
		steps[len(steps)-1].target = k
		t = tk
	}
	return steps
}

// run integrates over the steps and returns y at the end of each target
// step (a step that ends on target k is taken to end at times[k]) and y
// at the end of the first step (of the second for an impulse).
func (it *integrator) run(ctx context.Context, times []float64, steps []meshStep) ([]float64, float64, error) {
	n := it.sys.Size()
	x := make([]float64, n)
	xg := make([]float64, n)
	r := make([]float64, n)
	cx := make([]float64, n)
	ys := make([]float64, len(times))
	u := 1.0 // the step input for t > 0; 0 for an impulse after t = 0
	if it.impulse {
		u = 0
	}
	t, y0 := 0.0, 0.0
	for k, st := range steps {
		if k%64 == 0 {
			if err := ctx.Err(); err != nil {
				return nil, 0, err
			}
		}
		h := st.h
		if st.target >= 0 {
			h = times[st.target] - t // absorb the rounding of the sum
		}
		if st.euler {
			// (C + hG)·x₁ = C·x₀ + h·B·u₁, i.e. (G + C/h)·x₁ = C·x₀/h + B·u₁;
			// the impulse's first step carries ∫δ = 1: B/h.
			mulAdd(it.c, x, 1/h, r, 0)
			bu := u
			if it.impulse && k == 0 {
				bu = 1 / h
			}
			for i, b := range it.sys.B {
				r[i] += b * bu
			}
			if err := it.solve(1/h, r); err != nil {
				return nil, 0, err
			}
			copy(x, r)
		} else {
			dh := dStage * h
			sigma := 1 / dh
			// TR stage: (C + dhG)·x_γ = C·x − dh·G·x + 2dh·B·u.
			mulAdd(it.c, x, 1, cx, 0)
			copy(r, cx)
			mulAdd(it.g, x, -dh, r, 1)
			for i, b := range it.sys.B {
				r[i] += 2 * dh * b * u
			}
			for i := range r {
				r[i] *= sigma
			}
			if err := it.solve(sigma, r); err != nil {
				return nil, 0, err
			}
			copy(xg, r)
			// BDF2 stage: (C + dhG)·x₁ = C·(x_γ − (1−γ)²·x)/(γ(2−γ)) + dh·B·u.
			a := 1 / (gamma * (2 - gamma))
			bq := (1 - gamma) * (1 - gamma) * a
			mulAdd(it.c, xg, a, r, 0)
			for i := range r {
				r[i] -= bq * cx[i]
			}
			for i, b := range it.sys.B {
				r[i] += dh * b * u
			}
			for i := range r {
				r[i] *= sigma
			}
			if err := it.solve(sigma, r); err != nil {
				return nil, 0, err
			}
			copy(x, r)
		}
		t += h
		// y(0⁺) from the end of the first step, or for an impulse of the
		// second (the first holds the δ's spike in the algebraic unknowns
		// and the Dirac term of y, the second restores the equations).
		if k == 0 && !it.impulse || k == 1 && it.impulse {
			y0 = it.output(x)
		}
		if st.target >= 0 {
			t = times[st.target]
			ys[st.target] = it.output(x)
		}
	}
	return ys, y0, nil
}

// output is y = L·x.
func (it *integrator) output(x []float64) float64 {
	y := 0.0
	for i, l := range it.sys.L {
		if l != 0 {
			y += l * x[i]
		}
	}
	return y
}

// halved is the mesh with every step split in two.
func halved(steps []meshStep) []meshStep {
	out := make([]meshStep, 0, 2*len(steps))
	for _, s := range steps {
		a := meshStep{h: s.h / 2, euler: s.euler, target: -1}
		b := meshStep{h: s.h / 2, euler: s.euler, target: s.target}
		out = append(out, a, b)
	}
	return out
}

// Integration is y of the full system at some times, by TR-BDF2 with
// Richardson extrapolation.
//
// Invariants: len(Y) == len(ErrEst) == len(TimesS); Y[k] is the
// extrapolated value at TimesS[k] (s) and ErrEst[k] ≥ 0 the size of the
// difference of the two integrations behind it divided by 3, an estimate
// of the error of the finer one (the extrapolated value is expected to be
// closer still). Y0 is y(0⁺), extrapolated linearly from the ends of the
// first steps of the two integrations (h₀ and h₀/2, about 10⁻⁹ of the
// first gap; for an impulse the second steps, at 2h₀ and h₀, so the
// Dirac term is not in it), with Err0 the size of their difference.
// Steps is the number of steps of the finer integration.
type Integration struct {
	TimesS []float64
	Y      []float64
	ErrEst []float64
	Y0     float64
	Err0   float64
	Steps  int
}

// ErrBadTimes means the times to integrate to are not positive, finite
// and increasing.
var ErrBadTimes = errors.New("time-domain integration: the times must be positive, finite and increasing")

// Integrate returns the unit-step (impulse false) or unit-impulse (true)
// response y = L·x of sys at the given times (s, positive, increasing)
// from the integration of C·x′ + G·x = B·u with x(0⁻) = 0, with sub
// steps in each gap between consecutive times (at least gradeRepeat) on
// the coarser of the two meshes. The impulse response excludes any Dirac
// term at t = 0 (the times are positive).
func Integrate(ctx context.Context, sys *mna.System, impulse bool, times []float64, sub int) (*Integration, error) {
	if err := checkTimes(times); err != nil {
		return nil, err
	}
	it := newIntegrator(sys, impulse)
	steps := mesh(times, max(sub, gradeRepeat), impulse)
	out, _, err := it.richardson(ctx, times, steps, nil)
	return out, err
}

// checkTimes refuses times that are not positive, finite and increasing.
func checkTimes(times []float64) error {
	if len(times) == 0 || !(times[0] > 0) || math.IsInf(times[len(times)-1], 0) {
		return ErrBadTimes
	}
	for k := 1; k < len(times); k++ {
		if !(times[k] > times[k-1]) {
			return ErrBadTimes
		}
	}
	return nil
}

// richardson integrates on steps and on steps halved (coarse, when not
// nil, is the run on steps already made) and returns the extrapolated
// values and the run on the halved steps, the coarse run of the next
// refinement.
func (it *integrator) richardson(ctx context.Context, times []float64, steps []meshStep, coarse *coarseRun) (*Integration, *coarseRun, error) {
	if coarse == nil {
		ys, y0, err := it.run(ctx, times, steps)
		if err != nil {
			return nil, nil, err
		}
		coarse = &coarseRun{ys, y0}
	}
	fineSteps := halved(steps)
	fine, fine0, err := it.run(ctx, times, fineSteps)
	if err != nil {
		return nil, nil, err
	}
	out := &Integration{TimesS: times, Y: make([]float64, len(times)), ErrEst: make([]float64, len(times)), Steps: len(fineSteps),
		Y0: 2*fine0 - coarse.y0, Err0: math.Abs(fine0 - coarse.y0)}
	for k := range times {
		d := (fine[k] - coarse.ys[k]) / 3
		out.Y[k] = fine[k] + d
		out.ErrEst[k] = math.Abs(d)
	}
	return out, &coarseRun{fine, fine0}, nil
}

// coarseRun is one integration's values at the times and after its
// first step.
type coarseRun struct {
	ys []float64
	y0 float64
}
