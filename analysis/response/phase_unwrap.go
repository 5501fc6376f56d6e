package response

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"slices"
	"sync"
	"sync/atomic"

	"nodal/mna"
)

// Unwrapping the phase of a sweep by its group delay.
//
// The phase is anchored at 0 Hz where H(0) is finite and not 0 (arg H(0)
// is 0° or 180°, H(0) being real), followed from there to the first point
// as a step between points: the phase is then the one continuous from DC
// whatever the sweep's first frequency. Where H has a zero or a pole of
// order |k| at 0 Hz it is anchored at its low-frequency limit k·90° (plus
// 180° when H ≈ c·s^k has c < 0; lowAnchor), checked six and seven
// decades below the lowest point; where that limit is not reached there
// (a corner further down), or a step cannot be resolved, the first point
// keeps its principal value, in (−180°, 180°].
//
// Between two consecutive points with a phase, a and b, the change of
// arg H is known modulo 360° from the two values of H; the turn is picked
// by the change the group delay predicts, the trapezoid rule in ln f on
// dφ/d(ln f) = −τω (in ω when a is at 0 Hz). The step is taken as it is
// when it is safe: the predicted change is at most 180°, the two ends'
// predictions differ by at most stepTolRad (for a slope monotone over the
// step this bounds the trapezoid's error), and the change chosen differs
// from the prediction by at most stepTolRad. Otherwise the step is split
// at its midpoint in ln f (in f from 0 Hz), H and dH/ds solved there
// exactly, and each half resolved the same way, to refineDepth levels and
// refineSolves solves per step. The extra points are only used, never
// returned. A dense grid rarely needs any (the check costs a few flops).
//
// A resonance much narrower than the step between two points (two
// high-Q sections, a high-Q all-pass) turns the phase by whole turns
// that neither end's delay shows, so a step is also never taken as it is
// when it holds a mark of Response.marksHz (SweepOptions.PhaseMarksHz,
// the circuit's resonances): it is split at the mark first, and each
// half, which then ends at the resonance, is resolved as above. Without
// marks (a circuit too large for its natural frequencies to be known)
// such a hidden turn is not seen.
//
// A pole (or zero) on the jω axis makes the phase jump by 180° where the
// delay sees nothing. A step that still differs from its prediction by
// 180° ± jumpTolRad once narrower than jumpWidth (relative), with |H|
// rising into it from both ends, is taken as a pole crossing, −180°; with
// |H| falling into it from both ends, as a zero crossing, +180°: the
// limits of a pole or zero just left of the axis (common practice). A
// step that resolves neither way leaves the phase of every later point
// unresolved (Response.PhaseUnresolved), rather than a guessed turn.
const (
	stepTolRad   = 30 * math.Pi / 180
	jumpTolRad   = 10 * math.Pi / 180
	jumpWidth    = 1e-9
	refineDepth  = 64
	refineSolves = 4096
)

// pointEval solves H and dH/ds at fHz; singular is true on a jω-axis
// pole (no H). err is a solver failure other than a singular matrix.
type pointEval func(fHz float64) (h, dh complex128, singular bool, err error)

// phasePoint is one point of a step: frequency (Hz), H and dH/ds, the
// slope dφ/dω = −τ (s) and the principal arg H (radians).
type phasePoint struct {
	f       float64
	h, dh   complex128
	slope   float64
	phaseRd float64
}

// newPhasePoint is the point at fHz with H = h and dH/ds = dh.
func newPhasePoint(fHz float64, h, dh complex128) phasePoint {
	return phasePoint{fHz, h, dh, real(dh / h), cmplx.Phase(h)}
}

// stepChange is the phase change from a to b (radians): the change of
// arg H on the turn nearest the prediction, the prediction, half the
// difference between the two ends' predictions and the residual.
func stepChange(a, b phasePoint) (delta, pred, disagree, resid float64) {
	ga, gb := a.slope, b.slope
	sa, sb, du := ga, gb, 2*math.Pi*(b.f-a.f)
	if a.f > 0 {
		sa, sb, du = ga*2*math.Pi*a.f, gb*2*math.Pi*b.f, math.Log(b.f/a.f)
	}
	pred = (sa + sb) / 2 * du
	disagree = math.Abs(sa-sb) * du / 2
	w := wrapRad(b.phaseRd - a.phaseRd)
	delta = w + 2*math.Pi*math.Round((pred-w)/(2*math.Pi))
	return delta, pred, disagree, delta - pred
}

