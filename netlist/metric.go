package netlist

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"nodal/netlist/syntax"
)

// MetricParamKind says what a metric takes after '@'.
type MetricParamKind int

// The parameter kinds. A metric of kind MetricParamPart or MetricParamBand
// is written NAME@PART (phase_margin@U1: the part whose control is broken
// for the loop gain) or NAME@F1..F2 (noise_rms@20Hz..20kHz: a band, F1 < F2,
// Hz); the parser reads them so that a metric of that kind needs only its
// registry entry.
const (
	MetricParamNone MetricParamKind = iota // f3db: nothing after the name
	MetricParamFreq                        // gain@1kHz: a frequency > 0, Hz
	MetricParamPart                        // NAME@PART: a part name
	MetricParamBand                        // NAME@F1..F2: a frequency band, Hz
)

// Placeholder is how the parameter is written in help and messages: "",
// "F", "PART" or "F1..F2".
func (k MetricParamKind) Placeholder() string {
	switch k {
	case MetricParamFreq:
		return "F"
	case MetricParamPart:
		return "PART"
	case MetricParamBand:
		return "F1..F2"
	}
	return ""
}

// MetricParam is the parameter of one metric as written: FreqHz for
// MetricParamFreq, Part for MetricParamPart, LoHz and HiHz (LoHz < HiHz)
// for MetricParamBand; the other fields are zero.
type MetricParam struct {
	FreqHz     float64
	Part       string
	LoHz, HiHz float64
}

// MetricSubject is what a metric is evaluated on: the response of one
// output to one input. Frequencies are in Hz. An implementation that
// cannot give a quantity (a spot solve has no poles) returns an error;
// a quantity that does not exist (no −3 dB point) is an error saying why.
// A metric that needs a new quantity (loop gain at a broken part, noise
// density) adds a method here and its registry entry.
type MetricSubject interface {
	GainDBAt(freqHz float64) (float64, error)   // 20·log10|H(j2πf)|, dB
	PhaseDegAt(freqHz float64) (float64, error) // arg H(j2πf), degrees
	DCGainDB() (float64, error)                 // gain at DC, dB (±Inf for a zero or pole at DC)
	F3dBHz() (float64, error)                   // the lowest −3 dB frequency, Hz
	PeakDB() (float64, error)                   // the largest gain on the jω axis, dB
	PeakHz() (float64, error)                   // where it occurs, Hz
	PeakingDB() (float64, error)                // the peak above the passband reference of a low- or high-pass, dB
	F0Hz() (float64, error)                     // natural frequency of the dominant pair, Hz
	Q() (float64, error)                        // quality factor of the dominant pair

	// The quantities judged on the whole circuit rather than on the
	// response of the probe (a subject that has no circuit returns an
	// error saying so):
	Stable() (bool, error)                       // every natural frequency in the open left half-plane
	PhaseMarginDeg(part string) (float64, error) // smallest phase margin of the loop gain around part, degrees
	GainMarginDB(part string) (float64, error)   // smallest gain margin of that loop gain, dB
	CrossoverHz(part string) (float64, error)    // highest gain crossover of that loop gain, Hz

	// NoiseDensityAt is the output noise density at f (V/√Hz for a voltage
	// output) and NoiseRMS the output RMS noise over loHz..hiHz (V): they
	// need the circuit's noise sources, which a transfer function alone
	// does not have (see MetricSpec.Noise).
	NoiseDensityAt(freqHz float64) (float64, error)
	NoiseRMS(loHz, hiHz float64) (float64, error)
}

// ErrNeedsNoise is what a subject without noise sources (a transfer
// function, a spot solve) answers to NoiseDensityAt and NoiseRMS.
var ErrNeedsNoise = errors.New("a noise metric needs the circuit's noise sources, not a transfer function")

// UnitVoltPerRootHz is the unit of a noise density metric. Its limits are
// written in volts per root hertz without the "/√Hz" (noise@1kHz below
// 20nV), since a limit is one value token.
const UnitVoltPerRootHz = "V/√Hz"

// LimitUnit returns the unit a limit of the metric is written in: Unit,
// except V for a density in V/√Hz.
func (m MetricSpec) LimitUnit() string {
	if m.Unit == UnitVoltPerRootHz {
		return UnitVolt
	}
	return m.Unit
}

