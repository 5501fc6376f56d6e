package analysis

import (
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"nodal/netlist"
)

// MetricKind is what a Metric measures.
type MetricKind int

const (
	// MetricGainAt is "gain@FREQ": 20·log10|H(j2πf)|, dB.
	MetricGainAt MetricKind = iota + 1
	// MetricPhaseAt is "phase@FREQ": the phase of H(j2πf), degrees, as
	// TransferFunction.PhaseDeg (continuous sum of factor phases).
	MetricPhaseAt
	// MetricF3dB is "f3db": the lowest −3 dB frequency, Hz (see F3dB for
	// the reference gain: DC gain, high-pass gain, or band-pass peak).
	MetricF3dB
	// MetricPeak is "peak": the largest gain on the frequency axis, dB.
	MetricPeak
	// MetricFPeak is "fpeak": where the peak occurs, Hz (0 at DC).
	MetricFPeak
	// MetricF0 is "f0": the natural frequency ω0/(2π) of the dominant
	// second-order section (see DominantPair), Hz.
	MetricF0
	// MetricQ is "q": the quality factor of the dominant second-order
	// section (see DominantPair); at most 0.5 when its poles are real.
	MetricQ
	// MetricDC is "dc": the DC gain, dB (−Inf for a zero at DC, +Inf for
	// a pole at DC).
	MetricDC
	// MetricStable is "stable": 1 when every natural frequency of the
	// circuit is in the open left half-plane, else 0 (analysis/stability).
	MetricStable
	// MetricPhaseMargin is "phase_margin@PART": the smallest phase margin
	// of the loop gain around PART over its gain crossovers, degrees.
	MetricPhaseMargin
	// MetricGainMargin is "gain_margin@PART": the smallest gain margin of
	// that loop gain over its phase crossovers, dB.
	MetricGainMargin
	// MetricCrossover is "crossover@PART": its highest gain crossover, Hz.
	MetricCrossover
)

// metricNames spells every metric as netlist.MetricNames does, with the
// frequency placeholder written FREQ (gain@FREQ). Read-only.
var metricNames = metricNameList()

// metricNameList returns netlist.MetricNames with "@F" spelled "@FREQ".
func metricNameList() []string {
	names := netlist.MetricNames()
	for i, n := range names {
		if base, ok := strings.CutSuffix(n, "@F"); ok {
			names[i] = base + "@FREQ"
		}
	}
	return names
}

// Metric is a parsed requirement or tolerance metric, as spelled in a
// `require` statement or on the command line.
//
// Invariant: FreqHz > 0 (finite) exactly when Kind is MetricGainAt or
// MetricPhaseAt.
type Metric struct {
	Kind   MetricKind
	FreqHz float64 // the frequency after '@', Hz
	Part   string  // the gain element after '@' of a loop metric
	Name   string  // the spelling parsed
}

// String returns the metric as it was written.
func (m Metric) String() string { return m.Name }

// Unit returns the unit of the metric's value: "dB", "deg", "Hz" or "".
func (m Metric) Unit() string {
	switch m.Kind {
	case MetricGainAt, MetricPeak, MetricDC, MetricGainMargin:
		return "dB"
	case MetricPhaseAt, MetricPhaseMargin:
		return "deg"
	case MetricF3dB, MetricFPeak, MetricF0, MetricCrossover:
		return "Hz"
	}
	return ""
}

// ErrNoPolePair means the q or f0 metric was asked of a transfer function
// without a second-order section: no complex pole pair and fewer than two
// real poles of one sign (see DominantPair).
var ErrNoPolePair = errors.New("no complex pole pair nor two real poles of one sign")

