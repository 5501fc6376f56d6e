package reduce

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"nodal/analysis/transfer"
	"nodal/mna"
)

// Default tolerances of the check against direct solves.
const (
	// DefaultTolDB is the largest gain error allowed, dB.
	DefaultTolDB = 0.01
	// DefaultTolDeg is the largest phase error allowed, degrees.
	DefaultTolDeg = 0.1
	// DefaultPointsPerDecade is the density of the check grid.
	DefaultPointsPerDecade = 40
	// DefaultMaxOrder is the largest basis tried before giving up.
	DefaultMaxOrder = 160
)

// Options are the range and tolerances of a reduction.
type Options struct {
	// FromHz and ToHz are the frequency range (Hz, 0 < FromHz < ToHz)
	// over which the reduced model must match the circuit.
	FromHz, ToHz float64
	// TolDB (dB) and TolDeg (degrees) bound the gain and phase error
	// at every check point; 0 means DefaultTolDB, DefaultTolDeg.
	TolDB, TolDeg float64
	// PointsPerDecade is the density of the logarithmic check grid; 0
	// means DefaultPointsPerDecade.
	PointsPerDecade int
	// MaxOrder is the largest basis (number of columns of V) tried; 0
	// means DefaultMaxOrder.
	MaxOrder int
}

func (o Options) withDefaults() (Options, error) {
	if !(o.FromHz > 0) || !(o.ToHz > o.FromHz) || math.IsInf(o.ToHz, 0) {
		return o, fmt.Errorf("reduce: the range %g–%g Hz must have 0 < from < to", o.FromHz, o.ToHz)
	}
	if o.TolDB == 0 {
		o.TolDB = DefaultTolDB
	}
	if o.TolDeg == 0 {
		o.TolDeg = DefaultTolDeg
	}
	if o.PointsPerDecade == 0 {
		o.PointsPerDecade = DefaultPointsPerDecade
	}
	if o.MaxOrder == 0 {
		o.MaxOrder = DefaultMaxOrder
	}
	if !(o.TolDB > 0) || !(o.TolDeg > 0) || o.PointsPerDecade < 1 || o.MaxOrder < 1 {
		return o, errors.New("reduce: tolerances, points per decade and the largest order must be positive")
	}
	return o, nil
}

// Model is a reduced model of an MNA system verified over a range.
//
// Invariants: TF's roots and gain are those checked; MaxErrDB ≤ the
// TolDB and MaxErrDeg ≤ the TolDeg of the reduction at every one of the
// CheckPoints frequencies from FromHz to ToHz; Order == TF.Order().
type Model struct {
	// TF is the reduced H(s) (s in rad/s) in factored form; DirectDC is
	// H(0) from a direct solve of the full system when Y(0) is regular.
	TF *transfer.TransferFunction
	// Order is the number of poles of the reduced model, Basis the
	// number of columns of the projection basis (Order ≤ Basis).
	Order, Basis int
	// Unknowns is the size n of the full system.
	Unknowns int
	// FromHz and ToHz are the verified range (Hz).
	FromHz, ToHz float64
	// CheckPoints is the number of frequencies compared with direct
	// solves.
	CheckPoints int
	// MaxErrDB (dB) and MaxErrDeg (degrees) are the largest differences
	// from the direct solves over the check points.
	MaxErrDB, MaxErrDeg float64
	// TolDB and TolDeg are the tolerances it was checked against.
	TolDB, TolDeg float64
	// Expansions are the expansion points s_i (rad/s) of the Krylov
	// spaces, in the order they were added.
	Expansions []complex128
	// Stable reports whether every pole of the reduced model lies in the
	// open left half-plane: a statement about the reduced model only.
	Stable bool
}

// ErrNotVerified means no reduced model up to the largest order matched
// the direct solves within the tolerances over the range.
var ErrNotVerified = errors.New("no reduced model matched direct solves")

// expansion is one expansion point with its factorisation and the vector
// its Krylov sequence continues from.
type expansion struct {
	s    complex128
	lu   *mna.ShiftSolver
	next []complex128 // the last vector added from this point (orthogonalised)
}

// checkPoint is one frequency of the check grid with the direct H(jω).
type checkPoint struct {
	w  float64 // rad/s
	hd complex128
}

