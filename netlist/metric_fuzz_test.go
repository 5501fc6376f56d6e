package netlist

import (
	"math"
	"strings"
	"testing"
)

// FuzzParseMetric: any text gives an error or a known metric name with a
// frequency that is finite and > 0 for a metric taken at a frequency and
// 0 otherwise (a loop metric's @ names a part), never a panic.
func FuzzParseMetric(f *testing.F) {
	f.Fuzz(func(t *testing.T, s string) {
		name, freqHz, err := ParseMetric(s)
		if err != nil {
			return
		}
		m, ok := findMetric(name)
		if !ok || !strings.HasPrefix(s, name) {
			t.Fatalf("%q: name %q", s, name)
		}
		if m.atPart != (MetricPart(s) != "") {
			t.Fatalf("%q: part %q", s, MetricPart(s))
		}
		if m.atFreq != (freqHz > 0) || math.IsNaN(freqHz) || math.IsInf(freqHz, 0) {
			t.Fatalf("%q: frequency %v Hz", s, freqHz)
		}
	})
}