// wrapRad wraps an angle in radians to [−π, π].
func wrapRad(x float64) float64 { return x - 2*math.Pi*math.Round(x/(2*math.Pi)) }

// safe reports whether a step's turn is picked safely from its ends.
func safe(pred, disagree, resid float64) bool {
	return math.Abs(pred) <= math.Pi && disagree <= stepTolRad && math.Abs(resid) <= stepTolRad
}

// axisJump is the change across a narrow step holding a jω-axis pole
// (−π beside the delay's prediction) or zero (+π); ok false otherwise.
func axisJump(a, b phasePoint, pred, disagree, resid float64) (float64, bool) {
	width := b.f - a.f
	if a.f > 0 {
		width = b.f/a.f - 1
	}
	if width > jumpWidth || disagree > stepTolRad || math.Abs(pred) > stepTolRad || math.Abs(math.Abs(resid)-math.Pi) > jumpTolRad {
		return 0, false
	}
	ma, mb := -imag(a.dh/a.h), -imag(b.dh/b.h) // d ln|H|/dω
	w := wrapRad(b.phaseRd - a.phaseRd)
	turn := func(want float64) float64 { return w + 2*math.Pi*math.Round((want-w)/(2*math.Pi)) }
	switch {
	case ma > 0 && mb < 0:
		return turn(pred - math.Pi), true
	case ma < 0 && mb > 0:
		return turn(pred + math.Pi), true
	}
	return 0, false
}

// resolveStep is the phase change from a to b (radians), refined by
// solves of ev between them; ok false when it cannot be resolved within
// depth levels and *budget solves.
// A step down in frequency (b below a, as --at may list) is the step
// up from b to a with its sign changed.
//
// marks are the frequencies (sorted) at which a step that holds one is
// split first (see the top of this file).
func resolveStep(ctx context.Context, ev pointEval, a, b phasePoint, depth int, budget *int, marks []float64) (float64, bool, error) {
	if b.f < a.f {
		d, ok, err := resolveStep(ctx, ev, b, a, depth, budget, marks)
		return -d, ok, err
	}
	marks = marksInside(marks, a.f, b.f)
	delta, pred, dis, res := stepChange(a, b)
	if len(marks) == 0 {
		if safe(pred, dis, res) {
			return delta, true, nil
		}
		if d, ok := axisJump(a, b, pred, dis, res); ok {
			return d, true, nil
		}
	}
	if ev == nil || depth >= refineDepth {
		return 0, false, nil
	}
	if err := ctx.Err(); err != nil {
		return 0, false, err
	}
	fm := b.f / 2
	if a.f > 0 {
		fm = math.Sqrt(a.f) * math.Sqrt(b.f)
	}
	if len(marks) > 0 {
		fm = marks[len(marks)/2]
	}
	for try := 0; ; try++ {
		if !(fm > a.f && fm < b.f) || *budget <= 0 {
			return 0, false, nil
		}
		*budget--
		h, dh, singular, err := ev(fm)
		if err != nil {
			return 0, false, err
		}
		if !singular && cmplx.Abs(h) >= MinNormalMag && !cmplx.IsInf(h) && !cmplx.IsNaN(dh) {
			m := newPhasePoint(fm, h, dh)
			d1, ok, err := resolveStep(ctx, ev, a, m, depth+1, budget, marks)
			if !ok || err != nil {
				return 0, false, err
			}
			d2, ok, err := resolveStep(ctx, ev, m, b, depth+1, budget, marks)
			return d1 + d2, ok, err
		}
		if !singular || try > 0 {
			return 0, false, nil // no phase there (|H| below the range)
		}
		// On a pole: split just beside it, and let that mark go (the
		// split beside it ends a half at the resonance, as the mark
		// would).
		marks = slices.DeleteFunc(slices.Clone(marks), func(m float64) bool { return m == fm })
		fm += (b.f - fm) / 1024
	}
}

// lowAnchorRatio is how far below the first point lowAnchor looks for
// the low-frequency asymptote c·s^k of H.
const lowAnchorRatio = 1e-6