// MetricSpec is one entry of the metric registry: how the metric is
// written, the unit of its values and limits, what it takes after '@'
// and how it is evaluated.
type MetricSpec struct {
	Name  string          // as written before '@'
	Unit  string          // of values and limits: "dB", "deg", "Hz" or "" (a ratio)
	Param MetricParamKind // what follows '@'
	// Spot is true when Eval reads only GainDBAt, PhaseDegAt or DCGainDB,
	// so a direct solve at the metric's frequency serves without
	// extracting poles and zeros (the fast path of tolerance runs).
	Spot bool
	// Turns is true for a phase: values are kept within ±180° of the
	// nominal value across tolerance draws (a whole turn is the same phase).
	Turns bool
	// Circuit is true when Eval reads the circuit (Stable or a loop gain
	// around a part), not the response of the requirement's probe.
	Circuit bool
	// Bare is true for a yes/no property written without a limit
	// (`require stable`): Eval returns 1 for yes and 0 for no, and the
	// requirement's comparison is Holds.
	Bare bool
	// Noise is true when Eval reads NoiseDensityAt or NoiseRMS: the
	// evaluator must give the subject the circuit's noise analysis.
	Noise bool
	// Help says in a few words what the metric is.
	Help string
	// Label names the metric in words for axis labels and headings, with
	// "F" standing for the frequency parameter ("gain at F"): "−3 dB
	// frequency", never "f3db".
	Label string
	// Eval returns the metric of s for the parameter p, in Unit.
	Eval func(s MetricSubject, p MetricParam) (float64, error)
}

// Written returns the metric as written in help, with its placeholder:
// "gain@F", "f3db".
func (m MetricSpec) Written() string {
	if ph := m.Param.Placeholder(); ph != "" {
		return m.Name + "@" + ph
	}
	return m.Name
}

// metricSpecs is the metric registry: the one list of metrics that
// `require`, `nodal tolerance`, `nodal verify`, `nodal snap` and the
// report read. Read-only.
var metricSpecs = []MetricSpec{
	{Name: "gain", Label: "gain at F", Unit: UnitDecibel, Param: MetricParamFreq, Spot: true, Help: "gain at F, dB",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.GainDBAt(p.FreqHz) }},
	{Name: "phase", Label: "phase at F", Unit: UnitDegree, Param: MetricParamFreq, Spot: true, Turns: true, Help: "phase at F, degrees",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.PhaseDegAt(p.FreqHz) }},
	{Name: "f3db", Label: "−3 dB frequency", Unit: UnitHertz, Help: "lowest −3 dB frequency, Hz",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.F3dBHz() }},
	{Name: "peak", Label: "peak gain", Unit: UnitDecibel, Help: "largest gain, dB",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.PeakDB() }},
	{Name: "peaking", Label: "peaking above the passband", Unit: UnitDecibel, Help: "peak above the passband gain of a low- or high-pass, dB",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.PeakingDB() }},
	{Name: "fpeak", Label: "frequency of the peak", Unit: UnitHertz, Help: "frequency of the peak, Hz",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.PeakHz() }},
	{Name: "f0", Label: "natural frequency f0", Unit: UnitHertz, Help: "natural frequency of the dominant pair, Hz",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.F0Hz() }},
	{Name: "q", Label: "quality factor Q", Unit: "", Help: "quality factor of the dominant pair",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.Q() }},
	{Name: "dc", Label: "DC gain", Unit: UnitDecibel, Spot: true, Help: "gain at DC, dB",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) { return s.DCGainDB() }},
	// the loop gain around a gain element (see `nodal loop`)
	{Name: "phase_margin", Unit: UnitDegree, Param: MetricParamPart, Circuit: true, Help: "smallest phase margin of the loop gain around PART, degrees",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.PhaseMarginDeg(p.Part) }},
	{Name: "gain_margin", Unit: UnitDecibel, Param: MetricParamPart, Circuit: true, Help: "smallest gain margin of the loop gain around PART, dB",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.GainMarginDB(p.Part) }},
	{Name: "crossover", Unit: UnitHertz, Param: MetricParamPart, Circuit: true, Help: "highest gain crossover of the loop gain around PART, Hz",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.CrossoverHz(p.Part) }},
	{Name: "stable", Circuit: true, Bare: true, Help: "every natural frequency in the open left half-plane; takes no limit",
		Eval: func(s MetricSubject, _ MetricParam) (float64, error) {
			ok, err := s.Stable()
			if ok {
				return 1, err
			}
			return 0, err
		}},
	{Name: "noise", Unit: UnitVoltPerRootHz, Param: MetricParamFreq, Noise: true, Help: "output noise density at F, V/√Hz (300 K)",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.NoiseDensityAt(p.FreqHz) }},
	{Name: "noise_rms", Unit: UnitVolt, Param: MetricParamBand, Noise: true, Help: "output RMS noise over F1..F2, V (300 K)",
		Eval: func(s MetricSubject, p MetricParam) (float64, error) { return s.NoiseRMS(p.LoHz, p.HiHz) }},
}

// Metrics returns the registry, in the order of help texts.
func Metrics() []MetricSpec { return append([]MetricSpec(nil), metricSpecs...) }

// LookupMetric returns the registry entry of a metric name as written
// before '@' ("gain"); ok is false for an unknown name.
func LookupMetric(name string) (MetricSpec, bool) {
	for _, m := range metricSpecs {
		if m.Name == name {
			return m, true
		}
	}
	return MetricSpec{}, false
}

