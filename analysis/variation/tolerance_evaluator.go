package variation

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strings"

	"nodal/analysis/loop"
	"nodal/analysis/noise"
	"nodal/analysis/transfer"
	"nodal/mna"
	"nodal/netlist"
)

// Evaluator computes the response metrics of one circuit. It is what the
// tolerance engines (MonteCarlo, WorstCase, Sensitivity) vary a circuit
// against, so they do not depend on how a metric is computed.
//
// Metrics names the values Eval returns, in order, spelt as the user wrote
// them ("gain@1kHz", "f3db"); for a name ParseMetric knows, the unit
// follows from it (dB, deg, Hz or none), otherwise the value is treated as
// a plain ratio. Eval must be safe for concurrent use by many goroutines
// and must neither modify c nor keep it after returning (the engines vary
// one copy of the circuit per goroutine in place, run after run). A run whose Eval fails (a singular draw, no −3 dB
// point) is counted as failed, not fatal.
type Evaluator interface {
	Metrics() []string
	Eval(c *netlist.Circuit) ([]float64, error)
}

// MetricEvaluator is the standard Evaluator: for each circuit it builds the
// MNA system for one input and output, extracts the exact transfer
// function (Extract) and evaluates each Metric on it (Metric.Eval), so
// tolerance figures use the same definitions as every other report. A
// non-finite value (dc of a high-pass, −Inf dB) fails the run.
//
// When every metric is a spot value (gain@F, phase@F, dc) the poles are
// not needed: H is solved directly at each F (and at s = 0), about a
// hundred times faster. On both paths a phase is moved by whole turns to
// the branch nearest the nominal circuit's Metric value: the factor
// phases of Metric.Eval can land a varied circuit 360° away (a far zero
// changing sides), which would wreck the statistics.
//
// Invariant: len(names) == len(metrics) == len(phaseRefDeg).
type MetricEvaluator struct {
	in      mna.Input
	out     mna.Output
	names   []string
	metrics []transfer.Metric
	// spot is true when every metric is gain@F, phase@F or dc.
	spot bool
	// phaseRefDeg holds the nominal value of each phase@F metric.
	phaseRefDeg []float64
	// tempK is the resistors' temperature of the noise metrics (K).
	tempK float64
	// direct, when not nil, evaluates runs by restamping and direct
	// solves (tolerance_direct.go), falling back to the paths above.
	direct *directPath
	// swept, when not nil, evaluates every run by direct solves of H
	// (tolerance_swept.go): the extraction refused the nominal circuit.
	swept *sweptPath
}

// NewMetricEvaluator parses the metric names (an unknown one is an error
// listing the valid ones) and checks that the nominal circuit gives every
// metric a finite value for this input and output.
func NewMetricEvaluator(nominal *netlist.Circuit, in mna.Input, out mna.Output, metrics []string) (*MetricEvaluator, error) {
	return NewMetricEvaluatorAt(nominal, in, out, metrics, noise.DefaultTempK)
}

// NewMetricEvaluatorAt is NewMetricEvaluator with the noise metrics
// (noise@F, noise_rms@F1..F2) taken with every resistor at tempK kelvin.
func NewMetricEvaluatorAt(nominal *netlist.Circuit, in mna.Input, out mna.Output, metrics []string, tempK float64) (*MetricEvaluator, error) {
	if len(metrics) == 0 {
		return nil, fmt.Errorf("no metric given (metrics: %s)", strings.Join(netlist.MetricNames(), ", "))
	}
	e := &MetricEvaluator{in: in, out: out, names: append([]string(nil), metrics...), tempK: tempK}
	for _, name := range metrics {
		m, err := transfer.ParseMetric(name)
		if err != nil {
			return nil, err
		}
		e.metrics = append(e.metrics, m)
	}
	e.spot = true
	for _, m := range e.metrics {
		e.spot = e.spot && m.Spec.Spot
	}
	nom, err := e.evalExtract(nominal, false)
	if err != nil && Refused(err) {
		// A circuit the extraction refuses (too large, ill-conditioned)
		// takes the swept path when its metrics allow it.
		sp, serr := newSweptPath(e, nominal)
		if serr != nil {
			return nil, fmt.Errorf("nominal circuit: %w; by direct solves: %w", err, serr)
		}
		e.phaseRefDeg = make([]float64, len(e.metrics))
		if nom, err = sp.eval(e, nominal); err != nil {
			return nil, fmt.Errorf("nominal circuit: %w", err)
		}
		e.phaseRefDeg, e.swept = nom, sp
		return e, nil
	}
	if err != nil && e.spot {
		// Spot metrics need no transfer function (the runs take evalSpot
		// too): a circuit too large to extract is solved at each point,
		// its phases taken on the principal branch.
		e.phaseRefDeg = make([]float64, len(e.metrics))
		nom, err = e.evalSpot(nominal)
	}
	if err != nil {
		return nil, fmt.Errorf("nominal circuit: %w", err)
	}
	e.phaseRefDeg = nom
	e.direct = newDirectPath(e, nominal)
	return e, nil
}