// lowAnchor is the anchor of the phase where H has a zero or a pole at
// 0 Hz: near DC, H ≈ c·s^k with c real, so arg H tends to k·90° (plus
// 180° for c < 0), the limit the phase is continuous from (an integrator
// −90°, a k-fold high-pass +k·90°; common practice). It solves H at
// f1·lowAnchorRatio and a decade below (f1 the first point's frequency)
// and takes k = d ln H / d ln s there, s·H′/H, when both are within
// 10⁻³ of the same integer with no imaginary part; the point returned is
// the upper of the two with its phase on the turn of k·90° (+180°). ok
// is false when H is not yet c·s^k there (a corner below that), or has
// no normal value: the first point then keeps its principal value.
func lowAnchor(ev pointEval, f1Hz float64) (phasePoint, bool, error) {
	if ev == nil || !(f1Hz > 0) {
		return phasePoint{}, false, nil
	}
	var k [2]float64
	var pts [2]phasePoint
	for i, f := range []float64{f1Hz * lowAnchorRatio, f1Hz * lowAnchorRatio / 10} {
		h, dh, singular, err := ev(f)
		if err != nil {
			return phasePoint{}, false, err
		}
		if singular || h == 0 || cmplx.Abs(h) < MinNormalMag || cmplx.IsInf(h) || cmplx.IsNaN(dh) {
			return phasePoint{}, false, nil
		}
		s := complex(0, 2*math.Pi*f)
		v := s * dh / h
		if math.Abs(imag(v)) > 1e-3 || math.Abs(real(v)-math.Round(real(v))) > 1e-3 {
			return phasePoint{}, false, nil
		}
		k[i], pts[i] = math.Round(real(v)), newPhasePoint(f, h, dh)
	}
	if k[0] != k[1] || k[0] == 0 {
		return phasePoint{}, false, nil
	}
	p := pts[0]
	// c = H/s^k is real; its sign decides the extra half turn.
	c := p.h / cmplx.Pow(complex(0, 2*math.Pi*p.f), complex(k[0], 0))
	target := k[0] * math.Pi / 2
	if real(c) < 0 {
		target += math.Pi
	}
	p.phaseRd += 2 * math.Pi * math.Round((target-p.phaseRd)/(2*math.Pi))
	return p, true, nil
}

// lowestPositive is the lowest of fs above 0 (0 when there is none).
func lowestPositive(fs []float64) float64 {
	lo := 0.0
	for _, f := range fs {
		if f > 0 && (lo == 0 || f < lo) {
			lo = f
		}
	}
	return lo
}

// phaseMarks returns the positive finite frequencies of marks, sorted
// and without repeats (a new slice).
func phaseMarks(marks []float64) []float64 {
	var out []float64
	for _, m := range marks {
		if m > 0 && !math.IsInf(m, 0) {
			out = append(out, m)
		}
	}
	slices.Sort(out)
	return slices.Compact(out)
}

// marksInside returns the marks strictly between lo and hi (Hz), a
// subslice of the sorted marks.
func marksInside(marks []float64, lo, hi float64) []float64 {
	i, _ := slices.BinarySearch(marks, lo)
	for i < len(marks) && marks[i] <= lo {
		i++
	}
	j, _ := slices.BinarySearch(marks, hi)
	if j < i {
		j = i
	}
	return marks[i:j]
}

