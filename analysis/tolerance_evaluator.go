package analysis

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"strings"

	"gonum.org/v1/gonum/mat"

	"nodal/mna"
	"nodal/netlist"
)

// Evaluator computes the response metrics of one circuit. It is what the
// tolerance engines (MonteCarlo, WorstCase, Sensitivity) vary a circuit
// against, so they do not depend on how a metric is computed.
//
// Metrics names the values Eval returns, in order, spelt as the user wrote
// them ("gain@1kHz", "f3db"); the unit of each follows from the name
// (netlist.MetricUnit). Eval must be safe for concurrent use by many
// goroutines and must not modify c. A run whose Eval fails (a singular
// draw, no −3 dB point) is counted as failed, not fatal.
type Evaluator interface {
	Metrics() []string
	Eval(c *netlist.Circuit) ([]float64, error)
}

// DefaultMetricGridPoints is the number of points of the logarithmic grid
// a MetricEvaluator sweeps for f3db, peak and fpeak.
const DefaultMetricGridPoints = 200

// MetricEvaluator is the standard Evaluator: for each circuit it builds the
// MNA system for one input and output and evaluates the named metrics
// from H(j2πf):
//
//   - gain@F: 20·log10|H(j2πF)| in dB.
//   - phase@F: arg H(j2πF) in degrees, on the branch (multiple of 360°)
//     closest to the nominal circuit's phase at F, so that runs near ±180°
//     do not jump by a turn.
//   - dc: 20·log10|H(0)| in dB (an error when H(0) = 0 or Y(0) is singular).
//   - peak, fpeak: the largest |H| in dB and its frequency in Hz, found on
//     the grid and refined to the root of d|H|²/dω (exact, from dH/ds);
//     a maximum at an end of the grid is reported at that end.
//   - f3db: the first frequency, going up the grid, where |H| crosses
//     ref/√2, refined by the Illinois method on log f. ref is the
//     low-frequency gain |H(0)| (|H| at the lowest grid frequency when
//     H(0) = 0 or Y(0) is singular) when that lies within 3 dB of the peak
//     (low-pass, band-stop, flat); otherwise (band-pass, high-pass) ref is
//     the peak (for a peak at the top of the grid, the largest |H| up to
//     four decades above it: the high-frequency gain of a high-pass) and
//     the crossing is the first rising one.
//   - f0, q: of the dominant complex pole pair, the one nearest the jω axis
//     (smallest |Re p|): f0 = |p|/2π Hz, Q = |p|/(2|Re p|). Two real poles
//     alone give f0 = √(p1·p2)/2π and Q = √(p1·p2)/|p1 + p2|. Poles are the
//     finite eigenvalues of the pencil (G, C), including any mode the
//     output does not see.
//
// The grid is logarithmic over DefaultRange of the nominal circuit with
// GridPoints points, fixed at construction so every run shares it.
//
// Invariants: len(names) == len(specs); gridHz is ascending and non-empty.
type MetricEvaluator struct {
	in     mna.Input
	out    mna.Output
	names  []string
	specs  []metricSpec
	gridHz []float64
	// phaseRefDeg[i] is the nominal phase for a phase@F metric i.
	phaseRefDeg []float64
}

// metricKind enumerates the metrics a MetricEvaluator computes.
type metricKind int

const (
	kindGain metricKind = iota
	kindPhase
	kindDC
	kindF3dB
	kindPeak
	kindFPeak
	kindF0
	kindQ
)

var metricKinds = map[string]metricKind{
	"gain": kindGain, "phase": kindPhase, "dc": kindDC, "f3db": kindF3dB,
	"peak": kindPeak, "fpeak": kindFPeak, "f0": kindF0, "q": kindQ,
}

type metricSpec struct {
	kind   metricKind
	freqHz float64 // gain@F, phase@F
}

