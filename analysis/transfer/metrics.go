package transfer

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"nodal/mna"
	"nodal/netlist"
)

// Metric is a parsed requirement or tolerance metric, as spelled in a
// `require` statement or on the command line: its entry in the metric
// registry (netlist.Metrics) and its parameter.
//
// Invariant: FreqHz = Param.FreqHz, > 0 and finite exactly when the
// metric takes a frequency (gain@F, phase@F).
type Metric struct {
	Spec   netlist.MetricSpec
	Param  netlist.MetricParam
	FreqHz float64 // the frequency after '@', Hz
	Name   string  // the spelling parsed
}

// String returns the metric as it was written.
func (m Metric) String() string { return m.Name }

// Unit returns the unit of the metric's value: "dB", "deg", "Hz" or "".
func (m Metric) Unit() string { return m.Spec.Unit }

// ErrNoPolePair means the q or f0 metric was asked of a transfer function
// without a second-order section: no complex pole pair and fewer than two
// real poles of one sign (see DominantPair).
var ErrNoPolePair = errors.New("no pole pair")

// ParseMetric parses a metric as spelled in a `require` statement
// (netlist.ParseMetric: gain@F, phase@F, f3db, peak, fpeak, f0, q or dc,
// with F a positive frequency in the file format's syntax: 1kHz, 20k, 1k5,
// 500Hz, ...), so a metric that parses in a file parses here. Errors list
// the valid metrics.
func ParseMetric(name string) (Metric, error) {
	spec, p, err := netlist.ParseMetric(name)
	if err != nil {
		return Metric{}, fmt.Errorf("%w; valid metrics are %s", err, strings.Join(netlist.MetricNames(), ", "))
	}
	return Metric{Spec: spec, Param: p, FreqHz: p.FreqHz, Name: name}, nil
}

// DominantPair returns the dominant second-order section of the poles,
// written s² + (ω0/Q)·s + ω0² = (s − p1)(s − p2), so that ω0 = √(p1·p2)
// and Q = √(p1·p2)/(−(p1 + p2)) (common practice). The pair is
//
//   - the complex pair closest to the jω axis (smallest |Re p|, i.e. the
//     slowest-decaying oscillation; the lower f0 on a tie) if there is one;
//   - otherwise the two real poles of smallest magnitude (Root the smaller,
//     Other the larger).
//
// For a complex pair this is ω0 = |p| and Q = |p|/(−2·Re p). For two real
// poles of the same sign Q ≤ 0.5 (equality for a double pole), so Q and f0
// stay defined, and continuous, when rounding or a tolerance corner moves
// a nearly critically damped pair onto the real axis. It returns an error
// wrapping ErrNoPolePair when there are fewer than two poles, or when the
// only candidates are real poles of opposite sign or a double pole at
// s = 0 (no ω0 or Q exists).
func (h *TransferFunction) DominantPair() (RootPair, error) {
	if pairs := h.PolePairs(); len(pairs) > 0 {
		best := pairs[0]
		for _, p := range pairs[1:] {
			d, db := math.Abs(real(p.Root)), math.Abs(real(best.Root))
			if d < db || (d == db && p.OmegaRad < best.OmegaRad) {
				best = p
			}
		}
		return best, nil
	}
	rp := h.RealPoles()
	switch {
	case len(h.Poles) == 0:
		return RootPair{}, fmt.Errorf("no poles: %w", ErrNoPolePair)
	case len(h.Poles) == 1:
		return RootPair{}, fmt.Errorf("first-order: %w", ErrNoPolePair)
	case len(rp) < 2:
		return RootPair{}, ErrNoPolePair
	}
	sort.SliceStable(rp, func(a, b int) bool { return rp[a].OmegaRad < rp[b].OmegaRad })
	p1, p2 := rp[0].Root, rp[1].Root
	prod, sum := p1*p2, p1+p2
	switch {
	case prod == 0 && sum == 0:
		return RootPair{}, fmt.Errorf("a double pole at s = 0: %w", ErrNoPolePair)
	case prod < 0:
		return RootPair{}, fmt.Errorf("real poles %.4g and %.4g rad/s of opposite sign: %w", p1, p2, ErrNoPolePair)
	}
	w0 := math.Sqrt(prod)
	q := w0 / -sum
	return RootPair{Root: complex(p1, 0), Other: complex(p2, 0), OmegaRad: w0, F0Hz: w0 / (2 * math.Pi), Q: q, Zeta: -sum / (2 * w0)}, nil
}

// Eval returns the metric's value for tf in the metric's unit (Unit),
// through the registry entry's Eval on tf's MetricSubject.
func (m Metric) Eval(tf *TransferFunction) (float64, error) { return m.EvalOn(tf.Subject()) }

// EvalOn returns the metric's value on any subject (a transfer function's,
// or one that also answers the noise quantities), in Unit.
func (m Metric) EvalOn(s netlist.MetricSubject) (float64, error) {
	if m.Spec.Eval == nil {
		return 0, fmt.Errorf("metric %q not parsed", m.Name)
	}
	v, err := m.Spec.Eval(s, m.Param)
	if err != nil {
		return 0, fmt.Errorf("%s: %w", m.Name, err)
	}
	return v, nil
}

