package response

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"nodal/mna"
)

// Response is the frequency response H(j2πf) of one System over a list of
// frequencies, all slices of the same length as FreqHz and in its order.
//
// H is per unit of the input (the transfer function, V/V, A/V, Ω … as the
// input and output kinds make it); multiply by the System's
// SourceAmplitude for the phasor the file's drive gives. Mag = |H|;
// MagDB = 20·log10|H| (−Inf where H = 0). PhaseDeg is arg H in degrees,
// unwrapped along the sweep by the group delay, whatever the spacing of
// the points (see unwrapPhase in phase_unwrap.go): the first point with a
// phase is followed from arg H(0) at 0 Hz, or, where H has a zero or a
// pole at 0 Hz, is its principal value in (−180, 180]; each next one is
// the previous plus the phase change between them, followed through
// exact solves between the points where the step is too coarse to pick
// the turn from the two ends alone; a pole on the jω axis between two
// points is a jump of −180°, a zero +180°.
// PhaseUnresolved marks the points after a step whose turn could not be
// resolved: their PhaseDeg is the principal value. GroupDelayS is
// τ = −d(arg H)/dω = −Re(H'(s)/H(s)) at s = jω in seconds, computed exactly
// from dH/ds (NaN where H = 0).
type Response struct {
	FreqHz      []float64
	H           []complex128
	Mag         []float64
	MagDB       []float64
	PhaseDeg    []float64
	GroupDelayS []float64
	Input       string // the input source name, or "inject:NODE"
	Output      string // "NODE", "NODE-REF" (v(NODE) − v(REF)) or "i(PART)"
	// AtPole marks the points where G + jωC is singular (relative to its
	// own scale): a pole on the jω axis. There H and Mag are +Inf, MagDB
	// +Inf, PhaseDeg and GroupDelayS NaN, and the sweep goes on.
	AtPole []bool
	// Underflow marks the points where |H| came out below the smallest
	// normal float64 (MinNormalMag, 0 included) at a frequency above 0
	// while the response is not identically zero: the true |H| lies below
	// float64's range (a long ladder far above its corner), so the value
	// computed is not |H|. There Mag is 0 and MagDB, PhaseDeg and
	// GroupDelayS are NaN; the sweep goes on.
	Underflow []bool
	// PhaseUnresolved marks the points whose unwrapped phase is not known
	// to the turn: at or after a step where the change of phase could not
	// be followed within the refinement budget (or, for a Sum, without a
	// system to solve between the points). Their PhaseDeg is the
	// principal value, in (−180, 180]; the sweep goes on.
	PhaseUnresolved []bool

	dh []complex128 // dH/ds at s = j2πf, for Sum's group delay

	marksHz []float64 // SweepOptions.PhaseMarksHz, sorted, positive and finite
	// systems are the systems whose H sum to this response, solved
	// between the points for the phase of a Sum.
	systems []*mna.System
}

// PoleNote is the reason given for a point of a sweep that sits on a pole.
const PoleNote = "on a pole on the jω axis: the gain is unbounded"

// MinNormalMag is the smallest normal float64 (2.2250738585072014e-308):
// a |H| computed below it (subnormal or 0) has lost its digits.
const MinNormalMag = 0x1p-1022

// UnderflowNote is the reason given for a point of a sweep where |H| is
// below float64's range (see Response.Underflow).
const UnderflowNote = "|H| is below 2.2e-308, the smallest normal float64 (underflow): its magnitude, phase and group delay cannot be computed"

// probeDecadesHz are the frequencies (Hz) Sweep tries, when no point of a
// sweep has a normal |H|, to tell a response that is identically zero
// (printed as 0) from one that underflows everywhere it was asked.
var probeDecadesHz = []float64{1e-6, 1e-4, 1e-2, 1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9}

