package netlist

import (
	"math"
	"strings"
	"testing"
)

// FuzzParseMetric: any text gives an error or a known metric name with its
// parameter: a frequency that is 0 (no @) or finite and > 0, or a band
// 0 < F1 < F2, finite; never a panic.
func FuzzParseMetric(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string) {
		m, p, err := ParseMetric(s)
		name, freqHz := m.Name, p.FreqHz
		if err != nil {
			return
		}
		if _, ok := findMetric(name); !ok || !strings.HasPrefix(s, name) {
			t.Fatalf("%q: name %q", s, name)
		}
		if (m.Param == MetricParamPart) != (p.Part != "") {
			t.Fatalf("%q: part %q", s, p.Part)
		}
		if (m.Param == MetricParamFreq) != (freqHz > 0) || math.IsNaN(freqHz) || math.IsInf(freqHz, 0) {
			t.Fatalf("%q: frequency %v Hz", s, freqHz)
		}
	})
}
