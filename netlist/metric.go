package netlist

import (
	"fmt"
	"math"
	"strings"
)

// metricSpec describes a requirement metric: whether it is taken at a
// frequency (gain@1kHz) and the unit of its limits.
type metricSpec struct {
	name   string
	atFreq bool
	unit   string
}

// metricSpecs lists the metrics of `require`, shared with the analysis
// layer through MetricNames and ParseMetric.
var metricSpecs = []metricSpec{
	{"gain", true, UnitDecibel},  // gain at F, dB
	{"phase", true, UnitDegree},  // phase at F, degrees
	{"f3db", false, UnitHertz},   // -3 dB frequency, Hz
	{"peak", false, UnitDecibel}, // peak gain, dB
	{"fpeak", false, UnitHertz},  // frequency of the peak, Hz
	{"f0", false, UnitHertz},     // natural frequency, Hz
	{"q", false, ""},             // quality factor
	{"dc", false, UnitDecibel},   // gain at DC, dB
}

// MetricNames lists the metrics a requirement may name, as written:
// "gain@F" and "phase@F" take a frequency F ("gain@1kHz").
func MetricNames() []string {
	out := make([]string, len(metricSpecs))
	for i, m := range metricSpecs {
		out[i] = m.name
		if m.atFreq {
			out[i] += "@F"
		}
	}
	return out
}

// MetricUnit returns the unit of a metric's values and limits ("dB",
// "deg", "Hz" or "" for q); ok is false for an unknown metric name.
func MetricUnit(name string) (unit string, ok bool) {
	if i := strings.IndexByte(name, '@'); i >= 0 {
		name = name[:i] + "@F" // gain@1kHz is a gain@F metric
	}
	if m, found := findMetric(name); found {
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
	if f > MaxFrequencyHz {
		return "", 0, fmt.Errorf("metric %s: the frequency is out of range: frequencies go up to %s", s, FormatEng(MaxFrequencyHz, UnitHertz))
	}
	return name, f, nil
}

// MaxFrequencyHz is the highest frequency nodal evaluates, in Hz: above
// it ω = 2π·f overflows a float64 (about 2.9e307 Hz).
const MaxFrequencyHz = math.MaxFloat64 / (2 * math.Pi)

func (e *elab) require(r *RequireStmt) {
	metric := r.Metric.Name
	if r.At != nil {
		metric += "@" + r.At.Sign + r.At.Value
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
