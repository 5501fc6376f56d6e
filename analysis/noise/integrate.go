package noise

import (
	"context"
	"fmt"
	"math"
	"sort"
)

// Integration method: adaptive Simpson quadrature in u = ln f of
// S(f)·f du, started on a grid of StartPerDecade intervals per decade,
// every interval halved until its Richardson error estimate is below
// RelTol of the whole integral's first estimate times its share of the
// band (in ln f). The output mean-square, the input-referred mean-square
// and |H|² are all held to that tolerance; the per-source contributions
// share the same nodes.
const (
	// StartPerDecade is the number of intervals per decade the adaptive
	// integration starts from.
	StartPerDecade = 50
	// RelTol is the target relative error of each integral: well below
	// the promised 0.1 % of the total.
	RelTol = 1e-5
	// maxEvaluations bounds the work of one integration.
	maxEvaluations = 400_000
	maxDepth       = 40
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
// input-referred PSD·f, [2] |H|²·f, then each source's output PSD·f; and
// the plain output PSD and |H|².
type sample struct {
	v      []float64
	outPSD float64
	gain2  float64
}

type integrator struct {
	ctx     context.Context
	a       *Analyzer
	n       int // components
	evals   int
	tol     []float64 // absolute tolerance per unit of u, per checked component
	maxS    float64
	maxG2   float64
	zero    bool
	err     float64
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
		return sample{}, fmt.Errorf("noise: integration did not converge within %d frequencies", maxEvaluations)
	}
	f := math.Exp(u)
	psd, g, err := it.a.At(f, it.scratch)
	if err != nil {
		return sample{}, err
	}
	s := sample{v: make([]float64, it.n), outPSD: psd}
	s.v[0] = psd * f
	if it.a.HasInput() {
		s.gain2 = g * g
		s.v[2] = s.gain2 * f
		if g == 0 {
			it.zero = true
		} else {
			s.v[1] = psd / s.gain2 * f
		}
	}
	for i, p := range it.scratch {
		s.v[3+i] = p * f
	}
	it.maxS = math.Max(it.maxS, psd)
	it.maxG2 = math.Max(it.maxG2, s.gain2)
	return s, nil
}

// simpson returns the Simpson estimate over [u0, u2] of width h.
func simpson(h float64, a, m, b sample, out []float64) {
	for i := range out {
		out[i] = h / 6 * (a.v[i] + 4*m.v[i] + b.v[i])
	}
}

// segment integrates [u0, u0+h] adaptively, adding into sum.
func (it *integrator) segment(u0, h float64, a, m, b sample, whole []float64, depth int, sum []float64) error {
	lm, err := it.eval(u0 + h/4)
	if err != nil {
		return err
	}
	rm, err := it.eval(u0 + 3*h/4)
	if err != nil {
		return err
	}
	left, right := make([]float64, it.n), make([]float64, it.n)
	simpson(h/2, a, lm, m, left)
	simpson(h/2, m, rm, b, right)
	ok := true
	for i := 0; i < 3; i++ {
		if d := math.Abs(left[i] + right[i] - whole[i]); d/15 > it.tol[i]*h {
			ok = false
		}
	}
	if ok || depth >= maxDepth {
		if !ok {
			return fmt.Errorf("noise: integration did not converge near %.6g Hz", math.Exp(u0))
		}
		for i := range sum {
			d := left[i] + right[i] - whole[i]
			sum[i] += left[i] + right[i] + d/15
			if i == 0 {
				it.err += math.Abs(d) / 15
			}
		}
		return nil
	}
	if err := it.segment(u0, h/2, a, lm, m, left, depth+1, sum); err != nil {
		return err
	}
	return it.segment(u0+h/2, h/2, m, rm, b, right, depth+1, sum)
}

// Integrate integrates the noise from fromHz to toHz (0 < fromHz < toHz,
// finite) by the adaptive method described at StartPerDecade.
func (a *Analyzer) Integrate(ctx context.Context, fromHz, toHz float64) (*Integrated, error) {
	if !(fromHz > 0) || !(toHz > fromHz) || math.IsInf(toHz, 0) {
		return nil, fmt.Errorf("noise: band %g..%g Hz; want 0 < F1 < F2, finite", fromHz, toHz)
	}
	it := &integrator{ctx: ctx, a: a, n: 3 + len(a.Sources), scratch: make([]float64, len(a.Sources))}
	u0, u1 := math.Log(fromHz), math.Log(toHz)
	segs := max(4, int(math.Ceil((u1-u0)/math.Ln10*StartPerDecade)))
	h := (u1 - u0) / float64(segs)
	// First pass: the samples at the ends and midpoints of the start grid
	// and the plain Simpson estimate, which sets the tolerance.
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
	first := make([]float64, it.n)
	for i := range wholes {
		wholes[i] = make([]float64, it.n)
		simpson(h, ends[i], mids[i], ends[i+1], wholes[i])
		for j, v := range wholes[i] {
			first[j] += v
		}
	}
	it.tol = make([]float64, 3)
	for i := range it.tol {
		it.tol[i] = RelTol * math.Abs(first[i]) / (u1 - u0)
	}
	if it.zero {
		it.tol[1] = math.Inf(1) // input-referred noise is not defined
	}
	sum := make([]float64, it.n)
	for i := 0; i < segs; i++ {
		if err := it.segment(u0+float64(i)*h, h, ends[i], mids[i], ends[i+1], wholes[i], 0, sum); err != nil {
			return nil, err
		}
	}
	r := &Integrated{FromHz: fromHz, ToHz: toHz, OutRMS: math.Sqrt(sum[0]), InRMS: math.NaN(),
		Evaluations: it.evals}
	if sum[0] > 0 {
		r.RelErrorEstimate = it.err / sum[0]
	}
	if a.HasInput() {
		if !it.zero {
			r.InRMS = math.Sqrt(sum[1])
		}
		if it.maxG2 > 0 {
			r.ENBWHz, r.ENBWOfGain = sum[2]/it.maxG2, true
		}
	}
	if !r.ENBWOfGain && it.maxS > 0 {
		r.ENBWHz = sum[0] / it.maxS
	}
	for i, s := range a.Sources {
		c := Contribution{Source: s.Name, RMSOut: math.Sqrt(math.Max(sum[3+i], 0))}
		if sum[0] > 0 {
			c.Fraction = math.Max(sum[3+i], 0) / sum[0]
		}
		r.Contributions = append(r.Contributions, c)
	}
	sort.SliceStable(r.Contributions, func(i, j int) bool { return r.Contributions[i].RMSOut > r.Contributions[j].RMSOut })
	return r, nil
}