// underflowPoints marks the points of h at frequencies above 0 whose |H|
// is below MinNormalMag, unless the response is identically zero: no point
// of h, and no probe frequency evaluated by eval, has a normal non-zero
// |H|. eval is called only when every point is below the range.
func underflowPoints(freqsHz []float64, h []complex128, atPole []bool, eval func(fHz float64) (complex128, bool)) []bool {
	under := make([]bool, len(h))
	low, normal := false, false
	for i, v := range h {
		if atPole[i] {
			continue
		}
		if cmplx.Abs(v) >= MinNormalMag {
			normal = true
		} else if freqsHz[i] > 0 {
			under[i], low = true, true
		}
	}
	if !low {
		return under
	}
	if !normal {
		for _, f := range probeDecadesHz {
			if v, ok := eval(f); ok && cmplx.Abs(v) >= MinNormalMag {
				normal = true
				break
			}
		}
	}
	if !normal {
		return make([]bool, len(h)) // identically zero: its zeros are exact
	}
	return under
}

// Sweep evaluates sys at every frequency of freqsHz (Hz, each ≥ 0) on
// workers goroutines (workers ≤ 0 means runtime.NumCPU()). Each point is
// computed the same way whatever the worker count, so the result does not
// depend on it. It stops early with ctx's error when ctx is cancelled. A
// point where the system is singular is a pole on the jω axis (see
// Response.AtPole); only when every point is singular does Sweep fail,
// with the *mna.SingularError of the first.
func Sweep(ctx context.Context, sys *mna.System, freqsHz []float64, workers int) (*Response, error) {
	return SweepWith(ctx, sys, freqsHz, SweepOptions{Workers: workers})
}

// SweepOptions are the settings of SweepWith.
type SweepOptions struct {
	// Workers is the number of goroutines (≤ 0: runtime.NumCPU()).
	Workers int
	// PhaseMarksHz are frequencies (Hz) at which the phase unwrapping
	// always splits a step between two points that holds one: the
	// circuit's resonances, |Im p|/2π of its natural frequencies p. A
	// resonance much narrower than the step between two points turns the
	// phase by whole turns where the group delay at both ends sees
	// nothing; split there, each half shows it. Order does not matter.
	PhaseMarksHz []float64
}

// SweepWith is Sweep with options.
func SweepWith(ctx context.Context, sys *mna.System, freqsHz []float64, opt SweepOptions) (*Response, error) {
	workers := opt.Workers
	for i, f := range freqsHz {
		if !(f >= 0) || math.IsInf(f, 0) {
			return nil, fmt.Errorf("sweep: frequency %d is %g Hz; want a finite value ≥ 0", i, f)
		}
	}
	n := len(freqsHz)
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	workers = max(1, min(workers, n))
	h := make([]complex128, n)
	dh := make([]complex128, n)
	atPole := make([]bool, n)
	singular := make([]error, n)

	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	errs := make([]error, workers)
	var wg sync.WaitGroup
	// One Sweeper makes the symbolic step (order, pivots, L/U patterns)
	// at the first point; every worker starts from a copy of it.
	base := mna.NewSweeper(sys)
	if n > 0 {
		base.Eval(complex(0, 2*math.Pi*freqsHz[0])) // a singular point is Eval'd again below
	}
	// Workers take blocks of consecutive points in turn (sweepBlock, or
	// fewer so that a short sweep still reaches every worker; a loaded or
	// slower worker takes fewer blocks), two points per EvalPair. A
	// point's values do not depend on which worker computes it or on the
	// points before it (see mna.Sweeper.EvalPair).
	block := min(sweepBlock, max(2, (n+workers-1)/workers))
	var next atomic.Int64
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func(w int) {
			defer wg.Done()
			ev := base.Clone()
			// put stores point i; false when the sweep must stop.
			put := func(i int, hi, dhi complex128, err error) bool {
				var se *mna.SingularError
				switch {
				case errors.As(err, &se):
					h[i], dh[i], atPole[i], singular[i] = cmplx.Inf(), complex(math.NaN(), 0), true, err
				case err != nil:
					errs[w] = err
					cancel()
					return false
				default:
					h[i], dh[i] = hi, dhi
				}
				return true
			}
			for {
				lo := int(next.Add(int64(block))) - block
				if lo >= n {
					return
				}
				if err := ctx.Err(); err != nil {
					errs[w] = err
					return
				}
				hi := min(n, lo+block)
				for i := lo; i < hi; i += 2 {
					sa := complex(0, 2*math.Pi*freqsHz[i])
					if i+1 == hi {
						ha, dha, err := ev.Eval(sa)
						if !put(i, ha, dha, err) {
							return
						}
						continue
					}
					ha, dha, hb, dhb, errA, errB := ev.EvalPair(sa, complex(0, 2*math.Pi*freqsHz[i+1]))
					if !put(i, ha, dha, errA) || !put(i+1, hb, dhb, errB) {
						return
					}
				}
			}
		}(w)
	}
	wg.Wait()
	if err := firstError(ctx, errs); err != nil {
		return nil, err
	}
	if n > 0 && !slices.Contains(atPole, false) {
		return nil, fmt.Errorf("sweep: %w", singular[0])
	}
	under := underflowPoints(freqsHz, h, atPole, func(fHz float64) (complex128, bool) {
		v, _, err := base.Eval(complex(0, 2*math.Pi*fHz))
		return v, err == nil
	})
	r := newResponse(InputLabel(sys.Input), OutputLabel(sys.Output), freqsHz, h, dh, atPole, under)
	r.systems = []*mna.System{sys}
	r.marksHz = phaseMarks(opt.PhaseMarksHz)
	err := r.unwrapPhase(ctx, workers, func() pointEval { return sweeperEval(base.Clone()) })
	if err != nil {
		return nil, fmt.Errorf("sweep: phase: %w", err)
	}
	return r, nil
}

