package netlist

import (
	"nodal/netlist/syntax"
	"strings"
	"testing"
)

// The parameter kinds the registry is ready for (a part name for loop
// gain metrics, a band for integrated noise), read by entries made up for
// the test, since no metric of those kinds exists yet.
func TestMetricParamKinds(t *testing.T) {
	part := MetricSpec{Name: "phase_margin", Unit: UnitDegree, Param: MetricParamPart}
	band := MetricSpec{Name: "noise_rms", Unit: UnitVolt, Param: MetricParamBand}
	freq := MetricSpec{Name: "gain", Unit: UnitDecibel, Param: MetricParamFreq}
	for _, c := range []struct {
		m       MetricSpec
		written string
		want    MetricParam
		err     string
	}{
		{part, "phase_margin@U1", MetricParam{Part: "U1"}, ""},
		{part, "phase_margin@X1.U2", MetricParam{Part: "X1.U2"}, ""},
		{part, "phase_margin", MetricParam{}, "needs a part name, as in phase_margin@U1"},
		{part, "phase_margin@", MetricParam{}, "no part name"},
		{band, "noise_rms@20Hz..20kHz", MetricParam{LoHz: 20, HiHz: 20e3}, ""},
		{band, "noise_rms@1k5..4k7", MetricParam{LoHz: 1500, HiHz: 4700}, ""},
		{band, "noise_rms@20kHz..20Hz", MetricParam{}, "F1 < F2"},
		{band, "noise_rms@20Hz", MetricParam{}, "F1..F2"},
		{band, "noise_rms@0..1k", MetricParam{}, "must be > 0"},
		{band, "noise_rms", MetricParam{}, "needs a band"},
		{freq, "gain@1kHz", MetricParam{FreqHz: 1000}, ""},
		{freq, "gain@1e400", MetricParam{}, "not a finite number"},
	} {
		name, at, hasAt := strings.Cut(c.written, "@")
		if name != c.m.Name {
			t.Fatalf("case %s: name %s", c.written, name)
		}
		p, err := parseMetricParam(c.written, c.m, at, hasAt)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) {
				t.Errorf("%s: error %v, want %q", c.written, err, c.err)
			}
			continue
		}
		if err != nil || p != c.want {
			t.Errorf("%s: %+v %v, want %+v", c.written, p, err, c.want)
		}
	}
	for k, want := range map[MetricParamKind]string{MetricParamNone: "f3db", MetricParamFreq: "gain@F", MetricParamPart: "gain@PART", MetricParamBand: "gain@F1..F2"} {
		m := MetricSpec{Name: "gain", Param: k}
		if k == MetricParamNone {
			m.Name = "f3db"
		}
		if got := m.Written(); got != want {
			t.Errorf("Written(%v) = %q, want %q", k, got, want)
		}
	}
}

// Every registry entry is complete: a name, limits in a known unit, an
// evaluator, and Spot only for metrics a direct solve can serve.
func TestMetricRegistry(t *testing.T) {
	seen := map[string]bool{}
	for _, m := range Metrics() {
		if m.Name == "" || seen[m.Name] || m.Eval == nil || m.Help == "" {
			t.Errorf("entry %+v", m)
		}
		seen[m.Name] = true
		if _, ok := syntax.UnitSymbol(m.LimitUnit()); !ok && m.Unit != "" {
			t.Errorf("%s: limits in unit %q", m.Name, m.LimitUnit())
		}
		if u, ok := MetricUnit(m.Written()); !ok || u != m.Unit {
			t.Errorf("MetricUnit(%s) = %q %v", m.Written(), u, ok)
		}
	}
}
