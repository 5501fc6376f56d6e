package analysis

import (
	"fmt"
	"math"
	"strings"

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
// and must not modify c. A run whose Eval fails (a singular draw, no −3 dB
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
// Invariant: len(names) == len(metrics).
type MetricEvaluator struct {
	in      mna.Input
	out     mna.Output
	names   []string
	metrics []Metric
}

// NewMetricEvaluator parses the metric names (an unknown one is an error
// listing the valid ones) and checks that the nominal circuit gives every
// metric a finite value for this input and output.
func NewMetricEvaluator(nominal *netlist.Circuit, in mna.Input, out mna.Output, metrics []string) (*MetricEvaluator, error) {
	if len(metrics) == 0 {
		return nil, fmt.Errorf("no metric given (metrics: %s)", strings.Join(metricNames, ", "))
	}
	e := &MetricEvaluator{in: in, out: out, names: append([]string(nil), metrics...)}
	for _, name := range metrics {
		m, err := ParseMetric(name)
		if err != nil {
			return nil, err
		}
		e.metrics = append(e.metrics, m)
	}
	if _, err := e.Eval(nominal); err != nil {
		return nil, fmt.Errorf("nominal circuit: %w", err)
	}
	return e, nil
}

// Metrics returns the metric names as given, in order.
func (e *MetricEvaluator) Metrics() []string { return e.names }

// Eval builds the MNA system of c and returns one value per metric.
func (e *MetricEvaluator) Eval(c *netlist.Circuit) ([]float64, error) {
	sys, err := mna.Build(c, e.in, e.out)
	if err != nil {
		return nil, err
	}
	tf, err := Extract(sys)
	if err != nil {
		return nil, err
	}
	out := make([]float64, len(e.metrics))
	for i, m := range e.metrics {
		v, err := m.Eval(tf)
		if err != nil {
			return nil, err
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("%s is %v", m.Name, v)
		}
		out[i] = v
	}
	return out, nil
}

// metricUnit returns the unit of a metric's values ("dB", "deg", "Hz",
// or "" for q and for names ParseMetric does not know).
func metricUnit(name string) string {
	m, err := ParseMetric(name)
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
