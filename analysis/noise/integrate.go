package noise

import (
	"container/heap"
	"context"
	"fmt"
	"math"
	"sort"
)

// Integration method: globally adaptive Simpson quadrature in u = ln f of
// S(f)·f du. The band starts as StartPerDecade intervals per decade, each
// with a Simpson estimate on its halves and the Richardson error estimate
// of that; the interval with the largest error is halved until the summed
// error estimates are below RelTol of the current totals. The output
// mean-square, the input-referred mean-square and |H|² are all held to
// that tolerance; the per-source contributions share the same nodes.
const (
	// StartPerDecade is the number of intervals per decade the adaptive
	// integration starts from.
	StartPerDecade = 50
	// RelTol is the target relative error of each integral: well below
	// the promised 0.1 % of the total.
	RelTol = 1e-5
	// maxEvaluations bounds the work of one integration.
	maxEvaluations = 200_000
)

// Contribution is one source's share of the integrated output noise.
type Contribution struct {
	Source string  // Source.Name
	RMSOut float64 // its output RMS over the band, OutUnit
	// Fraction is its share of the output mean-square (the fractions of
	// every source add to 1).
	Fraction float64
}

// Integrated is the noise integrated over a band.
type Integrated struct {
	FromHz, ToHz float64
	// OutRMS is the output RMS noise over the band, OutUnit.
	OutRMS float64
	// InRMS is the input-referred RMS, √∫ S_out/|H|² df, InUnit; NaN
	// without input or when |H| vanishes in the band.
	InRMS float64
	// ENBWHz is the equivalent noise bandwidth ∫|H|² df / max|H|² over the
	// band (Hz); without input it is that of the output PSD,
	// ∫ S_out df / max S_out. ENBWOfGain says which.
	ENBWHz     float64
	ENBWOfGain bool
	// Contributions lists every source, largest first.
	Contributions []Contribution
	// RelErrorEstimate is the estimated relative error of the output
	// mean-square (sum of the Richardson estimates).
	RelErrorEstimate float64
	// Evaluations is the number of frequencies evaluated.
	Evaluations int
}

// sample holds the integrands at one node, v: [0] output PSD·f, [1]
// input-referred PSD·f, [2] |H|²·f, then each source's output PSD·f.
type sample struct {
	v []float64
}

// checked is the number of integrals held to RelTol (output, input-referred,
// |H|²); the contributions follow them in sample.v.
const checked = 3

type integrator struct {
	ctx     context.Context
	a       *Analyzer
	n       int // integrands
	evals   int
	maxS    float64 // largest output PSD seen
	maxG2   float64 // largest |H|² seen
	zero    bool    // |H| = 0 somewhere: no input-referred noise
	scratch []float64
}

func (it *integrator) eval(u float64) (sample, error) {
	if it.evals%64 == 0 {
		if err := it.ctx.Err(); err != nil {
			return sample{}, err
		}
	}
	it.evals++
	if it.evals > maxEvaluations {
		return sample{}, fmt.Errorf("noise: integration did not reach 0.1 %% within %d frequencies (a response too sharp for it)", maxEvaluations)
	}
	f := math.Exp(u)
	psd, g, err := it.a.At(f, it.scratch)
	if err != nil {
		return sample{}, err
	}
	s := sample{v: make([]float64, it.n)}
	s.v[0] = psd * f
	gain2 := 0.0
	if it.a.HasInput() {
		gain2 = g * g
		s.v[2] = gain2 * f
		if g == 0 {
			it.zero = true
		} else {
			s.v[1] = psd / gain2 * f
		}
	}
	for i, p := range it.scratch {
		s.v[checked+i] = p * f
	}
	it.maxS = math.Max(it.maxS, psd)
	it.maxG2 = math.Max(it.maxG2, gain2)
	return s, nil
}

// interval is one interval [u0, u0+h] of ln f with its samples at the
// ends, the quarter points and the middle, the Richardson-corrected
// Simpson estimate of every integrand over it and the error estimates.
type interval struct {
	u0, h           float64
	a, lq, m, rq, b sample
	left, right     []float64 // Simpson over each half
	est, err        []float64 // corrected estimate and |error| per integrand
	key             float64   // largest scaled error of the checked integrals
}

// simpson returns the Simpson estimates over an interval of width h.
func simpson(h float64, a, m, b sample, out []float64) {
	for i := range out {
		out[i] = h / 6 * (a.v[i] + 4*m.v[i] + b.v[i])
	}
}

// newInterval evaluates the quarter points of [u0, u0+h] and its
// estimates; whole is the Simpson estimate over the interval from a, m, b.
func (it *integrator) newInterval(u0, h float64, a, m, b sample, whole []float64, scale []float64) (*interval, error) {
	lq, err := it.eval(u0 + h/4)
	if err != nil {
		return nil, err
	}
	rq, err := it.eval(u0 + 3*h/4)
	if err != nil {
		return nil, err
	}
	iv := &interval{u0: u0, h: h, a: a, lq: lq, m: m, rq: rq, b: b,
		left: make([]float64, it.n), right: make([]float64, it.n), est: make([]float64, it.n), err: make([]float64, it.n)}
	simpson(h/2, a, lq, m, iv.left)
	simpson(h/2, m, rq, b, iv.right)
	for i := range iv.est {
		d := iv.left[i] + iv.right[i] - whole[i]
		iv.est[i] = iv.left[i] + iv.right[i] + d/15
		iv.err[i] = math.Abs(d) / 15
	}
	for i := 0; i < checked; i++ {
		if scale[i] > 0 {
			iv.key = math.Max(iv.key, iv.err[i]/scale[i])
		}
	}
	return iv, nil
}