// EvalIn is Eval with the circuit's quantities (stability, loop gains)
// taken from c, for the metrics judged on the circuit (Spec.Circuit); c
// may be nil when no such metric is asked for, and tf may be nil when
// only such metrics are.
func (m Metric) EvalIn(tf *TransferFunction, c CircuitMetrics) (float64, error) {
	return m.EvalOn(tf.SubjectIn(c))
}

// ExtractFor builds the system of c for one input and output and
// extracts its transfer function when some metric of ms reads it (is not
// judged on the circuit, Spec.Circuit); otherwise it returns nil.
func ExtractFor(ms []Metric, c *netlist.Circuit, in mna.Input, out mna.Output) (*TransferFunction, error) {
	for _, m := range ms {
		if !m.Spec.Circuit {
			sys, err := mna.Build(c, in, out)
			if err != nil {
				return nil, err
			}
			return Extract(sys)
		}
	}
	return nil, nil
}

// Subject returns tf as what metrics are evaluated on; it has no circuit,
// so the metrics judged on the circuit are errors.
func (h *TransferFunction) Subject() netlist.MetricSubject { return tfSubject{h, nil} }

// SubjectIn is Subject with the quantities judged on the whole circuit
// (stability, loop gains) answered by c; h may be nil when only those are
// asked for.
func (h *TransferFunction) SubjectIn(c CircuitMetrics) netlist.MetricSubject { return tfSubject{h, c} }

// CircuitMetrics gives the quantities of the metric registry that are
// judged on the whole circuit rather than on one transfer function (see
// netlist.MetricSubject; analysis/loop.Circuit implements it).
type CircuitMetrics interface {
	Stable() (bool, error)
	PhaseMarginDeg(part string) (float64, error)
	GainMarginDB(part string) (float64, error)
	CrossoverHz(part string) (float64, error)
}

// tfSubject evaluates the quantities of the metric registry on a transfer
// function, and those judged on the circuit on circ (nil: none).
type tfSubject struct {
	tf   *TransferFunction
	circ CircuitMetrics
}

// errNoCircuit is the error of a circuit quantity asked of a transfer
// function alone.
var errNoCircuit = errors.New("judged on the circuit, not on one transfer function")

func (s tfSubject) Stable() (bool, error) {
	if s.circ == nil {
		return false, errNoCircuit
	}
	return s.circ.Stable()
}

func (s tfSubject) PhaseMarginDeg(part string) (float64, error) {
	if s.circ == nil {
		return 0, errNoCircuit
	}
	return s.circ.PhaseMarginDeg(part)
}

func (s tfSubject) GainMarginDB(part string) (float64, error) {
	if s.circ == nil {
		return 0, errNoCircuit
	}
	return s.circ.GainMarginDB(part)
}

func (s tfSubject) CrossoverHz(part string) (float64, error) {
	if s.circ == nil {
		return 0, errNoCircuit
	}
	return s.circ.CrossoverHz(part)
}

func (s tfSubject) GainDBAt(freqHz float64) (float64, error) {
	return s.tf.GainDB(2 * math.Pi * freqHz), nil
}

func (s tfSubject) PhaseDegAt(freqHz float64) (float64, error) {
	return s.tf.PhaseDeg(2 * math.Pi * freqHz), nil
}

func (s tfSubject) F3dBHz() (float64, error) {
	bw, err := s.tf.F3dB()
	if err != nil {
		return 0, err
	}
	if len(bw.CrossingsHz) == 0 {
		return 0, fmt.Errorf("the gain never falls 3 dB below %.4g dB", bw.RefDB)
	}
	return bw.CrossingsHz[0], nil
}

func (tfSubject) NoiseDensityAt(float64) (float64, error) { return 0, netlist.ErrNeedsNoise }
func (tfSubject) NoiseRMS(_, _ float64) (float64, error)  { return 0, netlist.ErrNeedsNoise }

func (s tfSubject) PeakDB() (float64, error) {
	pk, err := s.tf.Peak()
	return pk.GainDB, err
}

func (s tfSubject) PeakHz() (float64, error) {
	pk, err := s.tf.Peak()
	return pk.FreqHz, err
}

func (s tfSubject) PeakingDB() (float64, error) { return s.tf.PeakingDB() }

func (s tfSubject) F0Hz() (float64, error) {
	p, err := s.tf.DominantPair()
	return p.F0Hz, err
}

// ErrQInfinite means the dominant pair is on the jω axis: Q = ∞, a
// figure with no statistics and no limit to judge.
var ErrQInfinite = errors.New("Q is infinite: the dominant pole pair is on the jω axis")

func (s tfSubject) Q() (float64, error) {
	p, err := s.tf.DominantPair()
	if err == nil && math.IsInf(p.Q, 1) {
		return p.Q, ErrQInfinite
	}
	return p.Q, err
}

// DCGainDB is −Inf for a zero at DC (or H ≡ 0) and +Inf for a pole there.
func (s tfSubject) DCGainDB() (float64, error) {
	dc := s.tf.DCGain()
	switch {
	case s.tf.Gain == 0 || dc.Power > 0:
		return math.Inf(-1), nil
	case dc.Power < 0:
		return math.Inf(1), nil
	}
	return dc.GainDB, nil
}
