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

	"nodal/mna"
)

// Response is the frequency response H(j2πf) of one System over a list of
// frequencies, all slices of the same length as FreqHz and in its order.
//
// H is per unit of the input (the transfer function, V/V, A/V, Ω … as the
// input and output kinds make it); multiply by the System's
// SourceAmplitude for the phasor the file's drive gives. Mag = |H|;
// MagDB = 20·log10|H| (−Inf where H = 0). PhaseDeg is arg H in degrees,
// unwrapped along the sweep: the first point lies in (−180, 180], each next
// one differs from its predecessor by at most 180°. GroupDelayS is
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

	dh []complex128 // dH/ds at s = j2πf, for Sum's group delay
}

// PoleNote is the reason given for a point of a sweep that sits on a pole.
const PoleNote = "on a pole on the jω axis: the gain is unbounded"

// Sweep evaluates sys at every frequency of freqsHz (Hz, each ≥ 0) on
// workers goroutines (workers ≤ 0 means runtime.NumCPU()). Each point is
// computed the same way whatever the worker count, so the result does not
// depend on it. It stops early with ctx's error when ctx is cancelled. A
// point where the system is singular is a pole on the jω axis (see
// Response.AtPole); only when every point is singular does Sweep fail,
// with the *mna.SingularError of the first.
func Sweep(ctx context.Context, sys *mna.System, freqsHz []float64, workers int) (*Response, error) {
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
	chunk := (n + workers - 1) / workers
	for w := 0; w < workers; w++ {
		lo, hi := w*chunk, min(n, (w+1)*chunk)
		wg.Add(1)
		go func(w, lo, hi int) {
			defer wg.Done()
			ev := mna.NewSweeper(sys)
			for i := lo; i < hi; i++ {
				if i%32 == 0 {
					if err := ctx.Err(); err != nil {
						errs[w] = err
						return
					}
				}
				var err error
				h[i], dh[i], err = ev.Eval(complex(0, 2*math.Pi*freqsHz[i]))
				var se *mna.SingularError
				if errors.As(err, &se) {
					h[i], dh[i], atPole[i], singular[i] = cmplx.Inf(), complex(math.NaN(), 0), true, err
					continue
				}
				if err != nil {
					errs[w] = err
					cancel()
					return
				}
			}
		}(w, lo, hi)
	}
	wg.Wait()
	if err := firstError(ctx, errs); err != nil {
		return nil, err
	}
	if n > 0 && !slices.Contains(atPole, false) {
		return nil, fmt.Errorf("sweep: %w", singular[0])
	}
	r := newResponse(InputLabel(sys.Input), OutputLabel(sys.Output), freqsHz, h, dh, atPole)
	return r, nil
}

// Sum is the response H₁ + H₂ + … of responses over the same frequencies
// from the same input (a crossover's acoustic sum), labelled output; its
// group delay is exact, from the sum of the derivatives. A point on a
// jω-axis pole of any term is on a pole of the sum.
func Sum(output string, rs ...*Response) (*Response, error) {
	if len(rs) == 0 {
		return nil, errors.New("sum of responses: no responses")
	}
	n := len(rs[0].FreqHz)
	h, dh, atPole := make([]complex128, n), make([]complex128, n), make([]bool, n)
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
		}
	}
	return newResponse(rs[0].Input, output, rs[0].FreqHz, h, dh, atPole), nil
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

func newResponse(input, output string, freqsHz []float64, h, dh []complex128, atPole []bool) *Response {
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
	UnwrapDeg(r.PhaseDeg)
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