// NewMetricEvaluator checks the metric names and the probe against the
// nominal circuit and fixes the sweep grid (gridPoints ≤ 0 means
// DefaultMetricGridPoints). An unknown metric is an error listing the
// valid ones; so is a metric the nominal circuit cannot give.
func NewMetricEvaluator(nominal *netlist.Circuit, in mna.Input, out mna.Output, metrics []string, gridPoints int) (*MetricEvaluator, error) {
	if len(metrics) == 0 {
		return nil, fmt.Errorf("no metric given (metrics: %s)", strings.Join(netlist.MetricNames(), ", "))
	}
	if gridPoints <= 0 {
		gridPoints = DefaultMetricGridPoints
	}
	e := &MetricEvaluator{in: in, out: out, names: append([]string(nil), metrics...)}
	for _, m := range metrics {
		name, f, err := netlist.ParseMetric(m)
		if err != nil {
			return nil, err
		}
		e.specs = append(e.specs, metricSpec{kind: metricKinds[name], freqHz: f})
	}
	lo, hi := DefaultRange(nominal)
	perDecade := max(1, int(math.Round(float64(gridPoints-1)/math.Log10(hi/lo))))
	e.gridHz = LogGrid(lo, hi, perDecade)
	if len(e.gridHz) == 0 {
		return nil, fmt.Errorf("metric grid: bad range %g..%g Hz", lo, hi)
	}
	e.phaseRefDeg = make([]float64, len(metrics))
	vals, err := e.Eval(nominal)
	if err != nil {
		return nil, fmt.Errorf("nominal circuit: %w", err)
	}
	for i, s := range e.specs {
		if s.kind == kindPhase {
			e.phaseRefDeg[i] = vals[i]
		}
	}
	return e, nil
}

// Metrics returns the metric names as given, in order.
func (e *MetricEvaluator) Metrics() []string { return e.names }

// GridHz returns the sweep grid (Hz) used for f3db, peak and fpeak.
func (e *MetricEvaluator) GridHz() []float64 { return e.gridHz }

// Eval builds the MNA system of c and returns one value per metric.
func (e *MetricEvaluator) Eval(c *netlist.Circuit) ([]float64, error) {
	sys, err := mna.Build(c, e.in, e.out)
	if err != nil {
		return nil, err
	}
	ev := &metricRun{e: e, sys: sys, sw: mna.NewSweeper(sys)}
	out := make([]float64, len(e.specs))
	for i, s := range e.specs {
		v, err := ev.value(i, s)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", e.names[i], err)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s is %v", e.names[i], v)
		}
		out[i] = v
	}
	return out, nil
}

// metricRun evaluates the metrics of one system, sharing the sweep and the
// poles between the metrics that need them.
type metricRun struct {
	e   *MetricEvaluator
	sys *mna.System
	sw  *mna.Sweeper

	mag2 []float64 // |H|² on the grid, nil until swept

	peakDone       bool
	peakDB, fpeak  float64
	polesDone      bool
	f0Hz, q        float64
	polesErr       error
	peakErr, f3Err error
}

func omegaOf(fHz float64) float64 { return 2 * math.Pi * fHz }

func (r *metricRun) h(fHz float64) (complex128, complex128, error) {
	return r.sw.Eval(complex(0, omegaOf(fHz)))
}

func dB(h complex128) float64 { return 20 * math.Log10(cmplx.Abs(h)) }

func (r *metricRun) value(i int, s metricSpec) (float64, error) {
	switch s.kind {
	case kindGain:
		h, _, err := r.h(s.freqHz)
		return dB(h), err
	case kindPhase:
		h, _, err := r.h(s.freqHz)
		p := cmplx.Phase(h) * 180 / math.Pi
		ref := r.e.phaseRefDeg[i]
		return p - 360*math.Round((p-ref)/360), err
	case kindDC:
		h, _, err := r.sw.Eval(0)
		if err != nil {
			return 0, fmt.Errorf("no DC gain: %w", err)
		}
		if h == 0 {
			return 0, errors.New("H(0) = 0: no DC gain")
		}
		return dB(h), nil
	case kindPeak, kindFPeak:
		if err := r.peak(); err != nil {
			return 0, err
		}
		if s.kind == kindPeak {
			return r.peakDB, nil
		}
		return r.fpeak, nil
	case kindF3dB:
		return r.f3db()
	case kindF0, kindQ:
		if err := r.poles(); err != nil {
			return 0, err
		}
		if s.kind == kindF0 {
			return r.f0Hz, nil
		}
		return r.q, nil
	}
	return 0, fmt.Errorf("metric kind %d not implemented", s.kind)
}