// sweepBlock is the largest number of consecutive points a worker of
// Sweep takes at a time; the context is checked before each block.
const sweepBlock = 32

// Sum is the response H₁ + H₂ + … of responses over the same frequencies
// from the same input (a crossover's acoustic sum), labelled output; its
// group delay is exact, from the sum of the derivatives. A point on a
// jω-axis pole of any term is on a pole of the sum. Its phase is
// unwrapped as Sweep's, solving the terms' systems between the points
// where a step needs it; it stops with ctx's error when ctx is cancelled.
func Sum(ctx context.Context, output string, rs ...*Response) (*Response, error) {
	if len(rs) == 0 {
		return nil, errors.New("sum of responses: no responses")
	}
	n := len(rs[0].FreqHz)
	h, dh, atPole, termUnder := make([]complex128, n), make([]complex128, n), make([]bool, n), make([]bool, n)
	for _, r := range rs {
		if r.Input != rs[0].Input {
			return nil, fmt.Errorf("sum of responses: %s is driven by %s, %s by %s; a sum needs one input", rs[0].Output, rs[0].Input, r.Output, r.Input)
		}
		if !slices.Equal(r.FreqHz, rs[0].FreqHz) || len(r.dh) != n {
			return nil, fmt.Errorf("sum of responses: %s and %s are not on the same frequencies", rs[0].Output, r.Output)
		}
		for i := range n {
			h[i] += r.H[i]
			dh[i] += r.dh[i]
			atPole[i] = atPole[i] || (i < len(r.AtPole) && r.AtPole[i])
			termUnder[i] = termUnder[i] || (i < len(r.Underflow) && r.Underflow[i])
		}
	}
	// The sum underflows where it is below the range and a term did (a
	// sum of exact zeros is exact).
	under := make([]bool, n)
	for i := range n {
		under[i] = termUnder[i] && !atPole[i] && cmplx.Abs(h[i]) < MinNormalMag
	}
	r := newResponse(rs[0].Input, output, rs[0].FreqHz, h, dh, atPole, under)
	var marks []float64
	for _, t := range rs {
		marks = append(marks, t.marksHz...)
	}
	r.marksHz = phaseMarks(marks)
	if len(rs) == 1 {
		r.PhaseDeg, r.PhaseUnresolved, r.systems = rs[0].PhaseDeg, rs[0].PhaseUnresolved, rs[0].systems
		return r, nil
	}
	// Between the points the sum is refined by solving every term's
	// systems there.
	for _, t := range rs {
		r.systems = append(r.systems, t.systems...)
	}
	newEval := func() pointEval {
		evs := make([]pointEval, len(r.systems))
		for i, sys := range r.systems {
			evs[i] = sweeperEval(mna.NewSweeper(sys))
		}
		return sumEval(evs)
	}
	if len(r.systems) == 0 {
		newEval = nil
	}
	if err := r.unwrapPhase(ctx, 1, newEval); err != nil {
		return nil, fmt.Errorf("sum of responses: phase: %w", err)
	}
	return r, nil
}