// MetricNames lists the metrics a requirement may name, as written:
// "gain@F" and "phase@F" take a frequency F ("gain@1kHz"),
// "phase_margin@PART" and the other loop metrics a gain element
// ("phase_margin@U1"); "stable" takes no limit.
func MetricNames() []string {
	out := make([]string, len(metricSpecs))
	for i, m := range metricSpecs {
		out[i] = m.Written()
	}
	return out
}

// MetricUnit returns the unit of a metric's values and limits ("dB",
// "deg", "Hz" or "" for q); name may carry its parameter ("gain@1kHz").
// ok is false for an unknown metric name.
func MetricUnit(name string) (unit string, ok bool) {
	name, _, _ = strings.Cut(name, "@")
	m, ok := LookupMetric(name)
	return m.Unit, ok
}

// findMetric is LookupMetric, for the parser.
func findMetric(name string) (MetricSpec, bool) { return LookupMetric(name) }

// ParseMetric reads a metric as written ("gain@1kHz", "f3db") into its
// registry entry and its parameter. Errors name the metric and list the
// valid ones for an unknown name.
func ParseMetric(s string) (MetricSpec, MetricParam, error) {
	name, at, hasAt := strings.Cut(s, "@")
	m, ok := findMetric(name)
	if !ok {
		return MetricSpec{}, MetricParam{}, fmt.Errorf("unknown metric %q (metrics: %s)", name, strings.Join(MetricNames(), ", "))
	}
	p, err := parseMetricParam(s, m, at, hasAt)
	if err != nil {
		return MetricSpec{}, MetricParam{}, err
	}
	return m, p, nil
}

// parseMetricParam reads what follows '@' in the metric s (hasAt says
// whether there is an '@') by the parameter kind of its entry m.
func parseMetricParam(s string, m MetricSpec, at string, hasAt bool) (MetricParam, error) {
	name := m.Name
	switch {
	case m.Param != MetricParamNone && !hasAt:
		return MetricParam{}, fmt.Errorf("metric %s needs %s, as in %s", name, paramNeed(m.Param), paramExample(m))
	case m.Param == MetricParamNone && hasAt:
		return MetricParam{}, fmt.Errorf("metric %s takes no frequency", name)
	case !hasAt:
		return MetricParam{}, nil
	}
	var p MetricParam
	switch m.Param {
	case MetricParamFreq:
		f, err := metricFreq(s, at)
		if err != nil {
			return MetricParam{}, err
		}
		p.FreqHz = f
	case MetricParamPart:
		if at == "" {
			return MetricParam{}, fmt.Errorf("metric %s: no part name after @", s)
		}
		p.Part = at
	case MetricParamBand:
		lo, hi, ok := strings.Cut(at, "..")
		if !ok {
			return MetricParam{}, fmt.Errorf("metric %s: write the band as F1..F2", s)
		}
		var err error
		if p.LoHz, err = metricFreq(s, lo); err != nil {
			return MetricParam{}, err
		}
		if p.HiHz, err = metricFreq(s, hi); err != nil {
			return MetricParam{}, err
		}
		if !(p.LoHz < p.HiHz) {
			return MetricParam{}, fmt.Errorf("metric %s: the band must rise (F1 < F2)", s)
		}
	}
	return p, nil
}

// metricFreq reads the frequency text of metric s: a value > 0, Hz.
func metricFreq(s, text string) (float64, error) {
	f, err := ParseValue(text, UnitHertz)
	if err != nil {
		return 0, fmt.Errorf("metric %s: %w", s, err)
	}
	if !(f > 0) {
		return 0, fmt.Errorf("metric %s: the frequency must be > 0", s)
	}
	if f > MaxFrequencyHz {
		return 0, fmt.Errorf("metric %s: the frequency is out of range: frequencies go up to %s", s, valueText(MaxFrequencyHz, UnitHertz))
	}
	return f, nil
}

// paramNeed names what a parameter kind needs, for messages.
func paramNeed(k MetricParamKind) string {
	switch k {
	case MetricParamPart:
		return "a part name"
	case MetricParamBand:
		return "a band"
	}
	return "a frequency"
}

// paramExample writes m with an example parameter.
func paramExample(m MetricSpec) string {
	switch m.Param {
	case MetricParamPart:
		return m.Name + "@U1"
	case MetricParamBand:
		return m.Name + "@20Hz..20kHz"
	}
	return m.Name + "@1kHz"
}

// MaxFrequencyHz is the highest frequency nodal evaluates, in Hz: above
// it ω = 2π·f overflows a float64 (about 2.9e307 Hz).
const MaxFrequencyHz = math.MaxFloat64 / (2 * math.Pi)