// Reduce returns the reduced model of sys of the smallest order the
// greedy sequence reaches whose factored H(s) matches direct solves of
// sys within opt's tolerances at every check point over the range. The
// first expansion point is real, at the low end of the range; each
// later one goes at jω of the worst check point (or continues the Krylov
// sequence of the point nearest it). A frequency where the direct
// response is 0, not finite or below 10⁻³⁰⁰ (where float64 can no longer
// carry a relative error) cannot be checked and is an error.
func Reduce(ctx context.Context, sys *mna.System, opt Options) (*Model, error) {
	opt, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	n := sys.Size()
	grid, err := directGrid(ctx, sys, opt)
	if err != nil {
		return nil, err
	}
	bs := newBasis(sys)
	wLo, wHi := 2*math.Pi*opt.FromHz, 2*math.Pi*opt.ToHz
	wMid := math.Sqrt(wLo * wHi)
	var exps []*expansion
	best := struct {
		tf   *transfer.TransferFunction
		e    float64
		db   float64
		deg  float64
		atHz float64
	}{e: math.Inf(1)}
	// sGain: the check point of the largest response, where the constant
	// of the factored form is best determined.
	top := 0
	for i, p := range grid {
		if cmplx.Abs(p.hd) > cmplx.Abs(grid[top].hd) {
			top = i
		}
	}
	sGain := complex(0, grid[top].w)
	target := complex(wLo, 0)
	stalls := 0
	var lastErrs []float64
	for len(bs.v) < opt.MaxOrder {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		k0 := len(bs.v)
		if err := extend(sys, bs, &exps, target); err != nil {
			return nil, err
		}
		if len(bs.v) == 0 {
			return nil, errors.New("reduce: the input does not reach the unknowns (B is zero or singular)")
		}
		if len(bs.v) == k0 {
			// Nothing new at that point: a new one where no point is yet,
			// or the sequence ends.
			stalls++
			w, ok := freshPoint(exps, grid, lastErrs)
			if !ok || stalls > maxStalls {
				break
			}
			target = complex(0, w)
			continue
		}
		stalls = 0
		rm := bs.reduced()
		tf, err := rm.transferFunction(wMid, wMid, sGain)
		if err != nil {
			target = nextTarget(exps, grid, nil, wMid)
			continue
		}
		worst, e, db, deg := compare(tf, grid, opt)
		lastErrs = pointErrors(tf, grid, opt)
		if e < best.e {
			best.tf, best.e, best.db, best.deg, best.atHz = tf, e, db, deg, grid[worst].w/(2*math.Pi)
		}
		if e <= 1 {
			// Check also at the model's own root frequencies inside the
			// range (a resonance between grid points).
			extra, err := rootPoints(ctx, sys, tf, wLo, wHi, grid)
			if err != nil {
				return nil, err
			}
			if len(extra) > 0 {
				if _, e2, _, _ := compare(tf, extra, opt); e2 > 1 {
					grid = mergeGrid(grid, extra)
					target = complex(0, extra[0].w)
					continue
				}
				grid = mergeGrid(grid, extra)
			}
			_, _, db, deg = compare(tf, grid, opt)
			m := &Model{TF: tf, Order: tf.Order(), Basis: len(bs.v), Unknowns: n, FromHz: opt.FromHz, ToHz: opt.ToHz,
				CheckPoints: len(grid), MaxErrDB: db, MaxErrDeg: deg, TolDB: opt.TolDB, TolDeg: opt.TolDeg, Stable: true}
			for _, x := range exps {
				m.Expansions = append(m.Expansions, x.s)
			}
			for _, p := range tf.Poles {
				if !(real(p) < 0) {
					m.Stable = false
				}
			}
			if dc, ok := directDC(sys); ok {
				tf.DirectDC = &dc
			}
			return m, nil
		}
		target = nextTarget(exps, grid, tf, grid[worst].w)
	}
	if best.tf == nil {
		return nil, fmt.Errorf("%w within %g dB and %g° over %g–%g Hz: no reduced model up to order %d could be formed", ErrNotVerified, opt.TolDB, opt.TolDeg, opt.FromHz, opt.ToHz, opt.MaxOrder)
	}
	return nil, fmt.Errorf("%w within %g dB and %g° over %.4g–%.4g Hz with up to %d basis vectors at %d expansion points (the best, order %d, is off by %.3g dB / %.3g° at %.4g Hz)",
		ErrNotVerified, opt.TolDB, opt.TolDeg, opt.FromHz, opt.ToHz, len(bs.v), len(exps), best.tf.Order(), best.db, best.deg, best.atHz)
}

