package netlist

import (
	"fmt"
	"strings"
)

// metricSpec describes a requirement metric: whether it is taken at a
// frequency (gain@1kHz) or around a gain element (phase_margin@U1),
// whether it takes no limit (stable), and the unit of its limits.
type metricSpec struct {
	name   string
	atFreq bool
	unit   string
	atPart bool
	bare   bool
}

// metricSpecs lists the metrics of `require`, shared with the analysis
// layer through MetricNames and ParseMetric.
var metricSpecs = []metricSpec{
	{name: "gain", atFreq: true, unit: UnitDecibel},  // gain at F, dB
	{name: "phase", atFreq: true, unit: UnitDegree},  // phase at F, degrees
	{name: "f3db", atFreq: false, unit: UnitHertz},   // -3 dB frequency, Hz
	{name: "peak", atFreq: false, unit: UnitDecibel}, // peak gain, dB
	{name: "fpeak", atFreq: false, unit: UnitHertz},  // frequency of the peak, Hz
	{name: "f0", atFreq: false, unit: UnitHertz},     // natural frequency, Hz
	{name: "q", atFreq: false, unit: ""},             // quality factor
	{name: "dc", atFreq: false, unit: UnitDecibel},   // gain at DC, dB
	// the loop gain around a gain element (see `nodal loop`)
	{name: "phase_margin", unit: UnitDegree, atPart: true}, // degrees
	{name: "gain_margin", unit: UnitDecibel, atPart: true}, // dB
	{name: "crossover", unit: UnitHertz, atPart: true},     // highest gain crossover, Hz
	// every natural frequency in the open left half-plane; no limit
	{name: "stable", bare: true},
}

// MetricNames lists the metrics a requirement may name, as written:
// "gain@F" and "phase@F" take a frequency F ("gain@1kHz"),
// "phase_margin@PART" and the other loop metrics a gain element
// ("phase_margin@U1"); "stable" takes no limit.
func MetricNames() []string {
	out := make([]string, len(metricSpecs))
	for i, m := range metricSpecs {
		out[i] = m.name
		if m.atFreq {
			out[i] += "@F"
		}
		if m.atPart {
			out[i] += "@PART"
		}
	}
	return out
}

// MetricPart returns the gain element of a loop metric as written
// ("U1" for "phase_margin@U1"), "" for any other metric.
func MetricPart(s string) string {
	name, at, _ := strings.Cut(s, "@")
	if m, ok := findMetric(name); ok && m.atPart {
		return at
	}
	return ""
}

// MetricIsBare reports whether a metric takes no limit (`require stable`).
func MetricIsBare(name string) bool {
	m, ok := findMetric(name)
	return ok && m.bare
}

// MetricUnit returns the unit of a metric's values and limits ("dB",
// "deg", "Hz" or "" for q); ok is false for an unknown metric name.
func MetricUnit(name string) (unit string, ok bool) {
	name, _, _ = strings.Cut(name, "@") // gain@1kHz is a gain metric
	if m, found := findMetric(strings.TrimSuffix(name, "@F")); found {
		return m.unit, true
	}
	return "", false
}

func findMetric(name string) (metricSpec, bool) {
	for _, m := range metricSpecs {
		if m.name == name {
			return m, true
		}
	}
	return metricSpec{}, false
}

// ParseMetric splits a metric as written ("gain@1kHz", "f3db") into its
// name and its frequency in Hz (0 for metrics not taken at a frequency).
func ParseMetric(s string) (name string, freqHz float64, err error) {
	name, at, hasAt := strings.Cut(s, "@")
	m, ok := findMetric(name)
	if !ok {
		return "", 0, fmt.Errorf("unknown metric %q (metrics: %s)", name, strings.Join(MetricNames(), ", "))
	}
	switch {
	case m.atPart && (!hasAt || at == ""):
		return "", 0, fmt.Errorf("metric %s needs the gain element of the loop, as in %s@U1", name, name)
	case m.atPart:
		return name, 0, nil
	case m.atFreq && !hasAt:
		return "", 0, fmt.Errorf("metric %s needs a frequency, as in %s@1kHz", name, name)
	case !m.atFreq && hasAt:
		return "", 0, fmt.Errorf("metric %s takes no frequency", name)
	case !hasAt:
		return name, 0, nil
	}
	f, err := ParseValue(at, UnitHertz)
	if err != nil {
		return "", 0, fmt.Errorf("metric %s: %w", s, err)
	}
	if !(f > 0) {
		return "", 0, fmt.Errorf("metric %s: the frequency must be > 0", s)
	}
	return name, f, nil
}

func (e *elab) require(r *RequireStmt) {
	metric := r.Metric.Name
	if r.At != nil {
		metric += "@" + r.At.Sign + r.At.Value
	}
	if r.AtPart != nil {
		metric += "@" + r.AtPart.Name
	}
	if _, ok := findMetric(r.Metric.Name); !ok {
		hint := suggest(r.Metric.Name, metricNamesPlain())
		if hint == "" {
			hint = "metrics: " + strings.Join(MetricNames(), ", ")
		}
		e.errorf(r.Metric.Pos, hint, "unknown metric %q", r.Metric.Name)
		return
	}
	if _, _, err := ParseMetric(metric); err != nil {
		e.errorf(r.Metric.Pos, "", "%v", err)
		return
	}
	m, _ := findMetric(r.Metric.Name)
	req := Requirement{Metric: metric, Pos: e.f.Position(r.Pos)}
	switch {
	case m.bare && r.Op != "":
		e.errorf(r.Lo.Pos, "write require "+m.name, "%s takes no limit", m.name)
		return
	case m.bare:
		req.Op = Holds
		req.Text = string(e.f.Source[r.Pos.Offset:tokensEnd(r.Pos.Offset, r.Tokens)])
		e.c.Requirements = append(e.c.Requirements, req)
		return
	case r.Op == "":
		e.errorf(r.Metric.Pos, "write within LO..HI, below HI or above LO", "require %s needs a limit", metric)
		return
	}
	limit := func(l *Limit) (float64, bool) {
		v, err := ParseValue(l.Sign+l.Value, m.unit)
		if err != nil {
			want := m.unit
			if want == "" {
				want = "a plain number"
			}
			e.errorf(l.Pos, "", "limit of %s must be %s: %v", m.name, want, err)
			return 0, false
		}
		return v, true
	}
	lo, ok := limit(r.Lo)
	if !ok {
		return
	}
	switch r.Op {
	case "within":
		if r.Hi == nil {
			e.errorf(r.Lo.Pos, "write LO..HI", "within needs a range")
			return
		}
		hi, ok := limit(r.Hi)
		if !ok {
			return
		}
		if lo > hi {
			e.errorf(r.Lo.Pos, "", "empty range: %v > %v", lo, hi)
			return
		}
		req.Op, req.Lo, req.Hi = Within, lo, hi
	case "below", "above":
		if r.Hi != nil {
			e.errorf(r.Hi.Pos, "use within LO..HI for a range", "%s takes one limit", r.Op)
			return
		}
		req.Op, req.Hi = Below, lo
		if r.Op == "above" {
			req.Op, req.Lo, req.Hi = Above, lo, 0
		}
	}
	req.Text = string(e.f.Source[r.Pos.Offset:tokensEnd(r.Pos.Offset, r.Tokens)])
	e.c.Requirements = append(e.c.Requirements, req)
}

func metricNamesPlain() []string {
	out := make([]string, len(metricSpecs))
	for i, m := range metricSpecs {
		out[i] = m.name
	}
	return out
}
