package variation

import (
	"errors"
	"fmt"
	"math"
	"sync"

	"nodal/analysis/loop"
	"nodal/analysis/stability"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// The swept path of a MetricEvaluator: the metrics of circuits whose
// transfer function the extraction refuses (past transfer.MaxExtractUnknowns,
// or transfer.ErrIllConditioned) and whose metrics are spot values, f3db,
// peak and fpeak. Every run is restamped into the nominal system's pattern
// (mna.Restamper; a draw the pattern does not take is rebuilt) and H is
// solved directly (mna.Sweeper on the sparse LU): no pole is computed.
//
// f3db is the lowest ω where |H(jω)| = |H(0)|/√2, H(0) (finite, non-zero)
// the reference as for the extraction path's low-pass. Let
// g(u) = ln|H(jω)|² − ln(|H(0)|²/2), ω = e^u rad/s: g starts at ln 2 at
// DC and the crossing is its first sign change. It is found on the log
// grid of sweptPerDecade points a decade from lo, one decade below the
// end of the nominal circuit's flat band (from sweptLowHz up, the grid
// points where the nominal |H|² stays within sweptFlat of |H(0)|²: a run
// whose parts move by tolerances is not expected to fall by half there),
// up to hi, sweptAbove decades past the nominal crossing; the bracket is
// closed by Newton steps on g from the same solves (d g/du =
// 2·Re(jω·H′/H), kept inside the bracket: closeBracket) to about
// 4·10⁻¹⁵ in u, far below the 10⁻¹² relative asked of ω. A run whose g is
// already ≤ 0 at lo, or has no sign change up to hi, has no −3 dB point
// the grid vouches for: an error saying where it looked. The grid is the
// one bound of this method: a dip below −3 dB that lies wholly between
// two grid points (5.9 % apart in ω at 40 a decade) is not seen.
//
// peak and fpeak: the DC end and every maximum of ln|H|² on the same
// grid (lo to hi, the nominal −3 dB point fixing it), each closed by
// bisection on the sign of the slope from direct solves (peakOf); the
// scan must end with |H| falling below the peak, and a place within
// rounding of another candidate's gain is not served.
//
// Stability. A nominal circuit proven strictly stable by the passivity
// certificate (stability.ReasonPassive) stays proven for a draw that
// keeps the same parts with every resistance, capacitance and inductance
// positive and every coupling at its nominal value: the certificate uses
// the parts' kinds and the signs of their values only (passive.go). Such
// draws are not re-analysed; any other draw is checked as the extraction
// path checks it (loop.Circuit.CheckStable).

// Constants of the swept path.
const (
	// sweptPerDecade is the spacing of the f3db scan, points a decade of ω.
	sweptPerDecade = 40
	// sweptFlat: the scan of a run starts one decade below the last
	// nominal grid point of the flat band, where |H|² stays within this
	// (relative) of |H(0)|².
	sweptFlat = 1e-2
	// sweptAbove: decades scanned past the nominal crossing.
	sweptAbove = 4
	// sweptLowHz, sweptHighHz: the band in which the nominal crossing is
	// looked for (Hz).
	sweptLowHz, sweptHighHz = 1e-6, 1e12
)

// sweptPath is what every run of the swept path shares (read-only after
// newSweptPath).
type sweptPath struct {
	template *mna.Restamper
	pool     sync.Pool // of *sweptWorker
	in       mna.Input
	out      mna.Output
	f3db     bool
	// certified: the nominal circuit is proven stable by the passivity
	// certificate; couplings are its coupling factors by part index.
	certified bool
	couplings map[int]float64
	nparts    int
	// lo, hi bound the f3db scan of a run, u = ln ω (rad/s).
	lo, hi float64
}

// sweptWorker is one goroutine's restamped system and its sweeper.
type sweptWorker struct {
	r  *mna.Restamper
	sw *mna.Sweeper
}

// newSweptPath returns the swept path for e's metrics on the nominal
// circuit, or an error saying why it cannot serve them.
func newSweptPath(e *MetricEvaluator, nominal *netlist.Circuit) (*sweptPath, error) {
	if err := sweptServes(e.metrics); err != nil {
		return nil, err
	}
	st, err := stability.Analyze(nominal, stability.Options{})
	if err != nil {
		return nil, err
	}
	if err := st.Err(); err != nil {
		return nil, err
	}
	return newSweptPathOf(nominal, e.in, e.out, e.metrics, st)
}

// sweptServes returns an error naming the first metric of ms the swept
// path cannot serve, and why.
func sweptServes(ms []transfer.Metric) error {
	for _, m := range ms {
		if err := SweptServes(m); err != nil {
			return err
		}
	}
	return nil
}

// SweptServes returns nil when the swept path serves m (gain@F, phase@F,
// dc, f3db, peak, fpeak), otherwise an error naming m and why not.
func SweptServes(m transfer.Metric) error {
	switch {
	case m.Spec.Spot, m.Spec.Name == "f3db", m.Spec.Name == "peak", m.Spec.Name == "fpeak":
		return nil
	}
	return fmt.Errorf("%s needs the transfer function's poles or the whole circuit", m.Name)
}

// newSweptPathOf is newSweptPath for metrics ms (all served, sweptServes)
// with the nominal circuit's stability st already known; it does not ask
// that the nominal circuit be stable.
func newSweptPathOf(nominal *netlist.Circuit, in mna.Input, out mna.Output, ms []transfer.Metric, st *stability.Result) (*sweptPath, error) {
	p := &sweptPath{in: in, out: out, nparts: len(nominal.Parts)}
	for _, m := range ms {
		// the peak scan uses the f3db scan's range
		p.f3db = p.f3db || m.Spec.Name == "f3db" || m.Spec.Name == "peak" || m.Spec.Name == "fpeak"
	}
	p.certified = st.Class == stability.Stable && st.Reason == stability.ReasonPassive
	p.couplings = map[int]float64{}
	for i, part := range nominal.Parts {
		if part.Kind == netlist.Coupling {
			p.couplings[i] = part.Value
		}
	}
	r, err := mna.NewRestamper(nominal, in, out)
	if err != nil {
		return nil, err
	}
	p.template = r
	p.pool.New = func() any {
		c := p.template.Clone()
		return &sweptWorker{r: c, sw: mna.NewSweeper(c.System())}
	}
	if p.f3db {
		w := p.pool.Get().(*sweptWorker)
		defer p.pool.Put(w)
		if err := w.r.Restamp(nominal); err != nil {
			return nil, err
		}
		if err := p.nominalRange(w.sw); err != nil {
			return nil, err
		}
	}
	return p, nil
}

// nominalRange finds the nominal crossing on the grid from sweptLowHz and
// sets the scan range of the runs (see the file comment).
func (p *sweptPath) nominalRange(sw *mna.Sweeper) error {
	lo, hi := math.Log(omegaOf(sweptLowHz)), math.Log(omegaOf(sweptHighHz))
	target, err := halfPowerLevel(sw)
	if err != nil {
		return err
	}
	step := math.Ln10 / sweptPerDecade
	flat, inBand := lo, true
	for i := 0; ; i++ {
		u := lo + float64(i)*step
		if u > hi {
			return fmt.Errorf("the direct search range is set by the nominal −3 dB point: |H| stays above |H(0)|/√2 from %g Hz to %g Hz", sweptLowHz, sweptHighHz)
		}
		g, _, err := levelAt(sw, u, target)
		if err != nil {
			return err
		}
		if g <= 0 {
			if i == 0 {
				return fmt.Errorf("the direct search range is set by the nominal −3 dB point: |H| is already below |H(0)|/√2 at %g Hz", sweptLowHz)
			}
			p.lo, p.hi = flat-math.Ln10, u+sweptAbove*math.Ln10
			return nil
		}
		// g − ln 2 = ln(|H|²/|H(0)|²).
		inBand = inBand && math.Abs(g-math.Ln2) <= -math.Log1p(-sweptFlat)
		if inBand {
			flat = u
		}
	}
}

// halfPowerLevel returns ln(|H(0)|²/2), or an error when H(0) is no
// reference (zero, infinite: not a low-pass).
func halfPowerLevel(sw *mna.Sweeper) (float64, error) {
	h0, _, err := sw.Eval(0)
	if err != nil {
		return 0, fmt.Errorf("the DC gain is the reference of a direct −3 dB search: %w", err)
	}
	a := logMag2(h0)
	if math.IsInf(a, 0) || math.IsNaN(a) {
		return 0, fmt.Errorf("the DC gain |H(0)| = %g is no reference for a direct −3 dB search (a low-pass is needed)", math.Sqrt(math.Exp(a)))
	}
	return a - math.Ln2, nil
}

// levelAt returns g(u) = ln|H(jω)|² − target and dg/du, ω = e^u rad/s.
func levelAt(sw *mna.Sweeper, u, target float64) (g, dg float64, err error) {
	om := math.Exp(u)
	h, dh, err := sw.Eval(complex(0, om))
	if err != nil {
		return 0, 0, err
	}
	if h == 0 {
		return math.Inf(-1), 0, nil
	}
	return logMag2(h) - target, 2 * real(complex(0, om)*dh/h), nil
}

// levelPair returns g at ua and ub (see levelAt), both solved in one
// Sweeper.EvalPair.
func levelPair(sw *mna.Sweeper, ua, ub, target float64) ([2]float64, error) {
	ha, _, hb, _, errA, errB := sw.EvalPair(complex(0, math.Exp(ua)), complex(0, math.Exp(ub)))
	if err := errors.Join(errA, errB); err != nil {
		return [2]float64{}, err
	}
	return [2]float64{logMag2(ha) - target, logMag2(hb) - target}, nil
}

// eval returns the metrics of the run c (spot values and f3db).
func (p *sweptPath) eval(e *MetricEvaluator, c *netlist.Circuit) ([]float64, error) {
	if !p.keepsCertificate(c) {
		if err := loop.NewCircuit(c).CheckStable(); err != nil {
			return nil, err
		}
	}
	sub, release, err := p.subject(c)
	if err != nil {
		return nil, err
	}
	defer release()
	return e.evalOn(sub)
}

// subject returns the direct-solve subject of c (no stability check) and
// the release to call once its metrics are read.
func (p *sweptPath) subject(c *netlist.Circuit) (sweptSubject, func(), error) {
	w := p.pool.Get().(*sweptWorker)
	release := func() { p.pool.Put(w) }
	sw := w.sw
	if err := w.r.Restamp(c); err != nil {
		// The pattern does not take this draw (a value that removes a
		// stamp): build its own system.
		sys, err := mna.Build(c, p.in, p.out)
		if err != nil {
			release()
			return sweptSubject{}, nil, err
		}
		sw = mna.NewSweeper(sys)
	}
	return sweptSubject{spotSubject{sw}, p, &sweptPeak{}}, release, nil
}

// SweptSubjects serves, by direct solves of H on the sparse LU, the
// metrics of the swept path (gain@F, phase@F, dc, f3db, peak, fpeak; see
// the file comment) for circuits whose transfer function the extraction
// refuses: what package require judges such requirements on, with the
// same definitions as the tolerance runs. The f3db and peak scans of every
// circuit are placed by the nominal circuit given to NewSweptSubjects.
// Phases are principal values (−180°, 180°]. Safe for concurrent use.
type SweptSubjects struct{ p *sweptPath }

// NewSweptSubjects prepares the swept path of metrics ms from in to out
// on the nominal circuit; an error names a metric no direct solve serves,
// or says why the nominal circuit gives the scans no range. Stability is
// not judged here (the caller judges it on the whole circuit).
func NewSweptSubjects(nominal *netlist.Circuit, in mna.Input, out mna.Output, ms []transfer.Metric) (*SweptSubjects, error) {
	if err := sweptServes(ms); err != nil {
		return nil, err
	}
	st, err := stability.Analyze(nominal, stability.Options{})
	if err != nil {
		return nil, err
	}
	p, err := newSweptPathOf(nominal, in, out, ms, st)
	if err != nil {
		return nil, err
	}
	return &SweptSubjects{p}, nil
}

// Subject returns the metric subject of c (the same parts as the nominal
// circuit, values varied) answering the swept metrics by direct solves,
// and release, to be called once its metrics have been read.
func (s *SweptSubjects) Subject(c *netlist.Circuit) (netlist.MetricSubject, func(), error) {
	sub, release, err := s.p.subject(c)
	if err != nil {
		return nil, nil, err
	}
	return sub, release, nil
}

// keepsCertificate reports whether the nominal circuit's passivity
// certificate holds for c unchanged: the same parts, every R, C and L
// positive, every coupling at its nominal factor.
func (p *sweptPath) keepsCertificate(c *netlist.Circuit) bool {
	if !p.certified || len(c.Parts) != p.nparts {
		return false
	}
	for i := range c.Parts {
		part := &c.Parts[i]
		switch part.Kind {
		case netlist.Resistor, netlist.Capacitor, netlist.Inductor:
			if !(part.Value > 0) || math.IsInf(part.Value, 0) {
				return false
			}
		case netlist.Coupling:
			if part.Value != p.couplings[i] {
				return false
			}
		}
	}
	return true
}

// sweptSubject answers the spot quantities and f3db by direct solves.
type sweptSubject struct {
	spotSubject
	p    *sweptPath
	peak *sweptPeak // the run's peak, found once for peak and fpeak
}

// errNoCrossing marks a run with no −3 dB point in the scanned range.
var errNoCrossing = errors.New("no −3 dB point found")

func (s sweptSubject) F3dBHz() (float64, error) {
	u, err := s.p.crossing(s.sw)
	return math.Exp(u) / (2 * math.Pi), err
}

// crossing returns u = ln ω of the first crossing of g = 0 on the run's
// grid, closed on direct solves (see the file comment).
func (p *sweptPath) crossing(sw *mna.Sweeper) (float64, error) {
	target, err := halfPowerLevel(sw)
	if err != nil {
		return 0, err
	}
	step := math.Ln10 / sweptPerDecade
	prevU, prevG := 0.0, 0.0
	// The grid is solved two points at a time (Sweeper.EvalPair factors
	// both in one pass), then visited in order.
	var pair [2]float64
	for i := 0; ; i++ {
		u := p.lo + float64(i)*step
		if u > p.hi+step/2 {
			return 0, fmt.Errorf("%w: |H| stays above |H(0)|/√2 up to %.4g Hz", errNoCrossing, math.Exp(p.hi)/(2*math.Pi))
		}
		if i%2 == 0 {
			var err error
			if pair, err = levelPair(sw, u, u+step, target); err != nil {
				return 0, err
			}
		}
		g := pair[i%2]
		if g <= 0 {
			if i == 0 {
				return 0, fmt.Errorf("%w: |H| is already below |H(0)|/√2 at %.4g Hz, the bottom of the scan", errNoCrossing, math.Exp(u)/(2*math.Pi))
			}
			if g == 0 {
				return u, nil
			}
			var solveErr error
			f := func(x float64) (float64, float64) {
				gx, dx, err := levelAt(sw, x, target)
				if err != nil && solveErr == nil {
					solveErr = err
				}
				return gx, dx
			}
			x := closeBracket(f, prevU, u, prevG, g)
			return x, solveErr
		}
		prevU, prevG = u, g
	}
}

// sweptPeak is one run's peak: |H| at its maximum (ratio), where (rad/s,
// 0 at DC), the error of the search and of the place alone.
type sweptPeak struct {
	done           bool
	gain, omegaRad float64
	err, placeErr  error
}

// sweptPeakTie: two candidates for the peak whose ln|H|² differ by less
// than this are a tie that rounding decides (the gains differ by less than
// 4.4·10⁻¹¹ dB): the peak gain stands, its place is not served.
const sweptPeakTie = 1e-11

func (s sweptSubject) PeakDB() (float64, error) {
	s.findPeak()
	return 20 * math.Log10(s.peak.gain), s.peak.err
}

func (s sweptSubject) PeakHz() (float64, error) {
	s.findPeak()
	if s.peak.err != nil {
		return 0, s.peak.err
	}
	return s.peak.omegaRad / (2 * math.Pi), s.peak.placeErr
}

func (s sweptSubject) findPeak() {
	if !s.peak.done {
		s.peak.done = true
		s.p.peakOf(s.sw, s.peak)
	}
}

// peakOf finds the largest |H(jω)| of the loaded run: the DC end and
// every maximum of ln|H|² on the f3db scan's grid [lo, hi], each closed
// by bisection on the sign of d ln|H|²/d ln ω = 2·Re(jω·H′/H) from direct
// solves. The scan must end falling, below the peak (a gain still rising
// at hi, or a biproper H whose limit might compete, is an error saying
// so); a maximum within sweptPeakTie of another candidate leaves the
// place unserved.
func (p *sweptPath) peakOf(sw *mna.Sweeper, pk *sweptPeak) {
	h0, _, err := sw.Eval(0)
	if err != nil {
		pk.err = fmt.Errorf("the DC end of a direct peak search: %w", err)
		return
	}
	best, second := logMag2(h0), math.Inf(-1)
	bestU := math.Inf(-1)
	slope := func(u float64) (float64, error) {
		om := math.Exp(u)
		h, dh, err := sw.Eval(complex(0, om))
		if err != nil {
			return 0, err
		}
		return 2 * real(complex(0, om)*dh/h), nil
	}
	step := math.Ln10 / sweptPerDecade
	n := int(math.Ceil((p.hi-p.lo)/step)) + 1
	g := make([]float64, n)
	for i := 0; i < n; i += 2 {
		u := p.lo + float64(i)*step
		ha, _, hb, _, errA, errB := sw.EvalPair(complex(0, math.Exp(u)), complex(0, math.Exp(u+step)))
		if err := errors.Join(errA, errB); err != nil {
			pk.err = err
			return
		}
		g[i] = logMag2(ha)
		if i+1 < n {
			g[i+1] = logMag2(hb)
		}
	}
	for i := 1; i+1 < n; i++ {
		if !(g[i] > g[i-1] && g[i] >= g[i+1]) {
			continue
		}
		// A maximum between u[i-1] and u[i+1]: bisect the slope's sign.
		a, b := p.lo+float64(i-1)*step, p.lo+float64(i+1)*step
		for it := 0; it < 200 && b-a > 1e-15*math.Max(1, math.Abs(a)); it++ {
			mid := 0.5 * (a + b)
			d, err := slope(mid)
			if err != nil {
				pk.err = err
				return
			}
			if d > 0 {
				a = mid
			} else {
				b = mid
			}
		}
		u := 0.5 * (a + b)
		h, _, err := sw.Eval(complex(0, math.Exp(u)))
		if err != nil {
			pk.err = err
			return
		}
		if v := logMag2(h); v > best {
			best, second, bestU = v, best, u
		} else {
			second = math.Max(second, v)
		}
	}
	top := p.lo + float64(n-1)*step
	if d, err := slope(top); err != nil || !(d < 0 && g[n-1] < best) {
		pk.err = fmt.Errorf("|H| does not fall below its peak by %.4g Hz, the top of the scan: no peak the scan vouches for", math.Exp(top)/(2*math.Pi))
		return
	}
	pk.gain = math.Sqrt(math.Exp(best))
	if !math.IsInf(bestU, -1) {
		pk.omegaRad = math.Exp(bestU)
	}
	if best-second <= sweptPeakTie {
		pk.placeErr = errors.New("two maxima of |H| within rounding of each other: the place of the peak is not determined")
	}
}