// maxStalls is how many expansion points in a row may add nothing to the
// basis before the reduction gives up.
const maxStalls = 8

// freshPoint is the check frequency (rad/s) of largest error (errs, by
// grid point; the lowest frequency when nil) that is more than a factor
// 1.5 from every expansion point; ok is false when there is none.
func freshPoint(exps []*expansion, grid []checkPoint, errs []float64) (float64, bool) {
	best, bestE := 0.0, -1.0
	for i, p := range grid {
		far := true
		for _, x := range exps {
			if r := cmplx.Abs(x.s) / p.w; r < 1.5 && r > 1/1.5 {
				far = false
				break
			}
		}
		e := 0.0
		if i < len(errs) {
			e = errs[i]
		}
		if far && e > bestE {
			best, bestE = p.w, e
		}
	}
	return best, bestE >= 0
}

// pointErrors is the normalised error (≤ 1 passes) of tf at each check
// point.
func pointErrors(tf *transfer.TransferFunction, grid []checkPoint, opt Options) []float64 {
	out := make([]float64, len(grid))
	for i := range grid {
		_, out[i], _, _ = compare(tf, grid[i:i+1], opt)
	}
	return out
}

// nextTarget is where the next basis vectors come from: the expansion
// point nearest w (within a factor 1.5 in frequency) continues its Krylov
// sequence, else a new point goes at jω.
func nextTarget(exps []*expansion, grid []checkPoint, _ *transfer.TransferFunction, w float64) complex128 {
	for _, x := range exps {
		if r := cmplx.Abs(x.s) / w; r < 1.5 && r > 1/1.5 {
			return x.s
		}
	}
	return complex(0, w)
}

// extend adds the next basis vectors at the expansion point s: the next
// Krylov vector (G + sC)⁻¹·C·v of its sequence when s is already an
// expansion point, else (G + sC)⁻¹·B starting a new one. A point whose
// sequence is exhausted (nothing new) moves to the next moment from B's
// side at a slightly different point.
func extend(sys *mna.System, bs *basis, exps *[]*expansion, s complex128) error {
	var x *expansion
	for _, e := range *exps {
		if e.s == s {
			x = e
		}
	}
	n := sys.Size()
	for tries := 0; tries < 4; tries++ {
		w := make([]complex128, n)
		if x == nil {
			lu := mna.NewShiftSolver(sys)
			if err := lu.Factor(s); err != nil {
				var se *mna.SingularError
				if errors.As(err, &se) {
					s *= complex(1.1, 0)
					continue
				}
				return err
			}
			x = &expansion{s: s, lu: lu}
			*exps = append(*exps, x)
			for i, b := range sys.B {
				w[i] = complex(b, 0)
			}
		} else {
			if x.next == nil {
				return nil
			}
			bs.c.mulComplex(x.next, w)
		}
		if err := x.lu.Solve(w); err != nil {
			return err
		}
		added := 0
		if imag(s) == 0 {
			re := make([]float64, n)
			for i, z := range w {
				re[i] = real(z)
			}
			ref := norm(re)
			bs.orthogonalise(re)
			cont := make([]complex128, n)
			for i, v := range re {
				cont[i] = complex(v, 0)
			}
			if bs.add(re, ref) {
				added = 1
			}
			x.next = cont
		} else {
			added = bs.addComplex(w)
			x.next = w
		}
		if added > 0 {
			return nil
		}
		// Exhausted here: a new point a little away.
		x, s = nil, s*complex(1.37, 0)
	}
	return nil
}