func (e *elab) require(r *RequireStmt) {
	resp, metric := splitResponse(r.Metric.Name)
	base := metric
	if r.At != nil {
		metric += "@" + r.At.Sign + r.At.Value
	}
	if r.AtPart != nil {
		metric += "@" + r.AtPart.Name
	}
	if r.AtHi != nil {
		metric += ".." + r.AtHi.Sign + r.AtHi.Value
	}
	if !e.requireResponse(r, resp) {
		return
	}
	if _, ok := findMetric(base); !ok {
		hint := suggest(base, metricNamesPlain())
		if hint == "" {
			hint = "metrics: " + strings.Join(MetricNames(), ", ")
		}
		e.errorf(r.Metric.Pos, hint, "unknown metric %q", base)
		return
	}
	m, _, err := ParseMetric(metric)
	if err != nil {
		e.errorf(r.Metric.Pos, "", "%v", err)
		return
	}
	req := Requirement{Metric: metric, Response: resp, Pos: e.f.Position(r.Pos)}
	switch {
	case m.Bare && r.Op != "":
		e.errorf(r.Lo.Pos, "write require "+m.Name, "%s takes no limit", m.Name)
		return
	case m.Bare:
		req.Op = Holds
		req.Text = string(e.f.Source[r.Pos.Offset:tokensEnd(r.Pos.Offset, r.Tokens)])
		e.c.Requirements = append(e.c.Requirements, req)
		return
	case r.Op == "":
		e.errorf(r.Metric.Pos, "write within LO..HI, below HI or above LO", "require %s needs a limit", metric)
		return
	}
	limit := func(l, other *Limit) (float64, bool) {
		if l.Per != "" || m.Unit == UnitDecibel {
			return e.decibelLimit(m, l, other)
		}
		v, err := ParseValue(l.Sign+l.Value, m.LimitUnit())
		if err != nil {
			want := m.Unit
			if want == "" {
				want = "a plain number"
			}
			e.errorf(l.Pos, "", "limit of %s must be %s: %v", m.Name, want, err)
			return 0, false
		}
		return v, true
	}
	lo, ok := limit(r.Lo, r.Hi)
	if !ok {
		return
	}
	switch r.Op {
	case "within":
		if r.Hi == nil {
			e.errorf(r.Lo.Pos, "write LO..HI", "within needs a range")
			return
		}
		hi, ok := limit(r.Hi, r.Lo)
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

// decibelLimit reads a limit of a metric in dB: "0.5dB", or a ratio with
// its units "0.5V/V" (or A/A), converted to 20·log10 of it. A bare number
// is refused, since 0.5 could mean either, unless the other end of a range
// carries dB ("-1..1dB"). other is the other limit of a range, or nil.
func (e *elab) decibelLimit(m MetricSpec, l, other *Limit) (float64, bool) {
	text := l.Sign + l.Value
	if l.Per != "" {
		n, err := syntax.ParseNumber(l.Value)
		ratio := err == nil && (n.Unit == UnitVolt || n.Unit == UnitAmpere) && l.Per == n.Unit
		if m.Unit != UnitDecibel || !ratio {
			e.errorf(l.Pos, "", "limit %s/%s of %s: the limit must be in %s", text, l.Per, m.Name, unitOrPlain(m.Unit))
			return 0, false
		}
		v := n.Value
		if l.Sign == "-" || v <= 0 {
			e.errorf(l.Pos, "a ratio is positive; a gain below 1 is a negative number of dB", "limit %s/%s of %s is not a positive ratio", text, l.Per, m.Name)
			return 0, false
		}
		return 20 * math.Log10(v), true
	}
	if unitless(l) && (other == nil || unitless(other)) {
		hint := fmt.Sprintf("write %sdB for decibels", text)
		if v, err := ParseValue(text, ""); err == nil && v > 0 {
			hint += fmt.Sprintf(" or %sV/V for a ratio (%.3g dB)", text, 20*math.Log10(v))
		}
		e.errorf(l.Pos, hint, "limit %s of %s has no unit: is it dB or a ratio?", text, m.Name)
		return 0, false
	}
	v, err := ParseValue(text, UnitDecibel)
	if err != nil {
		e.errorf(l.Pos, "", "limit of %s must be dB: %v", m.Name, err)
		return 0, false
	}
	return v, true
}

// unitless reports whether a limit is a number written without a unit.
func unitless(l *Limit) bool {
	if l == nil || l.Per != "" {
		return false
	}
	n, err := syntax.ParseNumber(l.Value)
	return err == nil && n.Unit == ""
}

func unitOrPlain(u string) string {
	if u == "" {
		return "a plain number"
	}
	return u
}

func metricNamesPlain() []string {
	out := make([]string, len(metricSpecs))
	for i, m := range metricSpecs {
		out[i] = m.Name
	}
	return out
}