// sweep fills mag2 with |H|² over the grid.
func (r *metricRun) sweep() error {
	if r.mag2 != nil {
		return nil
	}
	m := make([]float64, len(r.e.gridHz))
	for i, f := range r.e.gridHz {
		h, _, err := r.h(f)
		if err != nil {
			return err
		}
		m[i] = real(h)*real(h) + imag(h)*imag(h)
	}
	r.mag2 = m
	return nil
}

// peak finds the largest |H| and its frequency.
func (r *metricRun) peak() error {
	if r.peakDone {
		return r.peakErr
	}
	r.peakDone = true
	if r.peakErr = r.sweep(); r.peakErr != nil {
		return r.peakErr
	}
	g := r.e.gridHz
	k := 0
	for i, v := range r.mag2 {
		if v > r.mag2[k] {
			k = i
		}
	}
	r.peakDB, r.fpeak = 10*math.Log10(r.mag2[k]), g[k]
	if k == 0 || k == len(g)-1 {
		return nil
	}
	// d ln|H|²/d ln ω = 2ω·Re(conj(H)·dH/dω)/|H|², dH/dω = j·dH/ds:
	// positive left of the peak, negative right of it, dimensionless.
	slope := func(lf float64) float64 {
		f := math.Exp(lf)
		h, dh, err := r.h(f)
		if err != nil || h == 0 {
			return math.NaN()
		}
		return 2 * omegaOf(f) * real(cmplx.Conj(h)*complex(0, 1)*dh) / (real(h)*real(h) + imag(h)*imag(h))
	}
	lf, ok := illinois(slope, math.Log(g[k-1]), math.Log(g[k+1]))
	if !ok {
		return nil // keep the grid maximum
	}
	h, _, err := r.h(math.Exp(lf))
	if err == nil && dB(h) >= r.peakDB {
		r.peakDB, r.fpeak = dB(h), math.Exp(lf)
	}
	return nil
}

// f3db finds the first −3 dB crossing (see MetricEvaluator).
func (r *metricRun) f3db() (float64, error) {
	if err := r.sweep(); err != nil {
		return 0, err
	}
	g := r.e.gridHz
	low := r.mag2[0]
	if h0, _, err := r.sw.Eval(0); err == nil && h0 != 0 {
		low = real(h0)*real(h0) + imag(h0)*imag(h0)
	}
	// The grid maximum decides the case (the refined peak is at least as
	// high, so only a peak within a grid step of the 3 dB limit can differ);
	// the refined peak is the reference of a rising crossing.
	ref2, rising := low, false
	if low < slices.Max(r.mag2)/2 {
		if err := r.peak(); err != nil {
			return 0, err
		}
		ref2, rising = math.Pow(10, r.peakDB/10), true
		if r.fpeak == g[len(g)-1] {
			// Still rising at the top (a high-pass): the reference is the
			// high-frequency gain, looked for up to 4 decades further.
			for k, f := 0, g[len(g)-1]; k < 4; k++ {
				f *= 10
				if h, _, err := r.h(f); err == nil {
					ref2 = math.Max(ref2, real(h)*real(h)+imag(h)*imag(h))
				}
			}
		}
	}
	target := ref2 / 2
	k := -1
	for i, v := range r.mag2 {
		if (!rising && v < target) || (rising && v >= target) {
			k = i
			break
		}
	}
	if k <= 0 {
		return 0, fmt.Errorf("no −3 dB point between %.4g Hz and %.4g Hz", g[0], g[len(g)-1])
	}
	// The same |H|² as the grid test, so the signs at the grid agree.
	fn := func(lf float64) float64 {
		h, _, err := r.h(math.Exp(lf))
		if err != nil {
			return math.NaN()
		}
		return math.Log((real(h)*real(h) + imag(h)*imag(h)) / target)
	}
	lf, ok := illinois(fn, math.Log(g[k-1]), math.Log(g[k]))
	if !ok {
		return 0, errors.New("−3 dB point: refinement failed")
	}
	return math.Exp(lf), nil
}

