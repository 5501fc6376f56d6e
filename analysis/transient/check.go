package transient

import (
	"context"
	"errors"
	"fmt"
	"math"

	"nodal/analysis/timeresp"
	"nodal/mna"
)

// DefaultTol is the largest difference allowed between a response's
// samples and the integration of the full system, relative to the
// response's scale (the larger of |final value| and the largest |y| of
// the full system at the checked times).
const DefaultTol = 1e-4

// DefaultMaxChecked is the largest number of sample times checked; a
// longer response is checked at every k-th sample and at its last.
const DefaultMaxChecked = 50

// integrationShare is the part of the tolerance the integration's own
// error estimate may take: the comparison means something only when the
// integration is that much more accurate than what it checks.
const integrationShare = 0.1

// maxSteps bounds the steps of the finest integration.
const maxSteps = 40000

// Options are the tolerance and extent of Check.
type Options struct {
	// Tol is the relative tolerance (see DefaultTol); 0 means DefaultTol.
	Tol float64
	// MaxChecked is the largest number of sample times compared; 0
	// means DefaultMaxChecked.
	MaxChecked int
}

// Result is the comparison of a response's samples with the full
// system's integration.
//
// Invariants: len(TimesS) == len(Full) == len(Samples) == Checked;
// MaxDiff and MaxIntErr are relative to Scale; Agree ⇔ MaxDiff ≤ Tol.
type Result struct {
	// TimesS are the checked sample times (s), Samples the response's
	// values there, Full the integration's (extrapolated).
	TimesS, Samples, Full []float64
	Checked               int
	// Scale is max(|final value|, largest |y| of the full system at the
	// checked times).
	Scale float64
	// MaxDiff is the largest |sample − full| over the checked times
	// divided by Scale, at AtS (s).
	MaxDiff, AtS float64
	// MaxIntErr is the largest error estimate of the integration divided
	// by Scale; it is at most integrationShare·Tol.
	MaxIntErr float64
	// Tol is the tolerance the samples were held to (relative to Scale).
	Tol float64
	// Steps is the number of steps of the finest integration.
	Steps int
	// Agree reports MaxDiff ≤ Tol.
	Agree bool
	errs  []float64 // the integration's error estimate at each time
}

// ErrDisagree means the samples differ from the full system's
// integration by more than the tolerance.
var ErrDisagree = errors.New("the samples disagree with the time-domain integration of the full circuit")

// ErrNotResolved means the integration could not be made accurate
// enough to judge the samples within the step budget.
var ErrNotResolved = errors.New("the time-domain integration of the full circuit could not be made accurate enough to check the samples")