// unwrapPhase replaces r.PhaseDeg (principal values, NaN where there is
// no phase) by the phase unwrapped by the group delay (see the top of
// this file) and sets r.PhaseUnresolved. The steps that need refining
// (the one from 0 Hz to the first point among them) are shared among
// workers goroutines, each with its own evaluator from newEval (nil: no
// refinement and no anchor at 0 Hz); every step is resolved the same way
// whatever the worker, so the result does not depend on their number.
func (r *Response) unwrapPhase(ctx context.Context, workers int, newEval func() pointEval) error {
	n := len(r.PhaseDeg)
	r.PhaseUnresolved = make([]bool, n)
	has := func(i int) bool { return !math.IsNaN(r.PhaseDeg[i]) && r.H[i] != 0 && !math.IsNaN(r.GroupDelayS[i]) }
	pt := func(i int) phasePoint {
		return phasePoint{r.FreqHz[i], r.H[i], r.dh[i], -r.GroupDelayS[i], r.PhaseDeg[i] * math.Pi / 180}
	}
	first := -1
	for i := range n {
		if has(i) {
			first = i
			break
		}
	}
	if first < 0 {
		return nil
	}
	// delta[i] is the change from the previous point with a phase to
	// point i (NaN until resolved); delta[first] the change from 0 Hz
	// (NaN where H(0) is 0 or a pole, or the first point is at 0 Hz).
	// A step to refine goes from a to b, its change into delta[i].
	type step struct {
		a, b phasePoint
		i    int
	}
	delta := make([]float64, n)
	for i := range delta {
		delta[i] = math.NaN()
	}
	var pending []step
	var dc phasePoint
	if newEval != nil && r.FreqHz[first] > 0 {
		h, dh, singular, err := newEval()(0)
		if err != nil {
			return err
		}
		if !singular && cmplx.Abs(h) >= MinNormalMag && !cmplx.IsInf(h) && !cmplx.IsNaN(dh) && h != 0 {
			dc = newPhasePoint(0, h, dh)
			pending = append(pending, step{dc, pt(first), first})
		} else if low, ok, err := lowAnchor(newEval(), lowestPositive(r.FreqHz)); err != nil {
			return err
		} else if ok {
			dc = low
			pending = append(pending, step{dc, pt(first), first})
		}
	}
	for a, i := first, first+1; i < n; i++ {
		if !has(i) {
			continue
		}
		pa, pb := pt(a), pt(i)
		lo, hi, sign := pa, pb, 1.0
		if pb.f < pa.f { // a step down: the change up from pb to pa, negated
			lo, hi, sign = pb, pa, -1
		}
		if d, pred, dis, res := stepChange(lo, hi); safe(pred, dis, res) && len(marksInside(r.marksHz, lo.f, hi.f)) == 0 {
			delta[i] = sign * d
		} else {
			pending = append(pending, step{pa, pb, i})
		}
		a = i
	}
	if len(pending) > 0 {
		errs := make([]error, len(pending))
		var next atomic.Int64
		var wg sync.WaitGroup
		for range max(1, min(workers, len(pending))) {
			wg.Add(1)
			go func() {
				defer wg.Done()
				var ev pointEval
				if newEval != nil {
					ev = newEval()
				}
				for {
					j := int(next.Add(1)) - 1
					if j >= len(pending) {
						return
					}
					st := pending[j]
					budget := refineSolves
					d, ok, err := resolveStep(ctx, ev, st.a, st.b, 0, &budget, r.marksHz)
					if errs[j] = err; err != nil {
						return
					}
					if ok {
						delta[st.i] = d
					}
				}
			}()
		}
		wg.Wait()
		for _, err := range errs {
			if err != nil {
				return err
			}
		}
	}
	// The anchor: arg H(0) (0° or 180°, H(0) being real) plus the change
	// to the first point; else the first point's principal value.
	if d := delta[first]; !math.IsNaN(d) {
		want := (dc.phaseRd + d) * 180 / math.Pi
		r.PhaseDeg[first] += 360 * math.Round((want-r.PhaseDeg[first])/360)
	}
	for a, i := first, first+1; i < n; i++ {
		if !has(i) {
			continue
		}
		if math.IsNaN(delta[i]) || r.PhaseUnresolved[a] {
			r.PhaseUnresolved[i] = true
		} else {
			// i's principal value on the turn nearest a's phase plus
			// the change: an exact value plus whole turns, no rounding
			// carried.
			want := r.PhaseDeg[a] + delta[i]*180/math.Pi
			r.PhaseDeg[i] += 360 * math.Round((want-r.PhaseDeg[i])/360)
		}
		a = i
	}
	return nil
}

// sweeperEval is the evaluator of ev's system at s = j2πf.
func sweeperEval(ev *mna.Sweeper) pointEval {
	return func(fHz float64) (complex128, complex128, bool, error) {
		v, dv, err := ev.Eval(complex(0, 2*math.Pi*fHz))
		var se *mna.SingularError
		switch {
		case errors.As(err, &se):
			return 0, 0, true, nil
		case err != nil:
			return 0, 0, false, err
		}
		return v, dv, false, nil
	}
}

// sumEval is the evaluator of the sum of evs' responses: H and dH/ds
// summed, singular where a term is.
func sumEval(evs []pointEval) pointEval {
	return func(fHz float64) (complex128, complex128, bool, error) {
		var h, dh complex128
		for _, ev := range evs {
			v, dv, singular, err := ev(fHz)
			if err != nil || singular {
				return 0, 0, singular, err
			}
			h, dh = h+v, dh+dv
		}
		return h, dh, false, nil
	}
}