// intervals is a max-heap of intervals by key.
type intervals []*interval

func (q intervals) Len() int           { return len(q) }
func (q intervals) Less(i, j int) bool { return q[i].key > q[j].key }
func (q intervals) Swap(i, j int)      { q[i], q[j] = q[j], q[i] }
func (q *intervals) Push(x any)        { *q = append(*q, x.(*interval)) }
func (q *intervals) Pop() any {
	old := *q
	x := old[len(old)-1]
	*q = old[:len(old)-1]
	return x
}

// Integrate integrates the noise from fromHz to toHz (0 < fromHz < toHz,
// finite) by the method described at StartPerDecade. An integral that
// cannot be brought to RelTol within the evaluation budget is an error,
// never a number.
func (a *Analyzer) Integrate(ctx context.Context, fromHz, toHz float64) (*Integrated, error) {
	if !(fromHz > 0) || !(toHz > fromHz) || math.IsInf(toHz, 0) {
		return nil, fmt.Errorf("noise: band %g..%g Hz; want 0 < F1 < F2, finite", fromHz, toHz)
	}
	it := &integrator{ctx: ctx, a: a, n: checked + len(a.Sources), scratch: make([]float64, len(a.Sources))}
	u0, u1 := math.Log(fromHz), math.Log(toHz)
	segs := max(4, int(math.Ceil((u1-u0)/math.Ln10*StartPerDecade)))
	h := (u1 - u0) / float64(segs)
	// The start grid: ends and midpoints, and its Simpson estimate, which
	// scales the errors that order the refinement.
	ends := make([]sample, segs+1)
	mids := make([]sample, segs)
	var err error
	for i := 0; i <= segs; i++ {
		if ends[i], err = it.eval(u0 + float64(i)*h); err != nil {
			return nil, err
		}
		if i < segs {
			if mids[i], err = it.eval(u0 + (float64(i)+0.5)*h); err != nil {
				return nil, err
			}
		}
	}
	wholes := make([][]float64, segs)
	scale := make([]float64, it.n)
	for i := range wholes {
		wholes[i] = make([]float64, it.n)
		simpson(h, ends[i], mids[i], ends[i+1], wholes[i])
		for j, v := range wholes[i] {
			scale[j] += math.Abs(v)
		}
	}
	q := make(intervals, 0, 2*segs)
	sum, errs := make([]float64, it.n), make([]float64, it.n)
	add := func(iv *interval, sign float64) {
		for i := range sum {
			sum[i] += sign * iv.est[i]
			errs[i] += sign * iv.err[i]
		}
	}
	for i := 0; i < segs; i++ {
		iv, err := it.newInterval(u0+float64(i)*h, h, ends[i], mids[i], ends[i+1], wholes[i], scale)
		if err != nil {
			return nil, err
		}
		heap.Push(&q, iv)
		add(iv, 1)
	}
	done := func() bool {
		for i := 0; i < checked; i++ {
			if i == 1 && it.zero {
				continue // input-referred noise is not defined
			}
			if errs[i] > RelTol*math.Abs(sum[i]) {
				return false
			}
		}
		return true
	}
	for !done() {
		iv := heap.Pop(&q).(*interval)
		add(iv, -1)
		l, err := it.newInterval(iv.u0, iv.h/2, iv.a, iv.lq, iv.m, iv.left, scale)
		if err != nil {
			return nil, err
		}
		r, err := it.newInterval(iv.u0+iv.h/2, iv.h/2, iv.m, iv.rq, iv.b, iv.right, scale)
		if err != nil {
			return nil, err
		}
		heap.Push(&q, l)
		heap.Push(&q, r)
		add(l, 1)
		add(r, 1)
	}
	r := &Integrated{FromHz: fromHz, ToHz: toHz, OutRMS: math.Sqrt(math.Max(sum[0], 0)), InRMS: math.NaN(),
		Evaluations: it.evals}
	if sum[0] > 0 {
		r.RelErrorEstimate = errs[0] / sum[0]
	}
	if a.HasInput() {
		if !it.zero {
			r.InRMS = math.Sqrt(math.Max(sum[1], 0))
		}
		if it.maxG2 > 0 {
			r.ENBWHz, r.ENBWOfGain = sum[2]/it.maxG2, true
		}
	}
	if !r.ENBWOfGain && it.maxS > 0 {
		r.ENBWHz = sum[0] / it.maxS
	}
	for i, s := range a.Sources {
		c := Contribution{Source: s.Name, RMSOut: math.Sqrt(math.Max(sum[checked+i], 0))}
		if sum[0] > 0 {
			c.Fraction = math.Max(sum[checked+i], 0) / sum[0]
		}
		r.Contributions = append(r.Contributions, c)
	}
	sort.SliceStable(r.Contributions, func(i, j int) bool { return r.Contributions[i].RMSOut > r.Contributions[j].RMSOut })
	return r, nil
}