// ParseMetric parses a metric as spelled in a `require` statement:
// gain@FREQ, phase@FREQ, f3db, peak, fpeak, f0, q or dc, with FREQ a
// positive frequency value in the file format's syntax (1kHz, 20k, 1k5,
// 500Hz, ...). The spelling is the one netlist.ParseMetric accepts, so a
// metric that parses in a file also parses here. Errors list the valid
// metrics.
func ParseMetric(name string) (Metric, error) {
	base, freqHz, err := netlist.ParseMetric(name)
	if err != nil {
		return Metric{}, fmt.Errorf("%w; valid metrics are %s", err, strings.Join(metricNames, ", "))
	}
	m := Metric{Name: name, FreqHz: freqHz, Part: netlist.MetricPart(name)}
	switch base {
	case "gain":
		m.Kind = MetricGainAt
	case "phase":
		m.Kind = MetricPhaseAt
	case "f3db":
		m.Kind = MetricF3dB
	case "peak":
		m.Kind = MetricPeak
	case "fpeak":
		m.Kind = MetricFPeak
	case "f0":
		m.Kind = MetricF0
	case "q":
		m.Kind = MetricQ
	case "dc":
		m.Kind = MetricDC
	case "stable":
		m.Kind = MetricStable
	case "phase_margin":
		m.Kind = MetricPhaseMargin
	case "gain_margin":
		m.Kind = MetricGainMargin
	case "crossover":
		m.Kind = MetricCrossover
	default:
		return Metric{}, fmt.Errorf("metric %q is not evaluated by this version; valid metrics are %s", name, strings.Join(metricNames, ", "))
	}
	if hasFreq := m.Kind == MetricGainAt || m.Kind == MetricPhaseAt; hasFreq != (freqHz > 0) || math.IsInf(freqHz, 0) {
		return Metric{}, fmt.Errorf("metric %q: frequency %g Hz out of range", name, freqHz)
	}
	return m, nil
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
	if len(rp) < 2 {
		return RootPair{}, ErrNoPolePair
	}
	sort.SliceStable(rp, func(a, b int) bool { return rp[a].OmegaRad < rp[b].OmegaRad })
	p1, p2 := rp[0].Root, rp[1].Root
	prod, sum := p1*p2, p1+p2
	if prod < 0 || (prod == 0 && sum == 0) {
		return RootPair{}, fmt.Errorf("real poles %.4g and %.4g rad/s: %w", p1, p2, ErrNoPolePair)
	}
	w0 := math.Sqrt(prod)
	q := w0 / -sum
	return RootPair{Root: complex(p1, 0), Other: complex(p2, 0), OmegaRad: w0, F0Hz: w0 / (2 * math.Pi), Q: q, Zeta: -sum / (2 * w0)}, nil
}

// Eval returns the metric's value for tf in the metric's unit (Unit).
func (m Metric) Eval(tf *TransferFunction) (float64, error) {
	switch m.Kind {
	case MetricGainAt:
		return tf.GainDB(2 * math.Pi * m.FreqHz), nil
	case MetricPhaseAt:
		return tf.PhaseDeg(2 * math.Pi * m.FreqHz), nil
	case MetricF3dB:
		bw, err := tf.F3dB()
		if err != nil {
			return 0, fmt.Errorf("%s: %w", m.Name, err)
		}
		if len(bw.CrossingsHz) == 0 {
			return 0, fmt.Errorf("%s: the gain never falls 3 dB below %.4g dB", m.Name, bw.RefDB)
		}
		return bw.CrossingsHz[0], nil
	case MetricPeak, MetricFPeak:
		pk, err := tf.Peak()
		if err != nil {
			return 0, fmt.Errorf("%s: %w", m.Name, err)
		}
		if m.Kind == MetricPeak {
			return pk.GainDB, nil
		}
		return pk.FreqHz, nil
	case MetricF0, MetricQ:
		p, err := tf.DominantPair()
		if err != nil {
			return 0, fmt.Errorf("%s: %w", m.Name, err)
		}
		if m.Kind == MetricF0 {
			return p.F0Hz, nil
		}
		return p.Q, nil
	case MetricDC:
		dc := tf.DCGain()
		switch {
		case tf.Gain == 0 || dc.Power > 0:
			return math.Inf(-1), nil
		case dc.Power < 0:
			return math.Inf(1), nil
		}
		return dc.GainDB, nil
	}
	if m.circuitMetric() {
		return 0, fmt.Errorf("metric %s is judged on the circuit, not on one transfer function", m.Name)
	}
	return 0, fmt.Errorf("metric %q not parsed", m.Name)
}