// Check integrates the full system sys (TR-BDF2 with Richardson
// extrapolation, see the package doc) for the kind of r (a unit step or
// a unit impulse, its Dirac term excluded) and compares r's samples at
// up to opt.MaxChecked of their times t > 0 (evenly chosen, the last
// included) and at t = 0 when r has a sample there (y(0⁺)). It refines
// the integration (halving every step) until its error estimate is
// within integrationShare of the tolerance. The error
// is ErrDisagree, with the figures, when a sample is off by more than the
// tolerance, and ErrNotResolved when the integration cannot be resolved
// within maxSteps; the Result is returned with either.
func Check(ctx context.Context, sys *mna.System, r *timeresp.TimeResponse, opt Options) (*Result, error) {
	if opt.Tol == 0 {
		opt.Tol = DefaultTol
	}
	if opt.MaxChecked == 0 {
		opt.MaxChecked = DefaultMaxChecked
	}
	if !(opt.Tol > 0) || opt.MaxChecked < 1 {
		return nil, errors.New("time-domain check: the tolerance and the number of checked times must be positive")
	}
	if r == nil || len(r.Points) < 2 {
		return nil, errors.New("time-domain check: no samples to check")
	}
	res := &Result{Tol: opt.Tol}
	pts := r.Points
	atZero := pts[0].TS == 0
	if atZero {
		pts = pts[1:]
	}
	k := (len(pts) + opt.MaxChecked - 1) / opt.MaxChecked
	var idx []int
	for i := len(pts) - 1; i >= 0; i -= k {
		idx = append([]int{i}, idx...)
	}
	times := make([]float64, len(idx))
	for j, i := range idx {
		times[j] = pts[i].TS
	}
	if err := checkTimes(times); err != nil {
		return nil, err
	}
	impulse := r.Kind == "impulse"
	it := newIntegrator(sys, impulse)
	sub := max(gradeRepeat, (400+len(times)-1)/len(times))
	steps := mesh(times, sub, impulse)
	var coarse *coarseRun
	for {
		in, fine, err := it.richardson(ctx, times, steps, coarse)
		if err != nil {
			return nil, err
		}
		res.fill(in, r, atZero)
		res.MaxIntErr = 0
		for _, e := range res.errs {
			res.MaxIntErr = math.Max(res.MaxIntErr, e/res.Scale)
		}
		if res.MaxIntErr <= integrationShare*opt.Tol {
			break
		}
		if 2*in.Steps > maxSteps {
			res.compare()
			return res, fmt.Errorf("%w: its error estimate is %.2g of the response's scale after %d steps, the samples must be checked to %.2g", ErrNotResolved, res.MaxIntErr, in.Steps, opt.Tol)
		}
		steps, coarse = halved(steps), fine
	}
	res.compare()
	if !res.Agree {
		return res, fmt.Errorf("%w: at t = %.4g s the sample is %.6g, the full circuit gives %.6g, off by %.2g of the response's scale %.4g (tolerance %.2g)",
			ErrDisagree, res.AtS, res.sampleAt(res.AtS), res.fullAt(res.AtS), res.MaxDiff, res.Scale, opt.Tol)
	}
	return res, nil
}

// fill sets the times, samples, full values and their error estimates
// (t = 0 first when r has it: y(0⁺)), Checked, Steps and Scale: the
// larger of |final value| and the largest |y| of the full system.
func (res *Result) fill(in *Integration, r *timeresp.TimeResponse, atZero bool) {
	res.TimesS, res.Samples, res.Full, res.errs = nil, nil, nil, nil
	if atZero {
		res.TimesS = append(res.TimesS, 0)
		res.Samples = append(res.Samples, r.Points[0].Y)
		res.Full = append(res.Full, in.Y0)
		res.errs = append(res.errs, in.Err0)
	}
	res.TimesS = append(res.TimesS, in.TimesS...)
	res.Full = append(res.Full, in.Y...)
	res.errs = append(res.errs, in.ErrEst...)
	for _, t := range in.TimesS {
		res.Samples = append(res.Samples, sampleAt(r, t))
	}
	res.Checked, res.Steps = len(res.TimesS), in.Steps
	res.Scale = 0
	for _, y := range res.Full {
		res.Scale = math.Max(res.Scale, math.Abs(y))
	}
	if r.Metrics.Final != nil {
		res.Scale = math.Max(res.Scale, math.Abs(*r.Metrics.Final))
	}
	if res.Scale == 0 || math.IsNaN(res.Scale) {
		res.Scale = math.SmallestNonzeroFloat64
	}
}

// sampleAt is r's sample at time t (one of its sample times).
func sampleAt(r *timeresp.TimeResponse, t float64) float64 {
	for _, p := range r.Points {
		if p.TS == t {
			return p.Y
		}
	}
	return math.NaN()
}

// compare sets MaxDiff, AtS and Agree.
func (res *Result) compare() {
	res.MaxDiff, res.AtS = 0, 0
	for i := range res.TimesS {
		d := math.Abs(res.Samples[i]-res.Full[i]) / res.Scale
		if !(d <= res.MaxDiff) { // NaN counts as the worst
			res.MaxDiff, res.AtS = d, res.TimesS[i]
			if math.IsNaN(d) {
				res.MaxDiff = math.Inf(1)
			}
		}
	}
	res.Agree = res.MaxDiff <= res.Tol
}

func (res *Result) sampleAt(t float64) float64 {
	for i, ti := range res.TimesS {
		if ti == t {
			return res.Samples[i]
		}
	}
	return math.NaN()
}

func (res *Result) fullAt(t float64) float64 {
	for i, ti := range res.TimesS {
		if ti == t {
			return res.Full[i]
		}
	}
	return math.NaN()
}
