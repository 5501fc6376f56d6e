package variation

import (
	"math"
	"math/cmplx"
	"slices"

	"nodal/analysis/noise"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// The metrics of the direct path beyond the spot values and f3db, each
// computed from what a run's restamped system already holds (the natural
// frequencies and zeros of tolerance_direct.go, direct solves) and each
// sent to the extraction path whenever the direct figure might not be the
// one Metric.Eval gives on the extracted transfer function
// (tolerance_direct_test.go checks them run by run):
//
//   - stable: a run the direct path loads is vouched stable (every natural
//     frequency clearly in the left half-plane), so stable is 1.
//   - f0 and q: transfer.DominantPair of the natural frequencies, which
//     are H's poles when the nominal circuit's H has as many poles as the
//     circuit has natural frequencies (no mode cancelled: the extraction's
//     cancellations follow the block structure, which every draw shares).
//     Two roots within directSeparation of each other (a nearly double
//     root, a complex pair nearly on the real axis: the extraction may
//     merge or split them) or two complex pairs equally close to the jω
//     axis within directPairTie (the choice of the dominant one) send the
//     run on.
//   - peak, fpeak and peaking: the stationary points of |H(jω)|² on the
//     product of tolerance_direct.go, on a grid as fine as the
//     extraction's (transfer Peak: 80 points a decade of ω from two
//     decades below the smallest root to two above the largest, and the
//     resonance points of every complex root), each maximum closed by
//     bisection; the DC end is the other candidate: the nominal H is
//     strictly proper, as the draws of one structure are (the degrees
//     in s follow the structure for all but special values), so
//     |H(∞)| = 0 does not compete, and the product must fall at the top
//     of the scan, below the peak (where a draw that gained a zero would
//     show). The peak gain is |H| from a direct solve at the highest
//     candidate, which must agree with the product within directAgree.
//     fpeak is served only when no other candidate is within
//     directPeakTie of it in ln|H|² (rounding would pick the place; the
//     gain differs by less than that) and the maximum's place is well
//     conditioned: one Newton step on the direct solve's d ln|H|²/d ln ω
//     (with the product's curvature) moves it by at most
//     directPeakShift in ln ω; a flat maximum goes on. peaking needs
//     the nominal passband reference to be the DC gain.
//   - noise@F and noise_rms@F1..F2: noise.Analyzer on the restamped
//     matrices themselves (noise.NewOn, Analyzer.Revalue with the run's
//     values), the same computation on the same G and C as a rebuilt
//     analysis, so the same numbers.

// Tolerances of the direct metrics (dimensionless).
const (
	// directSeparation: two natural frequencies closer than this times
	// their magnitude are a cluster the extraction may merge.
	directSeparation = 1e-6
	// directPairTie: two complex pairs whose |Re p| differ by less than
	// this (relative) are a tie for the dominant pair that rounding
	// decides (the roots' own errors are about 10⁻¹³ relative).
	directPairTie = 1e-9
	// directPeakTie: two candidates for the peak whose ln|H|² differ by
	// less than this are a tie for its place that rounding decides; the
	// gains then differ by less than 4.4·10⁻¹¹ dB, so the peak gain
	// stands (the product's rounding is about 10⁻¹⁴).
	directPeakTie = 1e-11
	// directPeakShift: the largest move of fpeak, in ln ω, that one
	// Newton step on the direct solves may make for the product's maximum
	// to be served.
	directPeakShift = 1e-12
	// directPeakPerDecade is the regular spacing of the peak scan, per
	// decade of ω (the extraction's 40 a decade of ω²).
	directPeakPerDecade = 80
)

// directMetrics are the flags of the metrics a directPath computes beyond
// the spot values and f3db, and what the noise metrics need.
type directMetrics struct {
	pair    bool // f0, q
	peak    bool // peak, fpeak, peaking
	peaking bool
	noise   bool
	nominal *netlist.Circuit
	out     mna.Output
	tempK   float64
}

// take records that the direct path computes the metric spec (not a spot
// metric nor f3db) and reports whether it can.
func (d *directPath) take(spec netlist.MetricSpec, e *MetricEvaluator, nominal *netlist.Circuit) bool {
	switch {
	case spec.Name == "stable":
	case spec.Name == "f0" || spec.Name == "q":
		d.pair = true
	case spec.Name == "peak" || spec.Name == "fpeak":
		d.peak = true
	case spec.Name == "peaking":
		d.peak, d.peaking = true, true
	case spec.Noise:
		d.noise, d.nominal, d.out, d.tempK = true, nominal, e.out, e.tempK
		if d.tempK == 0 {
			d.tempK = noise.DefaultTempK
		}
	default:
		return false
	}
	return true
}

// needsTF reports whether the nominal transfer function decides whether
// the direct metrics apply (nominalFits).
func (d *directMetrics) needsTF() bool { return d.pair || d.peak }

// nominalFits reports whether the nominal transfer function tf is one the
// direct metrics know: for f0 and q, as many poles as natural frequencies
// (no mode cancelled out of H); for the peak metrics, strictly proper, and
// for peaking a DC passband reference.
func (d *directMetrics) nominalFits(tf *transfer.TransferFunction, natural int) bool {
	if d.pair && len(tf.Poles) != natural {
		return false
	}
	if d.peak && len(tf.Zeros) >= len(tf.Poles) {
		return false
	}
	return !d.peaking || lowPassRef(tf)
}

// directRun holds the figures of the loaded circuit computed so far (each
// once per run, whatever the metrics that read it).
type directRun struct {
	pairDone bool
	pair     transfer.RootPair
	pairErr  error
	peakDone bool
	peakH    float64 // |H| at the peak (ratio)
	peakOm   float64 // where, rad/s (0: DC)
	peakErr  error
	fpeakErr error
}

// subject returns what the metrics of a worker's loaded circuit are
// evaluated on: the direct subject, with the noise of the restamped
// matrices when a noise metric is asked for.
func (w *directWorker) subject() netlist.MetricSubject {
	var sub netlist.MetricSubject = directSubject{spotSubject{w.sw}, w}
	if !w.d.noise {
		return sub
	}
	a, err := noise.NewOn(w.d.nominal, w.r.Matrices(), noise.Config{Out: w.d.out, TempK: w.d.tempK})
	if err != nil {
		return noiseless{sub}
	}
	w.na = a
	return noise.MetricSubjectOf(a, sub)
}

// noiseless answers the noise quantities with errUncertain (the direct
// path could not set up the noise analysis: the extraction path says why).
type noiseless struct{ netlist.MetricSubject }

func (noiseless) NoiseDensityAt(float64) (float64, error) { return 0, errUncertain }
func (noiseless) NoiseRMS(_, _ float64) (float64, error)  { return 0, errUncertain }

// revalue gives the worker's noise analysis the loaded circuit's values.
func (w *directWorker) revalue(c *netlist.Circuit) error {
	if w.na != nil && w.na.Revalue(c) != nil {
		return errUncertain
	}
	return nil
}

func (s directSubject) Stable() (bool, error) { return true, nil } // a loaded run is vouched stable

func (s directSubject) F0Hz() (float64, error) {
	p, err := s.w.dominantPair()
	return p.F0Hz, err
}

func (s directSubject) Q() (float64, error) {
	p, err := s.w.dominantPair()
	return p.Q, err
}

func (s directSubject) PeakDB() (float64, error) {
	h, _, err := s.w.peakOf()
	return 20 * math.Log10(h), err
}

func (s directSubject) PeakHz() (float64, error) {
	_, om, err := s.w.peakOf()
	if err == nil {
		err = s.w.fpeakErr
	}
	return om / (2 * math.Pi), err
}

func (s directSubject) PeakingDB() (float64, error) {
	h, _, err := s.w.peakOf()
	if err != nil || !s.w.d.peaking || s.w.h0 == 0 {
		return 0, errUncertain
	}
	return math.Max(0, 20*math.Log10(h)-20*math.Log10(math.Abs(s.w.h0))), nil
}

// dominantPair returns transfer.DominantPair of the loaded circuit's
// natural frequencies, or errUncertain (see the file comment).
func (w *directWorker) dominantPair() (transfer.RootPair, error) {
	if w.pairDone {
		return w.pair, w.pairErr
	}
	w.pairDone = true
	w.pair, w.pairErr = w.computePair()
	return w.pair, w.pairErr
}

func (w *directWorker) computePair() (transfer.RootPair, error) {
	if !w.d.pair {
		return transfer.RootPair{}, errUncertain
	}
	for i, a := range w.roots {
		for _, b := range w.roots[i+1:] {
			if cmplx.Abs(a-b) <= directSeparation*math.Max(cmplx.Abs(a), cmplx.Abs(b)) {
				return transfer.RootPair{}, errUncertain
			}
		}
	}
	tf := transfer.TransferFunction{Poles: w.roots}
	p, err := tf.DominantPair()
	if err != nil {
		return transfer.RootPair{}, errUncertain
	}
	if imag(p.Root) != 0 {
		d := math.Abs(real(p.Root))
		for _, r := range w.roots {
			if imag(r) > 0 && r != p.Root && math.Abs(math.Abs(real(r))-d) <= directPairTie*d {
				return transfer.RootPair{}, errUncertain
			}
		}
	}
	return p, nil
}

// peakOf returns the peak gain |H| (ratio) of the loaded circuit and
// where it is (rad/s, 0 at DC), or errUncertain; fpeakErr says whether
// the place is served too (see the file comment).
func (w *directWorker) peakOf() (gain, omegaRad float64, err error) {
	if !w.peakDone {
		w.peakDone = true
		w.peakErr = w.computePeak()
	}
	return w.peakH, w.peakOm, w.peakErr
}

func (w *directWorker) computePeak() error {
	if !w.d.peak || w.h0 == 0 || math.IsInf(w.h0, 0) || !w.zeros() {
		return errUncertain
	}
	g := func(u float64) (float64, float64) {
		v, d := w.product(u)
		return v - math.Ln2, d
	}
	slope := func(u float64) float64 { return w.slope(math.Exp(u)) }
	res, lo, hi, _ := w.rootSpan(w.grid[:0])
	if math.IsInf(lo, 1) {
		return errUncertain
	}
	lo, hi = lo-2*math.Ln10, hi+2*math.Ln10
	step := math.Ln10 / directPeakPerDecade
	res = sortedWithin(res, lo, hi+step/2)
	w.grid = res
	// Candidates: the DC end (g = 0) and every maximum of g on the grid:
	// the regular points lo + i·step and the resonance points, visited in
	// one ascending sequence.
	bestU, bestG, second := math.Inf(-1), 0.0, math.Inf(-1)
	prevU, prevD := math.NaN(), 0.0
	// ω of the regular points by multiplication (the grid only brackets:
	// each maximum is closed on exact values).
	omReg, ratio := math.Exp(lo), math.Exp(step)
	for i, f := 0, 0; ; {
		u, om := lo+float64(i)*step, omReg
		if f < len(res) && res[f] < u {
			u, om = res[f], math.Exp(res[f])
			f++
		} else {
			i++
			omReg *= ratio
		}
		if u > hi+step/2 {
			break
		}
		if u == prevU {
			continue
		}
		du := w.slope(om)
		if prevD > 0 && du <= 0 {
			x := bisectDown(slope, prevU, u)
			if gx, _ := g(x); gx > bestG {
				bestU, bestG, second = x, gx, bestG
			} else {
				second = math.Max(second, gx)
			}
		}
		prevU, prevD = u, du
	}
	// H is strictly proper (nominalFits; the degrees follow the
	// structure): |H(∞)| = 0 does not compete, and the product must fall
	// at the top of the scan, below the peak.
	if gHi, dHi := g(prevU); !(dHi < 0 && gHi < bestG) {
		return errUncertain
	}
	if bestG-second <= directPeakTie {
		// Two candidates equally high: rounding picks the place (the gain
		// differs by less than directPeakTie in ln|H|²).
		w.fpeakErr = errUncertain
	}
	if math.IsInf(bestU, -1) {
		w.peakH, w.peakOm = math.Abs(w.h0), 0
		return nil
	}
	om := math.Exp(bestU)
	h, dh, err := w.sw.Eval(complex(0, om))
	if err != nil || h == 0 {
		return errUncertain
	}
	if !(math.Abs(logMag2(h)-math.Log(w.h0*w.h0)-bestG) <= directAgree) {
		return errUncertain
	}
	w.peakH, w.peakOm = cmplx.Abs(h), om
	// The place: one Newton step on the direct slope, with the product's
	// curvature (a central difference of its slope).
	const du = 1e-4
	curv := (slope(bestU+du) - slope(bestU-du)) / (2 * du)
	direct := 2 * real(complex(0, om)*dh/h)
	if !(curv < 0) || !(math.Abs(direct/curv) <= directPeakShift) {
		w.fpeakErr = errUncertain
	}
	return nil
}

// slope returns d ln|H(jω)|²/d ln ω on the product (the dg of product,
// without its logarithms), ω in rad/s.
func (w *directWorker) slope(om float64) float64 {
	dg := 0.0
	for _, m := range w.muZ {
		a, b := 1-om*imag(m), om*real(m)
		dg += 2 * (-a*om*imag(m) + b*om*real(m)) / (a*a + b*b)
	}
	for _, m := range w.muN {
		a, b := 1-om*imag(m), om*real(m)
		dg -= 2 * (-a*om*imag(m) + b*om*real(m)) / (a*a + b*b)
	}
	return dg
}

// sortedWithin sorts u ascending and keeps the values in [lo, hi].
func sortedWithin(u []float64, lo, hi float64) []float64 {
	kept := u[:0]
	for _, x := range u {
		if x >= lo && x <= hi {
			kept = append(kept, x)
		}
	}
	slices.Sort(kept)
	return kept
}

// bisectDown returns the root of d in [a, b], d(a) > 0 ≥ d(b), by
// bisection to 10⁻¹⁵·max(1, |a|) (as transfer's signChanges closes a
// stationary point).
func bisectDown(d func(u float64) float64, a, b float64) float64 {
	for it := 0; it < 200 && b-a > 1e-15*math.Max(1, math.Abs(a)); it++ {
		mid := 0.5 * (a + b)
		if d(mid) > 0 {
			a = mid
		} else {
			b = mid
		}
	}
	return 0.5 * (a + b)
}