// illinois finds a root of f in [a, b], where f(a) and f(b) differ in sign,
// by the Illinois variant of regula falsi, to a relative width of 1e-13 of
// the bracket (the arguments here are logarithms of frequencies). An end
// where |f| < 1e-12 is taken as the root. ok is false when the signs do
// not bracket a root or f is NaN.
func illinois(f func(float64) float64, a, b float64) (float64, bool) {
	fa, fb := f(a), f(b)
	switch {
	case math.IsNaN(fa) || math.IsNaN(fb):
		return 0, false
	case math.Abs(fa) < 1e-12:
		return a, true
	case math.Abs(fb) < 1e-12:
		return b, true
	case fa*fb > 0:
		return 0, false
	}
	tol := 1e-13 * math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
	for it := 0; it < 100 && math.Abs(b-a) > tol; it++ {
		c := (a*fb - b*fa) / (fb - fa)
		fc := f(c)
		if math.IsNaN(fc) {
			return 0, false
		}
		if fc == 0 {
			return c, true
		}
		if fc*fb < 0 {
			a, fa = b, fb // the root lies between b and c
		} else {
			fa /= 2 // a is kept a second time: halve its weight
		}
		b, fb = c, fc
	}
	return b, true
}

// poles finds f0 and Q of the dominant complex pole pair.
func (r *metricRun) poles() error {
	if r.polesDone {
		return r.polesErr
	}
	r.polesDone = true
	ps, err := pencilPoles(r.sys, omegaOf(math.Sqrt(r.e.gridHz[0]*r.e.gridHz[len(r.e.gridHz)-1])))
	if err != nil {
		r.polesErr = err
		return err
	}
	best := -1
	for i, p := range ps {
		if imag(p) > 1e-9*cmplx.Abs(p) && (best < 0 || math.Abs(real(p)) < math.Abs(real(ps[best]))) {
			best = i
		}
	}
	switch {
	case best >= 0:
		p := ps[best]
		w := cmplx.Abs(p)
		r.f0Hz, r.q = w/(2*math.Pi), w/(2*math.Abs(real(p)))
	case len(ps) == 2:
		p1, p2 := real(ps[0]), real(ps[1])
		w := math.Sqrt(p1 * p2)
		r.f0Hz, r.q = w/(2*math.Pi), w/math.Abs(p1+p2)
	default:
		r.polesErr = fmt.Errorf("no complex pole pair (%d real poles)", len(ps))
	}
	if r.polesErr == nil && (math.IsNaN(r.f0Hz) || math.IsNaN(r.q)) {
		r.polesErr = errors.New("poles give no natural frequency")
	}
	return r.polesErr
}

// pencilPoles returns the finite eigenvalues s of det(G + sC) = 0 (rad/s)
// by shift and invert: with A = G + σC, (G + sC)x = 0 ⇔ A⁻¹C·x = μx with
// μ = −1/(s − σ), so s = σ − 1/μ; eigenvalues μ below 1e-10 of the largest
// belong to infinite s and are dropped. sigma is a real shift near the
// circuit's frequencies (rad/s).
func pencilPoles(sys *mna.System, sigma float64) ([]complex128, error) {
	n := sys.Size()
	a := mat.NewDense(n, n, nil)
	a.Scale(sigma, sys.C)
	a.Add(a, sys.G)
	var lu mat.LU
	lu.Factorize(a)
	if lu.Det() == 0 {
		return nil, errors.New("poles: G + σC is singular at the shift")
	}
	var m mat.Dense
	if err := lu.SolveTo(&m, false, sys.C); err != nil {
		return nil, fmt.Errorf("poles: %w", err)
	}
	var eig mat.Eigen
	if !eig.Factorize(&m, mat.EigenNone) {
		return nil, errors.New("poles: eigenvalue iteration did not converge")
	}
	mu := eig.Values(nil)
	big := 0.0
	for _, v := range mu {
		big = math.Max(big, cmplx.Abs(v))
	}
	var ps []complex128
	for _, v := range mu {
		if cmplx.Abs(v) > 1e-10*big && big > 0 {
			ps = append(ps, complex(sigma, 0)-1/v)
		}
	}
	return ps, nil
}

// metricPerPercent reports whether a metric's sensitivity is given as an
// absolute change per % (dB and degree metrics) rather than normalised.
func metricPerPercent(name string) bool {
	base, _, _ := strings.Cut(name, "@")
	u, _ := netlist.MetricUnit(base)
	return u == netlist.UnitDecibel || u == netlist.UnitDegree
}

// metricUnit returns the unit of a metric's values ("dB", "deg", "Hz", "").
func metricUnit(name string) string {
	base, _, _ := strings.Cut(name, "@")
	u, _ := netlist.MetricUnit(base)
	return u
}