// Metrics returns the metric names as given, in order.
func (e *MetricEvaluator) Metrics() []string { return e.names }

// Eval builds the MNA system of c and returns one value per metric. A
// circuit that is not stable is an error wrapping stability.ErrUnstable (its
// metrics do not exist), so tolerance runs count it.
func (e *MetricEvaluator) Eval(c *netlist.Circuit) ([]float64, error) {
	if e.swept != nil {
		return e.swept.eval(e, c)
	}
	if e.direct != nil {
		if v, err := e.direct.eval(e, c); !errors.Is(err, errUncertain) {
			return v, err
		}
	}
	if e.spot {
		if err := loop.NewCircuit(c).CheckStable(); err != nil {
			return nil, err
		}
		return e.evalSpot(c)
	}
	return e.evalExtract(c, true)
}

// Refused reports whether err is the extraction refusing a circuit (too
// large, ill-conditioned) rather than a metric failing on it.
func Refused(err error) bool {
	return errors.Is(err, transfer.ErrIllConditioned) || errors.Is(err, transfer.ErrTooLarge)
}

// evalSpot evaluates gain@F, phase@F and dc from H solved at each point.
func (e *MetricEvaluator) evalSpot(c *netlist.Circuit) ([]float64, error) {
	sys, err := mna.Build(c, e.in, e.out)
	if err != nil {
		return nil, err
	}
	return e.evalOn(spotSubject{mna.NewSweeper(sys)})
}

// evalOn evaluates every metric on sub (a subject of direct solves), each
// phase moved to the branch of the nominal value; a non-finite value is
// an error.
func (e *MetricEvaluator) evalOn(sub netlist.MetricSubject) ([]float64, error) {
	out := make([]float64, len(e.metrics))
	for i, m := range e.metrics {
		v, err := m.Spec.Eval(sub, m.Param)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", m.Name, err)
		}
		if m.Spec.Turns {
			v = e.nearBranch(i, v)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nonFiniteMetric(m.Name, v)
		}
		out[i] = v
	}
	return out, nil
}

// evalExtract evaluates every metric on the extracted transfer function
// (and the circuit, for stable and the loop metrics); with check, an
// unstable c is an error wrapping stability.ErrUnstable.
func (e *MetricEvaluator) evalExtract(c *netlist.Circuit, check bool) ([]float64, error) {
	circ := loop.NewCircuit(c)
	if check {
		if err := circ.CheckStable(); err != nil {
			return nil, err
		}
	}
	tf, err := transfer.ExtractFor(e.metrics, c, e.in, e.out)
	if err != nil {
		return nil, err
	}
	sub, err := MetricSubject(c, e.out, tf, circ, e.metrics, e.tempK)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(e.metrics))
	for i, m := range e.metrics {
		v, err := m.EvalOn(sub)
		if err != nil {
			return nil, err
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nonFiniteMetric(m.Name, v)
		}
		if m.Spec.Turns && e.phaseRefDeg != nil {
			v = e.nearBranch(i, v)
		}
		out[i] = v
	}
	return out, nil
}

// MetricSubject is what the metrics are evaluated on: tf's subject, with
// the noise of c at out when a metric needs it (noise@F, noise_rms@F1..F2),
// every resistor at tempK kelvin (0: noise.DefaultTempK). The requirement
// runs of package require use it too.
func MetricSubject(c *netlist.Circuit, out mna.Output, tf *transfer.TransferFunction, circ transfer.CircuitMetrics, metrics []transfer.Metric, tempK float64) (netlist.MetricSubject, error) {
	base := tf.SubjectIn(circ)
	for _, m := range metrics {
		if m.Spec.Noise {
			return noise.MetricSubject(c, out, base, tempK)
		}
	}
	return base, nil
}