// firstError prefers a solver error over the cancellation it caused, and
// the parent's error over none.
func firstError(ctx context.Context, errs []error) error {
	var cancelled error
	for _, err := range errs {
		if err == nil {
			continue
		}
		if !errors.Is(err, context.Canceled) && !errors.Is(err, context.DeadlineExceeded) {
			return fmt.Errorf("sweep: %w", err)
		}
		cancelled = err
	}
	if cancelled != nil {
		return fmt.Errorf("sweep: %w", context.Cause(ctx))
	}
	return nil
}

func newResponse(input, output string, freqsHz []float64, h, dh []complex128, atPole, under []bool) *Response {
	n := len(freqsHz)
	r := &Response{
		FreqHz:      append([]float64(nil), freqsHz...),
		H:           h,
		Mag:         make([]float64, n),
		MagDB:       make([]float64, n),
		PhaseDeg:    make([]float64, n),
		GroupDelayS: make([]float64, n),
		Input:       input,
		Output:      output,
		AtPole:      atPole,
		Underflow:   under,
		dh:          dh,
	}
	for i, v := range h {
		r.Mag[i] = cmplx.Abs(v)
		r.MagDB[i] = 20 * math.Log10(r.Mag[i])
		r.PhaseDeg[i] = cmplx.Phase(v) * 180 / math.Pi
		if v == 0 {
			r.GroupDelayS[i] = math.NaN()
		} else {
			r.GroupDelayS[i] = -real(dh[i] / v)
		}
	}
	for i, p := range atPole {
		if p {
			r.H[i] = cmplx.Inf()
			r.Mag[i], r.MagDB[i], r.PhaseDeg[i], r.GroupDelayS[i] = math.Inf(1), math.Inf(1), math.NaN(), math.NaN()
		}
	}
	for i, u := range under {
		if u {
			r.Mag[i], r.MagDB[i], r.PhaseDeg[i], r.GroupDelayS[i] = 0, math.NaN(), math.NaN(), math.NaN()
		}
	}
	return r
}

// UnwrapDeg unwraps phases in degrees in place: each value is shifted by a
// multiple of 360° to lie within 180° of its predecessor (NaN values are
// skipped). The first value is left as it is.
func UnwrapDeg(ph []float64) {
	prev := math.NaN()
	for i := range ph {
		if math.IsNaN(ph[i]) {
			continue // a point on a pole: unwrap across it
		}
		if !math.IsNaN(prev) {
			ph[i] -= 360 * math.Round((ph[i]-prev)/360)
		}
		prev = ph[i]
	}
}

// WrapDeg returns a phase in degrees wrapped to (−180, 180].
func WrapDeg(p float64) float64 {
	p = math.Mod(p, 360)
	switch {
	case p > 180:
		p -= 360
	case p <= -180:
		p += 360
	}
	return p
}

// InputLabel names an input: the source name, or "inject:NODE".
func InputLabel(in mna.Input) string {
	if in.Inject != "" {
		return "inject:" + in.Inject
	}
	return in.Source
}

// OutputLabel names an output: "NODE", "NODE-REF" for a node pair
// (v(NODE) − v(REF); node names hold no "-"), or "i(PART)" for a part
// current.
func OutputLabel(out mna.Output) string {
	switch {
	case out.Kind == mna.PartCurrent:
		return "i(" + out.Part + ")"
	case out.Ref == "" || out.Ref == "gnd" || out.Ref == "0":
		return out.Node
	}
	return out.Node + "-" + out.Ref
}
