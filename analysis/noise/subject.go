package noise

import (
	"context"
	"fmt"
	"math"

	"nodal/mna"
	"nodal/netlist"
)

// DefaultTempK is the temperature (K) of the noise metrics of `require`,
// `nodal tolerance` and the report (noise@F and noise_rms@F1..F2) when
// no other is given.
const DefaultTempK = 300

// metricSubject answers the noise quantities of the metric registry from an
// Analyzer and every other quantity from the subject it wraps.
type metricSubject struct {
	netlist.MetricSubject
	a       *Analyzer
	scratch []float64
}

// MetricSubject returns base with NoiseDensityAt and NoiseRMS answered by
// the noise of c at the output out, every resistor at tempK kelvin (0:
// DefaultTempK). The noise metrics are
// in V/√Hz and V: an output that is not a node voltage is refused when a
// noise quantity is asked for. Not safe for concurrent use.
func MetricSubject(c *netlist.Circuit, out mna.Observation, base netlist.MetricSubject, tempK float64) (netlist.MetricSubject, error) {
	if tempK == 0 {
		tempK = DefaultTempK
	}
	a, err := New(c, Config{Out: out, TempK: tempK})
	if err != nil {
		return nil, err
	}
	return MetricSubjectOf(a, base), nil
}

// MetricSubjectOf returns base with NoiseDensityAt and NoiseRMS answered
// by a, as MetricSubject does (the same computation), for a caller that
// keeps one Analyzer and revalues it (Analyzer.Revalue). Not safe for
// concurrent use.
func MetricSubjectOf(a *Analyzer, base netlist.MetricSubject) netlist.MetricSubject {
	return &metricSubject{MetricSubject: base, a: a}
}

func (s *metricSubject) voltage() error {
	if s.a.OutUnit != "V" {
		return fmt.Errorf("noise metrics are in V/√Hz and V; the output %s is a current", s.a.Output)
	}
	return nil
}

// NoiseDensityAt is the output noise density at freqHz, V/√Hz.
func (s *metricSubject) NoiseDensityAt(freqHz float64) (float64, error) {
	if err := s.voltage(); err != nil {
		return 0, err
	}
	if len(s.scratch) != len(s.a.Sources) {
		s.scratch = make([]float64, len(s.a.Sources))
	}
	psd, _, err := s.a.At(freqHz, s.scratch)
	return math.Sqrt(psd), err
}

// NoiseRMS is the output RMS noise over loHz..hiHz, V, integrated as
// Analyzer.Integrate does.
func (s *metricSubject) NoiseRMS(loHz, hiHz float64) (float64, error) {
	if err := s.voltage(); err != nil {
		return 0, err
	}
	r, err := s.a.Integrate(context.Background(), loHz, hiHz)
	if err != nil {
		return 0, err
	}
	return r.OutRMS, nil
}