// nearBranch moves phase metric i by whole turns to within 180° of its
// nominal value, so that draws whose roots land on another branch of the
// factor phases (or of arg H) do not jump by 360°.
func (e *MetricEvaluator) nearBranch(i int, phaseDeg float64) float64 {
	return phaseDeg - 360*math.Round((phaseDeg-e.phaseRefDeg[i])/360)
}

// spotSubject evaluates the spot quantities of the metric registry (gain
// and phase at a frequency, the DC gain) from H solved directly at that
// frequency; it has no poles, so every other quantity is an error (a
// metric whose registry entry is Spot never asks for one).
type spotSubject struct{ sw *mna.Sweeper }

// at returns H(j2πf).
func (s spotSubject) at(freqHz float64) (complex128, error) {
	h, _, err := s.sw.Eval(complex(0, omegaOf(freqHz)))
	return h, err
}

func (s spotSubject) GainDBAt(freqHz float64) (float64, error) {
	h, err := s.at(freqHz)
	return 20 * math.Log10(cmplx.Abs(h)), err
}

func (s spotSubject) PhaseDegAt(freqHz float64) (float64, error) {
	h, err := s.at(freqHz)
	return cmplx.Phase(h) * 180 / math.Pi, err
}

func (s spotSubject) DCGainDB() (float64, error) { return s.GainDBAt(0) }

var errNeedsPoles = errors.New("needs the poles and zeros, not a spot solve")

func (spotSubject) F3dBHz() (float64, error)    { return 0, errNeedsPoles }
func (spotSubject) PeakDB() (float64, error)    { return 0, errNeedsPoles }
func (spotSubject) PeakHz() (float64, error)    { return 0, errNeedsPoles }
func (spotSubject) PeakingDB() (float64, error) { return 0, errNeedsPoles }
func (spotSubject) F0Hz() (float64, error)      { return 0, errNeedsPoles }
func (spotSubject) Q() (float64, error)         { return 0, errNeedsPoles }

var errNeedsCircuit = errors.New("is judged on the whole circuit, not on a spot solve of one response")

func (spotSubject) Stable() (bool, error)                   { return false, errNeedsCircuit }
func (spotSubject) PhaseMarginDeg(string) (float64, error)  { return 0, errNeedsCircuit }
func (spotSubject) GainMarginDB(string) (float64, error)    { return 0, errNeedsCircuit }
func (spotSubject) CrossoverHz(string) (float64, error)     { return 0, errNeedsCircuit }
func (spotSubject) NoiseDensityAt(float64) (float64, error) { return 0, netlist.ErrNeedsNoise }
func (spotSubject) NoiseRMS(_, _ float64) (float64, error)  { return 0, netlist.ErrNeedsNoise }

// metricUnit returns the unit of a metric's values ("dB", "deg", "Hz",
// or "" for q and for names ParseMetric does not know).
func metricUnit(name string) string {
	m, err := transfer.ParseMetric(name)
	if err != nil {
		return ""
	}
	return m.Unit()
}

// metricPerPercent reports whether a metric's sensitivity is given as an
// absolute change per % (dB and degree metrics) rather than normalised.
func metricPerPercent(name string) bool {
	u := metricUnit(name)
	return u == "dB" || u == "deg"
}

// omegaOf converts Hz to rad/s.
func omegaOf(fHz float64) float64 { return 2 * math.Pi * fHz }

// nonFiniteMetric explains a metric value that has no statistics: −∞ dB
// (a zero of H at that frequency, e.g. the dc gain of a high-pass), +∞
// (a pole there) or undefined.
func nonFiniteMetric(name string, v float64) error {
	switch {
	case math.IsInf(v, -1):
		return fmt.Errorf("%s is −∞ dB (H has a zero there, e.g. the DC gain of a high-pass): no statistics; choose another metric", name)
	case math.IsInf(v, 1):
		return fmt.Errorf("%s is +∞ (H has a pole there): no statistics; choose another metric", name)
	}
	return fmt.Errorf("%s is undefined for this circuit", name)
}