// compare returns the worst check point of tf against the direct
// responses, its normalised error (≤ 1 passes) and the largest gain (dB)
// and phase (degrees) errors over the grid.
func compare(tf *transfer.TransferFunction, grid []checkPoint, opt Options) (worst int, e, maxDB, maxDeg float64) {
	e = -1
	for i, p := range grid {
		r := tf.EvalFactored(complex(0, p.w)) / p.hd
		db := math.Abs(20 * math.Log10(cmplx.Abs(r)))
		deg := math.Abs(cmplx.Phase(r) * 180 / math.Pi)
		if math.IsNaN(db) || math.IsNaN(deg) || math.IsInf(db, 0) {
			db, deg = math.Inf(1), 180
		}
		maxDB, maxDeg = math.Max(maxDB, db), math.Max(maxDeg, deg)
		if ei := math.Max(db/opt.TolDB, deg/opt.TolDeg); ei > e {
			worst, e = i, ei
		}
	}
	return worst, e, maxDB, maxDeg
}

// minCheckable is the smallest |H| a check point may have: below it the
// relative error of a float64 ratio is no longer defined to 0.01 dB.
const minCheckable = 1e-300

// directGrid solves the full system at every frequency of the check
// grid.
func directGrid(ctx context.Context, sys *mna.System, opt Options) ([]checkPoint, error) {
	dec := math.Log10(opt.ToHz / opt.FromHz)
	m := max(int(math.Ceil(dec*float64(opt.PointsPerDecade))), 20)
	ws := make([]float64, m+1)
	for i := range ws {
		ws[i] = 2 * math.Pi * opt.FromHz * math.Pow(opt.ToHz/opt.FromHz, float64(i)/float64(m))
	}
	return directAt(ctx, sys, ws)
}

// directAt returns H(jω) from direct solves at each ω (rad/s).
func directAt(ctx context.Context, sys *mna.System, ws []float64) ([]checkPoint, error) {
	lu := mna.NewShiftSolver(sys)
	x := make([]complex128, sys.Size())
	out := make([]checkPoint, len(ws))
	for i, w := range ws {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		if err := lu.Factor(complex(0, w)); err != nil {
			return nil, fmt.Errorf("reduce: direct solve at %g Hz: %w", w/(2*math.Pi), err)
		}
		for j, b := range sys.B {
			x[j] = complex(b, 0)
		}
		if err := lu.Solve(x); err != nil {
			return nil, err
		}
		var h complex128
		for j, l := range sys.L {
			if l != 0 {
				h += complex(l, 0) * x[j]
			}
		}
		if a := cmplx.Abs(h); !(a >= minCheckable) || math.IsInf(a, 0) {
			return nil, fmt.Errorf("reduce: |H| is %g at %g Hz, where a reduced model cannot be checked to 0.01 dB: narrow the range", a, w/(2*math.Pi))
		}
		out[i] = checkPoint{w: w, hd: h}
	}
	return out, nil
}

// rootPoints are direct solves at the frequencies |p| of the model's
// poles and zeros inside (wLo, wHi) that are not already on the grid
// (within 0.1 %).
func rootPoints(ctx context.Context, sys *mna.System, tf *transfer.TransferFunction, wLo, wHi float64, grid []checkPoint) ([]checkPoint, error) {
	var ws []float64
	for _, rs := range [][]complex128{tf.Poles, tf.Zeros} {
		for _, r := range rs {
			w := cmplx.Abs(r)
			if imag(r) != 0 {
				w = math.Abs(imag(r))
			}
			if !(w > wLo && w < wHi) {
				continue
			}
			near := false
			for _, p := range grid {
				if math.Abs(p.w/w-1) < 1e-3 {
					near = true
					break
				}
			}
			if !near {
				ws = append(ws, w)
			}
		}
	}
	if len(ws) == 0 {
		return nil, nil
	}
	pts, err := directAt(ctx, sys, ws)
	if err != nil {
		// A zero on the axis: |H| vanishes there, nothing to compare.
		return nil, nil
	}
	return pts, nil
}

// mergeGrid returns a and b together.
func mergeGrid(a, b []checkPoint) []checkPoint { return append(append([]checkPoint(nil), a...), b...) }

// directDC is H(0) from a direct solve of the full system, ok false when
// Y(0) is singular.
func directDC(sys *mna.System) (float64, bool) {
	h, err := sys.H(0)
	if err != nil || cmplx.IsNaN(h) || cmplx.IsInf(h) {
		return 0, false
	}
	return real(h), true
}
